// Header recognition for a mill's own table: the common header names mills write (heat, heat no.,
// charge, melt; "C %", "Mn (%)"; "J1.5", "J 1,5 mm", "1.5 mm", J1 ... J16) are read as our fields,
// and the result is (a) a mapping preview in plain words (which column became what, what was
// ignored, what is missing) and (b) a mill layout (src/ingest/millLayout.ts) that says the same, so
// the file is parsed by the one table parser and the mapping can be saved as the mill's layout.
//
// Distance positions: ISO 642 (millimetres: 1.5, 3, 5, 7, 9, 11, 13, 15, 20, 25, 30 ... mm) and
// ASTM A255 / SAE J406 (sixteenths of an inch: J1 ... J16, 18, 20, 24, 28, 32). A whole-number "J"
// header without a unit is read by the set it belongs to: a set that holds J1 and J2 follows the
// ASTM A255 numbering (ISO 642 has no 1 mm or 2 mm position), a set beside a decimal label such as
// "J1.5" follows ISO 642 (mm); otherwise the unit must be said. The synonym table is listed in
// docs/import-format.md ("Header names we recognise"). Pure: bytes in, mapping out.
import { parseDistanceLabel } from '../hardenability/distances.ts';
import { isBlankCell, showCell, type RawCell, type RawRow } from './cellValues.ts';
import type { DistanceSystem } from './certificateSchema.ts';
import { readCsv } from './csvReader.ts';
import { normaliseHeader, readDistanceHeader } from './distanceHeaders.ts';
import { CHEMISTRY_FIELDS, fieldForOwnHeader, type FieldName, type MillLayoutFile } from './millLayout.ts';
import { readXlsx } from './xlsxReader.ts';

/** Header words mills write for our fields (compared after `synonymKey`: lower case, no dots, units or "%"). */
export const HEADER_SYNONYMS: Readonly<Partial<Record<FieldName, readonly string[]>>> = {
  mill: ['mill', 'supplier', 'producer', 'manufacturer', 'steelworks', 'steel works', 'mill code'],
  heat_number: ['heat', 'heat no', 'heat nr', 'heat number', 'heat #', 'heat id', 'charge', 'charge no', 'charge nr', 'melt', 'melt no', 'melt nr', 'melt number', 'cast no', 'cast nr', 'cast number'],
  grade: ['grade', 'steel grade', 'steel', 'material', 'steel quality', 'quality'],
  cast_date: ['cast date', 'casting date', 'date of cast', 'melt date', 'heat date', 'date of melting'],
  certificate_number: ['certificate', 'certificate no', 'cert no', 'inspection certificate', 'inspection certificate no', 'mtr', 'mtr no', 'mill test report', 'mill test report no', 'works cert no', '31 certificate no'],
  certificate_date: ['certificate date', 'cert date', 'issued', 'issue date', 'date of issue'],
  grain_size: ['grain size', 'grain size astm', 'astm grain size', 'grain size e112'],
  lot_number: ['lot', 'lot no', 'lot nr', 'bundle', 'bundle no', 'coil no'],
  received_date: ['received', 'received date', 'date received', 'arrival date', 'receipt date'],
  mass_kg: ['mass', 'mass kg', 'weight', 'weight kg', 'net weight', 'net weight kg'],
  bar_diameter_mm: ['diameter', 'diameter mm', 'bar diameter', 'bar diameter mm', 'bar dia', 'bar dia mm', 'dia mm', 'size mm'],
  purchase_order: ['po', 'po no', 'purchase order', 'purchase order no', 'order', 'order no', 'your order'],
  source: ['test source', 'test type'],
  test_date: ['test date', 'tested on', 'date tested', 'date of test'],
  austenitizing_c: ['austenitizing temperature', 'austenitizing temp', 'austenitizing c', 'aust temp', 'aust temp c', 'hardening temperature'],
  laboratory: ['laboratory', 'lab', 'test house', 'test lab', 'testing laboratory'],
  C: ['carbon'],
  Mn: ['manganese'],
  Si: ['silicon'],
  P: ['phosphorus'],
  S: ['sulphur', 'sulfur'],
  Cr: ['chromium'],
  Ni: ['nickel'],
  Mo: ['molybdenum'],
  Cu: ['copper'],
  V: ['vanadium'],
  Al: ['aluminium', 'aluminum', 'al total', 'alt'],
  B: ['boron'],
  Ti: ['titanium'],
  Nb: ['niobium', 'columbium', 'cb'],
  N: ['nitrogen', 'n2'],
};

