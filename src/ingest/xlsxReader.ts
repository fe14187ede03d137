// Reads one worksheet of an XLSX workbook (Office Open XML SpreadsheetML, ECMA-376 Part 1) into rows
// of cells: numbers, text (shared, inline or rich), booleans, dates (a number whose cell format is a
// date format becomes the calendar date, in the 1900 or 1904 date system), and for a formula its saved
// result. A merged range reads as its top-left value in every cell. Blank trailing rows, and trailing
// rows that hold only one merged range across columns (a footer such as "Approved by ..."), are
// dropped.
//
// Why not exceljs here (re-measured with exceljs 4.4.0 on the 100,000-row benchmark sheet): its
// loader took 14-23 s and about 2.3 GB of memory where this reader takes about 2.5 s and 0.7 GB; its
// streaming reader (13 s) skips <mergeCell> and needs an r="" reference on every cell. Both read a
// t="d" ISO date cell (ECMA-376 Part 1, ST_CellType) as a bare number (2024-01-04 becomes
// 2024, a 1905 date) and reject namespace-prefixed SpreadsheetML (allowed by XML Namespaces). exceljs
// still writes the sample and test workbooks, so every case here is checked against it.
// ZIP container: PKWARE APPNOTE.TXT (central directory, stored and deflated entries). Zip bombs: the
// input and each inflated part are capped, with a plain error past either limit.
import { createInflateRaw } from 'node:zlib';
import { TableReadError, type RawCell, type RawTable } from './cellValues.ts';

/**
 * The work one workbook may cause. Every limit is checked before the thing it limits is built
 * (a part is inflated and scanned in chunks; merged ranges are summed before they are expanded), so a
 * small hostile file is refused after bounded memory and time. Sizes are refused with HTTP 413,
 * counts with 422 (see XlsxLimitError).
 */
export interface XlsxLimits {
  /** Largest workbook file accepted, in bytes. */
  maxBytes: number;
  /** Largest size one worksheet or the shared-string table may inflate to, in bytes. */
  maxPartBytes: number;
  /** Largest size the workbook, relationship and style parts may inflate to, in bytes. */
  maxMetaPartBytes: number;
  /** Most sheets a workbook may list. */
  maxSheets: number;
  /** Most rows holding a value. */
  maxRows: number;
  /** Rightmost column read (1 = A). */
  maxColumns: number;
  /** Most cells the sheet may expand to: each row as wide as its last filled column, plus merged areas. */
  maxCells: number;
  /** Most merged ranges. */
  maxMerges: number;
  /** Most shared strings. */
  maxSharedStrings: number;
  /** Most characters the shared strings may hold together. */
  maxSharedTextChars: number;
  /** Longest XML of one cell or one shared string, in characters. */
  maxItemChars: number;
}

export interface XlsxReadOptions extends Partial<XlsxLimits> {
  /** Sheet name (trimmed, case-insensitive); absent: the first sheet. */
  sheet?: string;
  /** Size of the pieces a part is inflated and scanned in, in bytes (default 256 KiB; at least 64 when deflated). */
  chunkBytes?: number;
}

/** 100 MB: about seven times the 100,000-row benchmark workbook (13.6 MB). */
export const MAX_XLSX_BYTES = 100_000_000;
/** 500 MB: about four times the benchmark's 128 MB worksheet; bounds the scanning time (a few seconds). */
export const MAX_XLSX_PART_BYTES = 500_000_000;

/**
 * Defaults. The 100,000-row benchmark sheet (two rows per heat, 40 columns) is 4.0 million cells, 128 MB of
 * worksheet XML and 0.26 million shared strings (4.4 MB): every limit leaves it room. Excel's own grid is
 * 1,048,576 rows by 16,384 columns; a certificate table needs a few dozen columns.
 */
export const XLSX_LIMITS: Readonly<XlsxLimits> = Object.freeze({
  maxBytes: MAX_XLSX_BYTES,
  maxPartBytes: MAX_XLSX_PART_BYTES,
  maxMetaPartBytes: 16_000_000,
  maxSheets: 1_000,
  maxRows: 1_048_576,
  maxColumns: 1_024,
  maxCells: 6_000_000,
  maxMerges: 100_000,
  maxSharedStrings: 2_000_000,
  maxSharedTextChars: 64_000_000,
  maxItemChars: 1_000_000,
});

