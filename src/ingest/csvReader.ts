// Reads CSV bytes into rows of text cells, each with the row number a spreadsheet would show (one
// record per row, so a quoted cell spanning lines stays one row). Text encoding: a byte-order mark
// decides; otherwise UTF-8, falling back to Windows-1252 (what spreadsheet programs in Western Europe
// save) when the bytes are not valid UTF-8. Quoting follows RFC 4180.
import { parse } from 'csv-parse/sync';
import { TableReadError, type RawTable } from './cellValues.ts';

export type TextEncoding = 'utf-8' | 'windows-1252' | 'utf-16le';

export interface CsvReadOptions {
  /** One character; absent: detected from the first line among ",", ";" and tab. */
  delimiter?: string;
  encoding?: TextEncoding;
}

export function decodeText(bytes: Uint8Array, encoding?: TextEncoding): { text: string; note?: string } {
  if (encoding) return { text: stripBom(new TextDecoder(encoding).decode(bytes)) };
  if (bytes[0] === 0xff && bytes[1] === 0xfe) return { text: stripBom(new TextDecoder('utf-16le').decode(bytes)) };
  try {
    return { text: stripBom(new TextDecoder('utf-8', { fatal: true }).decode(bytes)) };
  } catch {
    return { text: new TextDecoder('windows-1252').decode(bytes), note: 'the file is not valid UTF-8; it was read as Windows-1252' };
  }
}

function stripBom(text: string): string {
  return text.charCodeAt(0) === 0xfeff ? text.slice(1) : text;
}

/** The most frequent of ",", ";" and tab in the first line, counting only outside quotes (comma when none). */
export function detectDelimiter(text: string): string {
  const counts = new Map<string, number>([
    [',', 0],
    [';', 0],
    ['\t', 0],
  ]);
  let quoted = false;
  for (let i = 0; i < text.length; i++) {
    const ch = text[i];
    if (ch === '"') quoted = !quoted;
    else if (!quoted && (ch === '\n' || ch === '\r')) break;
    else if (!quoted && counts.has(ch)) counts.set(ch, (counts.get(ch) as number) + 1);
  }
  let best = ',';
  for (const [d, n] of counts) if (n > (counts.get(best) as number)) best = d;
  return best;
}

export function readCsv(bytes: Uint8Array, options: CsvReadOptions = {}): RawTable & { delimiter: string } {
  const { text, note } = decodeText(bytes, options.encoding);
  const delimiter = options.delimiter ?? detectDelimiter(text);
  let records: string[][];
  try {
    records = parse(text, { delimiter, relax_column_count: true, skip_empty_lines: false }) as string[][];
  } catch (error) {
    throw new TableReadError(`the CSV cannot be read: ${(error as Error).message}`);
  }
  return {
    rows: records.map((cells, i) => ({ row: i + 1, cells })),
    notes: note ? [note] : [],
    delimiter,
  };
}