/** Words mills write for where a test was made (read loosely, as normaliseChoice does). */
export const SOURCE_SYNONYMS: Readonly<Record<string, 'mill_certificate' | 'receiving_inspection' | 'outside_lab'>> = {
  'works cert': 'mill_certificate',
  'mill cert': 'mill_certificate',
  'mill test report': 'mill_certificate',
  mtr: 'mill_certificate',
  '3.1': 'mill_certificate',
  'inspection certificate': 'mill_certificate',
  mill: 'mill_certificate',
  receiving: 'receiving_inspection',
  incoming: 'receiving_inspection',
  'incoming inspection': 'receiving_inspection',
  'third party': 'outside_lab',
  'outside lab': 'outside_lab',
  external: 'outside_lab',
};

/** Lower case, "%"/"wt%"/"(%)"/"[%]"/"ppm" and dots dropped, "°C"/"(mm)" kept as plain words, spaces collapsed. */
export function synonymKey(header: string): string {
  return normaliseHeader(header)
    .replace(/\b(wt|mass)\s*\.?\s*%/g, '')
    .replace(/[([]\s*%\s*[)\]]/g, '')
    .replace(/%/g, '')
    .replace(/°\s*c\b/g, 'c')
    .replace(/[([]\s*(mm|kg|c)\s*[)\]]/g, ' $1')
    .replace(/[.:]/g, '')
    .replace(/\s+/g, ' ')
    .trim();
}

const synonymIndex = new Map<string, FieldName>();
for (const [field, words] of Object.entries(HEADER_SYNONYMS) as Array<[FieldName, readonly string[]]>) {
  for (const w of words) synonymIndex.set(synonymKey(w), field);
}
for (const element of CHEMISTRY_FIELDS) if (!synonymIndex.has(element.toLowerCase())) synonymIndex.set(element.toLowerCase(), element);

/** How a column was read. */
export type ColumnReading =
  | { header: string; column: number; became: 'field'; field: FieldName; how: 'our name' | 'synonym' }
  | { header: string; column: number; became: 'distance'; system: DistanceSystem; at: number; how: 'our name' | 'label' | 'numbering' }
  | { header: string; column: number; became: 'ignored'; why: string };

export interface HeaderMapping {
  /** The 1-based row that holds the headers (found among the first ten rows). */
  headerRow: number;
  columns: ColumnReading[];
  /** Required things the file lacks, in words. */
  missing: string[];
  /** How the reading was decided (distance unit, decimal comma, header row), in words. */
  notes: string[];
  /** True when every header is one of our own layout's names: the file needs no layout. */
  ownLayout: boolean;
  /** The mapping as a mill layout file, when it is usable as one (heat number found; a mill column or a mill code). */
  layout: MillLayoutFile | null;
  /** The whole preview in plain sentences, one a line. */
  lines: string[];
}

export interface RecogniseOptions {
  /** The mill code for a file without a mill column. */
  millCode?: string;
  /** The unit of whole-number J headers when the set does not say it. */
  distanceUnit?: DistanceSystem;
  /** CSV delimiter read from the file. */
  delimiter?: string;
  /** XLSX sheet read. */
  sheet?: string;
}

function fieldOf(header: string): { field: FieldName; how: 'our name' | 'synonym' } | undefined {
  const own = fieldForOwnHeader(header);
  if (own) return { field: own, how: 'our name' };
  const key = synonymKey(header);
  const syn = synonymIndex.get(key) ?? synonymIndex.get(key.replace(/\s+(no|nr|number)$/, ''));
  return syn ? { field: syn, how: 'synonym' } : undefined;
}

const WHOLE_J = /^j\s*[-:]?\s*(\d+)$/i;
const DECIMAL_J = /^j\s*[-:]?\s*\d+[.,]\d+$/i;

function looksLikeHeaderRow(cells: RawCell[]): boolean {
  return cells.some((c) => typeof c === 'string' && fieldOf(c)?.field === 'heat_number');
}