/** The workbook exceeds one of the limits: `limit` names it, `status` is the HTTP status to answer with. */
export class XlsxLimitError extends TableReadError {
  override name = 'XlsxLimitError';
  constructor(
    message: string,
    readonly limit: keyof XlsxLimits,
    readonly value: number,
    readonly status: 413 | 422,
  ) {
    super(message);
  }
}

/** Bytes in megabytes for messages: whole numbers from 10 MB, one decimal below. */
function megabytes(n: number): string {
  return n >= 10e6 ? `${Math.round(n / 1e6)} MB` : `${(n / 1e6).toFixed(1)} MB`;
}

const count = (n: number) => n.toLocaleString('en-US');

/** The error for a limit passed; '§' in the message marks where the limit's name goes (else it ends the message). */
function overLimit(limits: XlsxLimits, limit: keyof XlsxLimits, message: string): XlsxLimitError {
  const sized = limit === 'maxBytes' || limit === 'maxPartBytes' || limit === 'maxMetaPartBytes';
  const tag = `(limit ${limit})`;
  return new XlsxLimitError(message.includes('§') ? message.replace('§', tag) : `${message} ${tag}`, limit, limits[limit], sized ? 413 : 422);
}

/** Column letters for a column number (1 = A). */
function columnLetters(n: number): string {
  let out = '';
  for (let k = n; k > 0; k = Math.floor((k - 1) / 26)) out = String.fromCharCode(65 + ((k - 1) % 26)) + out;
  return out;
}

// ---- ZIP ----

interface ZipEntry {
  method: number;
  compressedSize: number;
  offset: number;
}