/** Reads the header row of a table (rows as the readers give them) and says what each column becomes. */
export function recogniseHeaders(rows: readonly RawRow[], options: RecogniseOptions = {}): HeaderMapping {
  const notes: string[] = [];
  const candidates = rows.slice(0, 10);
  const headerRowData = candidates.find((r) => looksLikeHeaderRow(r.cells)) ?? candidates.find((r) => !r.cells.every(isBlankCell));
  const headerRow = headerRowData?.row ?? 1;
  if (headerRow !== 1) notes.push(`The headers were found in row ${headerRow}; the rows above were read as titles.`);
  const headers = (headerRowData?.cells ?? []).map((c) => (c === null || c === undefined ? '' : showCell(c).trim()));

  // The unit of whole-number J headers, from the set.
  const wholeJ = headers.map((h) => WHOLE_J.exec(h)).filter((m): m is RegExpExecArray => m !== null).map((m) => Number(m[1]));
  const hasDecimalJ = headers.some((h) => DECIMAL_J.test(h));
  let wholeJUnit: DistanceSystem | undefined = options.distanceUnit;
  if (wholeJ.length && !wholeJUnit) {
    if (wholeJ.includes(1) && wholeJ.includes(2) && !hasDecimalJ) {
      wholeJUnit = 'sixteenths';
      notes.push('Headers J1, J2, J3 ... were read as sixteenths of an inch: the set follows the ASTM A255 numbering (ISO 642 has no 1 mm or 2 mm position).');
    } else if (hasDecimalJ) {
      wholeJUnit = 'mm';
      notes.push('Whole-number J headers were read as millimetres: they sit beside a decimal position such as J1.5, which is ISO 642 usage.');
    }
  } else if (wholeJ.length && wholeJUnit) {
    notes.push(`Whole-number J headers were read in ${wholeJUnit === 'mm' ? 'millimetres' : 'sixteenths of an inch'}, as stated for this import.`);
  }

  const columns: ColumnReading[] = [];
  const taken = new Map<string, string>();
  headers.forEach((header, column) => {
    if (header === '') return;
    const f = fieldOf(header);
    if (f) {
      const first = taken.get(f.field);
      if (first) columns.push({ header, column, became: 'ignored', why: `column "${first}" already holds ${f.field}` });
      else {
        taken.set(f.field, header);
        columns.push({ header, column, became: 'field', field: f.field, how: f.how });
      }
      return;
    }
    const own = readDistanceHeader(header);
    let reading: ColumnReading | undefined;
    if (own.kind === 'distance') reading = { header, column, became: 'distance', system: own.position.system, at: own.position.at, how: 'our name' };
    else if (WHOLE_J.test(header)) {
      const at = Number((WHOLE_J.exec(header) as RegExpExecArray)[1]);
      reading = wholeJUnit
        ? { header, column, became: 'distance', system: wholeJUnit, at, how: 'numbering' }
        : {
            header,
            column,
            became: 'ignored',
            why: `"${header}" could be ${at} mm or ${at}/16 in; say the unit (a distance unit for this import, or headers such as "J ${at} mm" / "J ${at}/16")`,
          };
    } else if (/\d/.test(header) && /^(j\s*)?[-:]?\s*\d/i.test(header)) {
      try {
        const d = parseDistanceLabel(header);
        reading = { header, column, became: 'distance', system: d.system, at: d.value, how: 'label' };
      } catch {
        reading = undefined;
      }
    }
    if (reading && reading.became === 'distance') {
      const id = `${reading.system}:${reading.at}`;
      const first = taken.get(id);
      if (first) reading = { header, column, became: 'ignored', why: `column "${first}" already holds this distance` };
      else taken.set(id, header);
    }
    columns.push(reading ?? { header, column, became: 'ignored', why: 'not a field we know' });
  });

  const has = (field: FieldName) => columns.some((c) => c.became === 'field' && c.field === field);
  const distances = columns.filter((c): c is Extract<ColumnReading, { became: 'distance' }> => c.became === 'distance');
  const missing: string[] = [];
  if (!has('heat_number')) missing.push('no column holds the heat number (we look for heat_number, heat, heat no., charge, melt, cast no. ...); every row needs it');
  if (!has('mill') && !options.millCode) missing.push('no column names the mill; say which mill sent the file (its mill code)');
  if (!has('grade')) missing.push('no column holds the grade; a new heat needs it');
  if (distances.length === 0) missing.push('no J-distance columns were found, so the file holds no end-quench readings');

  // Decimal comma: numbers under chemistry or distance columns written "0,21" and none "0.21".
  const dataRows = rows.filter((r) => r.row > headerRow).slice(0, 50);
  const numericColumns = columns.filter((c) => c.became === 'distance' || (c.became === 'field' && (CHEMISTRY_FIELDS as readonly string[]).includes(c.field)));
  let commas = 0;
  let points = 0;
  for (const r of dataRows) {
    for (const c of numericColumns) {
      const v = r.cells[c.column];
      if (typeof v !== 'string') continue;
      if (/^\s*\d*,\d+\s*$/.test(v)) commas++;
      else if (/^\s*\d*\.\d+\s*$/.test(v)) points++;
    }
  }
  const decimalComma = commas > 0 && points === 0;
  if (decimalComma) notes.push('Numbers are written with a decimal comma ("0,21"); they were read so.');
  let dateFormat: string | undefined;
  const dateColumns = columns.filter((c) => c.became === 'field' && /_date$/.test(c.field));
  const dottedDates = dataRows.some((r) => dateColumns.some((c) => typeof r.cells[c.column] === 'string' && /^\d{1,2}\.\d{1,2}\.\d{4}$/.test(String(r.cells[c.column]).trim())));
  if (dottedDates) {
    dateFormat = 'DD.MM.YYYY';
    notes.push('Dates are written day.month.year ("14.03.2024"); they were read so.');
  }

  const ownLayout = headerRow === 1 && !decimalComma && !dateFormat && (has('mill') || !options.millCode) && columns.every((c) => c.became === 'ignored' || c.how === 'our name');
  let layout: MillLayoutFile | null = null;
  if (has('heat_number') && (has('mill') || options.millCode) && distances.length > 0) {
    const fieldColumns: Record<string, string> = {};
    for (const c of columns) if (c.became === 'field') fieldColumns[c.field] = c.header;
    const specs = (['mm', 'sixteenths'] as const)
      .map((unit) => ({ unit, columns: Object.fromEntries(distances.filter((d) => d.system === unit).map((d) => [d.header, d.at])) }))
      .filter((s) => Object.keys(s.columns).length > 0);
    layout = {
      name: `${options.millCode ?? 'mill'} layout (headers recognised)`,
      ...(options.millCode && !has('mill') ? { millCode: options.millCode } : {}),
      ...(options.delimiter ? { delimiter: options.delimiter } : {}),
      ...(decimalComma ? { decimalComma: true } : {}),
      ...(dateFormat ? { dateFormat } : {}),
      ...(headerRow !== 1 ? { headerRow } : {}),
      ...(options.sheet ? { sheet: options.sheet } : {}),
      columns: fieldColumns,
      distances: specs,
      ...(has('source') ? { values: { source: { ...SOURCE_SYNONYMS } } } : {}),
      ignoreColumns: columns.filter((c) => c.became === 'ignored' && c.why === 'not a field we know').map((c) => c.header),
    };
  }

  return { headerRow, columns, missing, notes, ownLayout, layout, lines: describeMapping(columns, missing, notes) };
}

function describeMapping(columns: readonly ColumnReading[], missing: readonly string[], notes: readonly string[]): string[] {
  const lines: string[] = [];
  const fields = columns.filter((c) => c.became === 'field');
  const distances = columns.filter((c) => c.became === 'distance');
  const ignored = columns.filter((c) => c.became === 'ignored');
  if (fields.length) lines.push(`Read as our fields (${fields.length}): ${fields.map((c) => `"${c.header}" → ${c.field}`).join(', ')}.`);
  if (distances.length) {
    const unitWord = (s: DistanceSystem) => (s === 'mm' ? ' mm' : '/16 in');
    lines.push(`Read as J-distances (${distances.length}): ${distances.map((c) => `"${c.header}" → ${c.at}${unitWord(c.system)}`).join(', ')}.`);
  }
  if (ignored.length) lines.push(`Ignored (${ignored.length}): ${ignored.map((c) => `"${c.header}" (${c.why})`).join('; ')}.`);
  for (const m of missing) lines.push(`Missing: ${m}.`);
  lines.push(...notes);
  return lines;
}

/** Reads the first rows of a CSV or XLSX document and recognises its headers. */
export async function previewTableHeaders(bytes: Uint8Array, format: 'csv' | 'xlsx', options: Omit<RecogniseOptions, 'delimiter' | 'sheet'> = {}): Promise<HeaderMapping> {
  if (format === 'csv') {
    // The header and the first rows are enough: read up to the last line break in the first 256 KiB
    // (the whole file when that part cannot be read on its own, e.g. a quoted cell runs past it).
    const head = bytes.byteLength > 262_144 ? bytes.subarray(0, bytes.lastIndexOf(0x0a, 262_144) + 1) : bytes;
    let table;
    try {
      table = readCsv(head.byteLength > 0 ? head : bytes);
    } catch {
      table = readCsv(bytes);
    }
    return recogniseHeaders(table.rows.slice(0, 61), { ...options, delimiter: table.delimiter === ',' ? undefined : table.delimiter });
  }
  const table = await readXlsx(bytes);
  return recogniseHeaders(table.rows.slice(0, 61), { ...options, sheet: table.sheetName });
}