function readZipDirectory(bytes: Uint8Array): Map<string, ZipEntry> {
  const view = new DataView(bytes.buffer, bytes.byteOffset, bytes.byteLength);
  let eocd = -1;
  for (let i = bytes.length - 22; i >= Math.max(0, bytes.length - 65557); i--) {
    if (view.getUint32(i, true) === 0x06054b50) {
      eocd = i;
      break;
    }
  }
  if (eocd < 0) throw new TableReadError('the file is not a readable XLSX workbook (no ZIP directory found)');
  const count = view.getUint16(eocd + 10, true);
  let p = view.getUint32(eocd + 16, true);
  const entries = new Map<string, ZipEntry>();
  const names = new TextDecoder();
  for (let i = 0; i < count; i++) {
    if (p + 46 > bytes.length || view.getUint32(p, true) !== 0x02014b50) throw new TableReadError('the file is not a readable XLSX workbook (damaged ZIP directory)');
    const method = view.getUint16(p + 10, true);
    const compressedSize = view.getUint32(p + 20, true);
    const nameLength = view.getUint16(p + 28, true);
    const extraLength = view.getUint16(p + 30, true);
    const commentLength = view.getUint16(p + 32, true);
    const offset = view.getUint32(p + 42, true);
    const name = names.decode(bytes.subarray(p + 46, p + 46 + nameLength));
    if (compressedSize === 0xffffffff || offset === 0xffffffff) throw new TableReadError('the workbook is larger than 4 GB (ZIP64), which is not supported');
    entries.set(name.replace(/^\//, ''), { method, compressedSize, offset });
    p += 46 + nameLength + extraLength + commentLength;
  }
  return entries;
}

interface PartSource {
  bytes: Uint8Array;
  entries: Map<string, ZipEntry>;
  limits: XlsxLimits;
  chunkBytes: number;
}

/** Parts are handed over in pieces of this size; between pieces other requests get their turn. */
const CHUNK_BYTES = 256 * 1024;

/**
 * Inflates one entry in chunks and hands its text to `onText` chunk by chunk; false when the entry is
 * absent. Stops as soon as the output passes `maxOut` bytes or `onText` throws, so nothing larger than
 * a chunk is held here. Between chunks the event loop serves other requests.
 */
async function streamZipPart(
  src: PartSource,
  name: string,
  limit: 'maxPartBytes' | 'maxMetaPartBytes',
  onText: (text: string) => void,
): Promise<boolean> {
  const entry = src.entries.get(name);
  if (!entry) return false;
  const { bytes } = src;
  const maxOut = src.limits[limit];
  const view = new DataView(bytes.buffer, bytes.byteOffset, bytes.byteLength);
  if (entry.offset + 30 > bytes.length || view.getUint32(entry.offset, true) !== 0x04034b50) throw new TableReadError(`the file is not a readable XLSX workbook (damaged entry ${name})`);
  const start = entry.offset + 30 + view.getUint16(entry.offset + 26, true) + view.getUint16(entry.offset + 28, true);
  const data = bytes.subarray(start, start + entry.compressedSize);
  const decoder = new TextDecoder();
  const tooLarge = () => overLimit(src.limits, limit, `the workbook entry ${name} unpacks to more than the ${megabytes(maxOut)} accepted §, which is refused (a damaged or malicious file)`);
  if (entry.method === 0) {
    if (data.length > maxOut) throw tooLarge();
    for (let at = 0; at < data.length; at += src.chunkBytes) {
      onText(decoder.decode(data.subarray(at, at + src.chunkBytes), { stream: true }));
      if ((at / src.chunkBytes) % 16 === 15) await new Promise((resolve) => setImmediate(resolve));
    }
    onText(decoder.decode());
    return true;
  }
  if (entry.method !== 8) throw new TableReadError(`the workbook entry ${name} uses ZIP compression method ${entry.method}, which is not supported`);
  await new Promise<void>((resolve, reject) => {
    const inflater = createInflateRaw({ chunkSize: Math.max(64, src.chunkBytes) });
    let total = 0;
    let settled = false;
    const fail = (error: Error) => {
      if (settled) return;
      settled = true;
      inflater.destroy();
      reject(error);
    };
    inflater.on('data', (chunk: Buffer) => {
      if (settled) return;
      total += chunk.length;
      if (total > maxOut) return fail(tooLarge());
      try {
        onText(decoder.decode(chunk, { stream: true }));
      } catch (error) {
        fail(error as Error);
      }
    });
    inflater.on('error', (error) => fail(new TableReadError(`the file is not a readable XLSX workbook (entry ${name}: ${error.message})`)));
    inflater.on('end', () => {
      if (settled) return;
      try {
        onText(decoder.decode());
        settled = true;
        resolve();
      } catch (error) {
        fail(error as Error);
      }
    });
    inflater.end(data);
  });
  return true;
}

/** A small part (workbook, relationships, styles) as one string, within maxMetaPartBytes. */
async function readZipText(src: PartSource, name: string): Promise<string | undefined> {
  const pieces: string[] = [];
  return (await streamZipPart(src, name, 'maxMetaPartBytes', (t) => pieces.push(t))) ? pieces.join('') : undefined;
}

// ---- XML helpers (the few constructs SpreadsheetML uses) ----

const ENTITY = /&(?:#x([0-9a-fA-F]+)|#(\d+)|(lt|gt|amp|quot|apos));/g;
const NAMED: Record<string, string> = { lt: '<', gt: '>', amp: '&', quot: '"', apos: "'" };

function decodeXml(text: string): string {
  if (!text.includes('&') && !text.includes('_x')) return text;
  return text
    .replace(ENTITY, (_m, hex: string | undefined, dec: string | undefined, name: string | undefined) =>
      hex ? String.fromCodePoint(parseInt(hex, 16)) : dec ? String.fromCodePoint(parseInt(dec, 10)) : NAMED[name as string],
    )
    .replace(/_x([0-9A-Fa-f]{4})_/g, (_m, hex: string) => String.fromCharCode(parseInt(hex, 16)));
}

function attributes(tag: string): Map<string, string> {
  const out = new Map<string, string>();
  for (const m of tag.matchAll(/([\w:.-]+)\s*=\s*(?:"([^"]*)"|'([^']*)')/g)) {
    const name = m[1].includes(':') && !m[1].startsWith('r:') ? m[1].slice(m[1].indexOf(':') + 1) : m[1];
    out.set(name, decodeXml(m[2] ?? m[3]));
  }
  return out;
}

/**
 * A copy of `text` that holds no reference to the chunk it was cut from: V8 keeps a slice of 13 or more
 * characters as a view of its parent string, so one short value kept per chunk would otherwise keep
 * every chunk of a part alive. Concatenating and slicing forces a flat copy of its own.
 */
function own(text: string): string {
  return text.length < 13 ? text : (' ' + text).slice(1);
}

/** The text of every <t> in a string item or inline string, skipping phonetic runs (<rPh>). */
function textRuns(xml: string): string {
  const clean = xml.includes('rPh') ? xml.replace(/<(\w+:)?rPh\b[\s\S]*?<\/(\w+:)?rPh>/g, '') : xml;
  let out = '';
  for (const m of clean.matchAll(/<(?:\w+:)?t(?:\s[^>]*)?>([\s\S]*?)<\/(?:\w+:)?t>/g)) out += m[1];
  return own(decodeXml(out));
}

// ---- workbook parts ----

interface SheetRef {
  name: string;
  path: string;
}

async function sheetsOf(src: PartSource): Promise<{ sheets: SheetRef[]; date1904: boolean }> {
  const workbook = await readZipText(src, 'xl/workbook.xml');
  const rels = await readZipText(src, 'xl/_rels/workbook.xml.rels');
  if (!workbook || !rels) throw new TableReadError('the file is not a readable XLSX workbook (no xl/workbook.xml)');
  const targets = new Map<string, string>();
  for (const m of rels.matchAll(/<(?:\w+:)?Relationship\b([^>]*)>/g)) {
    const a = attributes(m[1]);
    const target = a.get('Target');
    const id = a.get('Id');
    if (target && id) targets.set(id, target.startsWith('/') ? target.slice(1) : `xl/${target}`);
  }
  const sheets: SheetRef[] = [];
  for (const m of workbook.matchAll(/<(?:\w+:)?sheet\b([^>]*)>/g)) {
    if (sheets.length >= src.limits.maxSheets) throw overLimit(src.limits, 'maxSheets', `the workbook lists more than the ${count(src.limits.maxSheets)} sheets accepted`);
    const a = attributes(m[1]);
    const path = targets.get(a.get('r:id') ?? a.get('id') ?? '');
    if (path) sheets.push({ name: a.get('name') ?? '', path });
  }
  const pr = /<(?:\w+:)?workbookPr\b([^>]*)>/.exec(workbook);
  const flag = pr ? attributes(pr[1]).get('date1904') : undefined;
  return { sheets, date1904: flag === '1' || flag === 'true' };
}

const SHARED_ITEM = /<(?:\w+:)?si\b[^>]*?(?:\/>|>([\s\S]*?)<\/(?:\w+:)?si>)/g;
const SHARED_ITEM_START = /<(?:\w+:)?si[\s>/]/g;

/** The shared-string table, read chunk by chunk: each <si> item is kept as its text. */
async function sharedStringsOf(src: PartSource): Promise<string[]> {
  const { limits } = src;
  const out: string[] = [];
  let chars = 0;
  let carry = '';
  const take = (text: string) => {
    const buffer = carry + text;
    SHARED_ITEM.lastIndex = 0;
    let end = 0;
    for (let m = SHARED_ITEM.exec(buffer); m; m = SHARED_ITEM.exec(buffer)) {
      if (out.length >= limits.maxSharedStrings) throw overLimit(limits, 'maxSharedStrings', `the workbook holds more than the ${count(limits.maxSharedStrings)} shared strings accepted`);
      const value = m[1] ? textRuns(m[1]) : '';
      chars += value.length;
      if (chars > limits.maxSharedTextChars) throw overLimit(limits, 'maxSharedTextChars', `the workbook's shared strings hold more than the ${count(limits.maxSharedTextChars)} characters accepted`);
      out.push(value);
      end = SHARED_ITEM.lastIndex;
    }
    // Keep an item begun but not finished (or a tag cut in two) for the next chunk.
    SHARED_ITEM_START.lastIndex = end;
    const open = SHARED_ITEM_START.exec(buffer);
    const lt = buffer.lastIndexOf('<');
    const keepFrom = open ? open.index : lt >= end && buffer.indexOf('>', lt) < 0 ? lt : buffer.length;
    carry = buffer.slice(keepFrom);
    if (carry.length > limits.maxItemChars) throw overLimit(limits, 'maxItemChars', `shared string ${count(out.length + 1)} is longer than the ${count(limits.maxItemChars)} characters accepted`);
  };
  await streamZipPart(src, 'xl/sharedStrings.xml', 'maxPartBytes', take);
  return out;
}

/** Built-in number formats that show dates (ECMA-376 Part 1, 18.8.30 numFmt). */
const BUILT_IN_DATE_FORMATS = new Set([14, 15, 16, 17, 18, 19, 20, 21, 22, 27, 28, 29, 30, 31, 32, 33, 34, 35, 36, 45, 46, 47, 50, 51, 52, 53, 54, 55, 56, 57, 58]);

export function isDateFormatCode(code: string): boolean {
  const bare = code.replace(/"[^"]*"/g, '').replace(/\[[^\]]*\]/g, '').replace(/\\./g, '');
  return /[dmyhs]/i.test(bare) && !/^general$/i.test(bare.trim());
}

/** For each cell style index: whether its number format shows a date. */
async function dateStylesOf(src: PartSource): Promise<boolean[]> {
  const xml = await readZipText(src, 'xl/styles.xml');
  if (!xml) return [];
  const custom = new Map<number, boolean>();
  for (const m of xml.matchAll(/<(?:\w+:)?numFmt\b([^>]*)>/g)) {
    const a = attributes(m[1]);
    custom.set(Number(a.get('numFmtId')), isDateFormatCode(a.get('formatCode') ?? ''));
  }
  const section = /<(?:\w+:)?cellXfs\b[^>]*>([\s\S]*?)<\/(?:\w+:)?cellXfs>/.exec(xml);
  if (!section) return [];
  const out: boolean[] = [];
  for (const m of section[1].matchAll(/<(?:\w+:)?xf\b([^>]*)>/g)) {
    const id = Number(attributes(m[1]).get('numFmtId') ?? 0);
    out.push(custom.get(id) ?? BUILT_IN_DATE_FORMATS.has(id));
  }
  return out;
}

// ---- the worksheet ----

interface Range {
  top: number;
  left: number;
  bottom: number;
  right: number;
}

function columnNumber(letters: string): number {
  let n = 0;
  for (let i = 0; i < letters.length; i++) n = n * 26 + (letters.charCodeAt(i) - 64);
  return n;
}

function decodeRef(ref: string): { row: number; col: number } | undefined {
  const m = /^\$?([A-Z]{1,3})\$?(\d+)$/.exec(ref);
  return m ? { col: columnNumber(m[1]), row: Number(m[2]) } : undefined;
}

/** Reads the r="AB12" attribute into out = [column, row] without allocating; false when there is none. */
function refParts(attrs: string, out: [number, number]): boolean {
  const at = attrs.indexOf(' r="');
  const start = at >= 0 ? at + 4 : attrs.startsWith('r="') ? 3 : -1;
  if (start < 0) return false;
  let col = 0;
  let row = 0;
  let i = start;
  for (; i < attrs.length; i++) {
    const ch = attrs.charCodeAt(i);
    if (ch >= 65 && ch <= 90) col = col * 26 + (ch - 64);
    else if (ch !== 36) break; // "$"
  }
  for (; i < attrs.length; i++) {
    const ch = attrs.charCodeAt(i);
    if (ch >= 48 && ch <= 57) row = row * 10 + (ch - 48);
    else break;
  }
  if (col === 0 || row === 0) return false;
  out[0] = col;
  out[1] = row;
  return true;
}

function attr(attrs: string, name: string): string | undefined {
  const key = ` ${name}="`;
  const at = attrs.indexOf(key);
  if (at < 0) return undefined;
  const start = at + key.length;
  return attrs.slice(start, attrs.indexOf('"', start));
}

/** Excel serial day number to a Date at UTC midnight (+ time): 1900 system counts from 1899-12-30, 1904 from 1904-01-01. */
export function excelSerialToDate(serial: number, date1904: boolean): Date {
  const epochDays = date1904 ? 24107 : 25569; // days from the system's day 0 to 1970-01-01
  return new Date(Math.round((serial - epochDays) * 86_400_000));
}

interface Context {
  shared: string[];
  dateStyles: boolean[];
  date1904: boolean;
}

function cellValue(attrs: string, inner: string, ctx: Context): RawCell {
  const type = attr(attrs, 't') ?? 'n';
  const style = attr(attrs, 's');
  const vStart = inner.indexOf('<v');
  let v: string | undefined;
  if (vStart >= 0) {
    const open = inner.indexOf('>', vStart);
    if (inner[open - 1] !== '/') v = inner.slice(open + 1, inner.indexOf('</', open));
  } else if (inner.includes(':v>')) {
    v = /<\w+:v>([\s\S]*?)<\/\w+:v>/.exec(inner)?.[1];
  }
  const hasFormula = inner.includes('f') && /<(?:\w+:)?f[\s>/]/.test(inner);
  if (type === 'inlineStr') return textRuns(inner);
  if (v === undefined || v === '') {
    return hasFormula ? { unreadable: 'a formula with no saved result (open and save the file in a spreadsheet program)' } : null;
  }
  switch (type) {
    case 's':
      return ctx.shared[Number(v)] ?? { unreadable: 'a missing shared string' };
    case 'str':
      return own(decodeXml(v));
    case 'b':
      return v.trim() === '1';
    case 'e':
      return { unreadable: own(`the Excel error ${decodeXml(v.slice(0, 40))}`) };
    case 'd': {
      const d = new Date(/[zZ]|[+-]\d\d:\d\d$/.test(v) ? v : `${v}Z`);
      return Number.isNaN(d.getTime()) ? { unreadable: own(`an unreadable date "${v.slice(0, 40)}"`) } : d;
    }
    default: {
      const n = Number(v);
      if (!Number.isFinite(n)) return { unreadable: own(`an unreadable number "${v.slice(0, 40)}"`) };
      if (style !== undefined && ctx.dateStyles[Number(style)]) return excelSerialToDate(n, ctx.date1904);
      return n;
    }
  }
}

const TAG = /<(?:\w+:)?(row|c|mergeCell|dimension)\b([^>]*?)(\/?)>/g;

/**
 * Reads a worksheet's XML chunk by chunk into a sparse grid of values and the merged ranges, checking
 * every limit as it goes. A construct cut by a chunk boundary is carried over to the next chunk.
 */
class SheetScanner {
  readonly grid = new Map<number, RawCell[]>();
  readonly merges: Range[] = [];
  /** Cells the grid will hold once each row is as wide as its last filled column. */
  cells = 0;
  private row = 0;
  private col = 0;
  private carry = '';
  private readonly ref: [number, number] = [0, 0];

  constructor(
    private readonly ctx: Context,
    private readonly limits: XlsxLimits,
  ) {}

  push(text: string, last = false): void {
    const xml = this.carry + text;
    const { limits } = this;
    TAG.lastIndex = 0;
    let end = 0;
    let pendingFrom = -1;
    for (let m = TAG.exec(xml); m; m = TAG.exec(xml)) {
      const [, name, attrs, selfClosing] = m;
      if (name === 'row') {
        const r = /\br="(\d+)"/.exec(attrs);
        this.row = r ? Number(r[1]) : this.row + 1;
        this.col = 0;
        this.checkRow(this.row);
      } else if (name === 'mergeCell') {
        this.addMerge(attrs);
      } else if (name === 'dimension') {
        this.checkDimension(attrs);
      } else {
        let inner = '';
        let next = TAG.lastIndex;
        if (!selfClosing) {
          // The cell's content runs to its own closing tag (a <c> holds no nested <c>).
          const closeCell = findCellClose(xml, TAG.lastIndex);
          const closeEnd = closeCell < 0 ? -1 : xml.indexOf('>', closeCell);
          if (closeEnd < 0) {
            pendingFrom = m.index;
            break;
          }
          inner = xml.slice(TAG.lastIndex, closeCell);
          next = closeEnd + 1;
        }
        if (refParts(attrs, this.ref)) {
          this.col = this.ref[0];
          this.row = this.ref[1];
          this.checkRow(this.row);
        } else this.col += 1;
        if (this.col > limits.maxColumns) {
          throw overLimit(limits, 'maxColumns', `row ${this.row} has a cell in column ${columnLetters(this.col)}, beyond column ${columnLetters(limits.maxColumns)} (the ${count(limits.maxColumns)} columns read)`);
        }
        if (inner.length > limits.maxItemChars) throw this.longCell();
        TAG.lastIndex = next;
        if (!selfClosing) this.set(cellValue(attrs, inner, this.ctx));
      }
      end = TAG.lastIndex;
    }
    // Keep a cell not closed yet, or a tag cut by the chunk's end; whole tags of no interest are dropped.
    const lt = xml.lastIndexOf('<');
    const keepFrom = pendingFrom >= 0 ? pendingFrom : lt >= end && xml.indexOf('>', lt) < 0 ? lt : xml.length;
    this.carry = xml.slice(keepFrom);
    if (this.carry.length > limits.maxItemChars) throw this.longCell();
    if (last && pendingFrom >= 0) throw new TableReadError('the worksheet XML is damaged (a cell is not closed)');
  }

  private longCell(): XlsxLimitError {
    return overLimit(this.limits, 'maxItemChars', `a cell after row ${this.row}, column ${columnLetters(this.col || 1)} holds more than the ${count(this.limits.maxItemChars)} characters accepted`);
  }

  private checkRow(row: number): void {
    if (row > this.limits.maxRows) throw overLimit(this.limits, 'maxRows', `the sheet has a row numbered ${count(row)}, beyond the ${count(this.limits.maxRows)} rows read`);
  }

  private set(value: RawCell): void {
    if (value === null || value === '') return;
    let cells = this.grid.get(this.row);
    if (!cells) this.grid.set(this.row, (cells = []));
    if (this.col > cells.length) {
      this.cells += this.col - cells.length;
      if (this.cells > this.limits.maxCells) throw this.tooManyCells();
    }
    cells[this.col - 1] = value;
  }

  tooManyCells(): XlsxLimitError {
    return overLimit(this.limits, 'maxCells', `the sheet spreads over more than the ${count(this.limits.maxCells)} cells accepted (rows up to their last filled column, merged ranges included)`);
  }

  private addMerge(attrs: string): void {
    const range = /\bref="([A-Z$0-9]+):([A-Z$0-9]+)"/.exec(attrs);
    const a = range && decodeRef(range[1]);
    const b = range && decodeRef(range[2]);
    if (!a || !b) return;
    if (this.merges.length >= this.limits.maxMerges) throw overLimit(this.limits, 'maxMerges', `the sheet has more than the ${count(this.limits.maxMerges)} merged ranges accepted`);
    const merged = { top: Math.min(a.row, b.row), left: Math.min(a.col, b.col), bottom: Math.max(a.row, b.row), right: Math.max(a.col, b.col) };
    if (merged.bottom > this.limits.maxRows || merged.right > this.limits.maxColumns) {
      const limit = merged.right > this.limits.maxColumns ? 'maxColumns' : 'maxRows';
      throw overLimit(this.limits, limit, `the merged range ${range![1]}:${range![2]} reaches beyond ${limit === 'maxColumns' ? `column ${columnLetters(this.limits.maxColumns)}` : `row ${count(this.limits.maxRows)}`}, the last one read`);
    }
    this.merges.push(merged);
  }

  private checkDimension(attrs: string): void {
    const range = /\bref="([A-Z$0-9]+)(?::([A-Z$0-9]+))?"/.exec(attrs);
    const corner = range && decodeRef(range[2] ?? range[1]);
    if (!corner) return;
    if (corner.col > this.limits.maxColumns) {
      throw overLimit(this.limits, 'maxColumns', `the sheet declares its used range as ${range![0].slice(5, -1)}, beyond column ${columnLetters(this.limits.maxColumns)} (the ${count(this.limits.maxColumns)} columns read)`);
    }
    if (corner.row > this.limits.maxRows) throw overLimit(this.limits, 'maxRows', `the sheet declares its used range down to row ${count(corner.row)}, beyond the ${count(this.limits.maxRows)} rows read`);
  }
}

/** Where the cell's closing tag </c> begins, or -1 when it is not in `xml` yet. */
function findCellClose(xml: string, from: number): number {
  let i = xml.indexOf('</', from);
  while (i >= 0) {
    const j = xml.indexOf('>', i);
    if (j < 0) return -1;
    const tag = xml.slice(i + 2, j);
    if (tag === 'c' || tag.endsWith(':c')) return i;
    i = xml.indexOf('</', j);
  }
  return -1;
}

function isBlank(c: RawCell): boolean {
  return c === null || c === undefined || (typeof c === 'string' && c.trim() === '');
}

function limitsOf(options: XlsxReadOptions): XlsxLimits {
  const limits: XlsxLimits = { ...XLSX_LIMITS };
  for (const key of Object.keys(XLSX_LIMITS) as Array<keyof XlsxLimits>) {
    const value = options[key];
    if (value !== undefined) limits[key] = value;
  }
  return limits;
}

export async function readXlsx(bytes: Uint8Array, options: XlsxReadOptions = {}): Promise<RawTable & { sheetName: string }> {
  const limits = limitsOf(options);
  if (bytes.byteLength > limits.maxBytes) {
    throw overLimit(limits, 'maxBytes', `the workbook is ${megabytes(bytes.byteLength)}, more than the ${megabytes(limits.maxBytes)} accepted §; split it or export the sheet as CSV`);
  }
  let entries: Map<string, ZipEntry>;
  try {
    entries = readZipDirectory(bytes);
  } catch (error) {
    if (error instanceof TableReadError) throw error;
    throw new TableReadError(`the file is not a readable XLSX workbook (${(error as Error).message})`);
  }
  const src: PartSource = { bytes, entries, limits, chunkBytes: options.chunkBytes ?? CHUNK_BYTES };
  const { sheets, date1904 } = await sheetsOf(src);
  if (sheets.length === 0) throw new TableReadError('the workbook has no sheets');
  let sheet = sheets[0];
  if (options.sheet !== undefined) {
    const want = options.sheet.trim().toLowerCase();
    const found = sheets.find((s) => s.name.trim().toLowerCase() === want);
    if (!found) throw new TableReadError(`the workbook has no sheet "${options.sheet}" (it has ${sheets.map((s) => `"${s.name}"`).join(', ')})`);
    sheet = found;
  }
  if (!entries.has(sheet.path)) throw new TableReadError(`the workbook's sheet "${sheet.name}" is missing from the file`);
  const ctx: Context = { shared: await sharedStringsOf(src), dateStyles: await dateStylesOf(src), date1904 };
  const scanner = new SheetScanner(ctx, limits);
  await streamZipPart(src, sheet.path, 'maxPartBytes', (text) => scanner.push(text));
  scanner.push('', true);
  const { grid, merges } = scanner;

  // A merged range reads as its top-left value everywhere in it, as the sheet holds it before any
  // range is expanded (so overlapping ranges cannot feed one another); bound the cells that makes first.
  const masters = merges.map((m) => grid.get(m.top)?.[m.left - 1]);
  let spread = scanner.cells;
  merges.forEach((m, i) => {
    if (masters[i] === undefined) return;
    spread += (m.bottom - m.top + 1) * m.right;
    if (spread > limits.maxCells) throw scanner.tooManyCells();
  });
  for (const [i, m] of merges.entries()) {
    const master = masters[i];
    if (master === undefined || master === null) continue;
    for (let r = m.top; r <= m.bottom; r++) {
      let cells = grid.get(r);
      if (!cells) grid.set(r, (cells = []));
      for (let c = m.left; c <= m.right; c++) cells[c - 1] = master;
    }
  }

  const rows: RawTable['rows'] = [...grid.keys()]
    .sort((a, b) => a - b)
    .map((row) => {
      const sparse = grid.get(row) as RawCell[];
      const cells: RawCell[] = Array.from({ length: sparse.length }, (_, i) => sparse[i] ?? null);
      return { row, cells };
    });
  while (rows.length > 0 && isBlankOrFooter(rows[rows.length - 1], merges)) rows.pop();
  return { rows, notes: [], sheetName: sheet.name };
}

/** Blank, or every filled cell inside one merged range that spans two or more columns. */
function isBlankOrFooter(raw: RawTable['rows'][number], merges: Range[]): boolean {
  const filled: number[] = [];
  raw.cells.forEach((c, i) => {
    if (!isBlank(c)) filled.push(i + 1);
  });
  if (filled.length === 0) return true;
  return merges.some((m) => m.right > m.left && raw.row >= m.top && raw.row <= m.bottom && filled.every((c) => c >= m.left && c <= m.right));
}
