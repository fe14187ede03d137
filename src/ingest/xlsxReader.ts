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
import { inflateRawSync } from 'node:zlib';
import { TableReadError, type RawCell, type RawTable } from './cellValues.ts';

export interface XlsxReadOptions {
  /** Sheet name (trimmed, case-insensitive); absent: the first sheet. */
  sheet?: string;
  /** Largest workbook file accepted, in bytes; default MAX_XLSX_BYTES. */
  maxBytes?: number;
  /** Largest size one part (sheet, shared strings, styles) may inflate to, in bytes; default MAX_XLSX_PART_BYTES. */
  maxPartBytes?: number;
}

/** 100 MB: about seven times the 100,000-row benchmark workbook (13.6 MB). */
export const MAX_XLSX_BYTES = 100_000_000;
/** 500 MB: below the longest string V8 holds (2^29 - 24 characters), which a part is decoded into. */
export const MAX_XLSX_PART_BYTES = 500_000_000;

/** Bytes in megabytes for messages: whole numbers from 10 MB, one decimal below. */
function megabytes(n: number): string {
  return n >= 10e6 ? `${Math.round(n / 1e6)} MB` : `${(n / 1e6).toFixed(1)} MB`;
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

function readZipText(bytes: Uint8Array, entries: Map<string, ZipEntry>, name: string, maxPartBytes = MAX_XLSX_PART_BYTES): string | undefined {
  const entry = entries.get(name);
  if (!entry) return undefined;
  const view = new DataView(bytes.buffer, bytes.byteOffset, bytes.byteLength);
  if (view.getUint32(entry.offset, true) !== 0x04034b50) throw new TableReadError(`the file is not a readable XLSX workbook (damaged entry ${name})`);
  const start = entry.offset + 30 + view.getUint16(entry.offset + 26, true) + view.getUint16(entry.offset + 28, true);
  const data = bytes.subarray(start, start + entry.compressedSize);
  let raw: Uint8Array;
  if (entry.method === 0) raw = data;
  else if (entry.method === 8) {
    try {
      raw = inflateRawSync(data, { maxOutputLength: maxPartBytes });
    } catch (error) {
      if ((error as NodeJS.ErrnoException).code === 'ERR_BUFFER_TOO_LARGE') {
        throw new TableReadError(`the workbook entry ${name} unpacks to more than ${megabytes(maxPartBytes)}, which is refused (a damaged or malicious file)`);
      }
      throw new TableReadError(`the file is not a readable XLSX workbook (entry ${name}: ${(error as Error).message})`);
    }
  }
  else throw new TableReadError(`the workbook entry ${name} uses ZIP compression method ${entry.method}, which is not supported`);
  return new TextDecoder().decode(raw);
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

/** The text of every <t> in a string item or inline string, skipping phonetic runs (<rPh>). */
function textRuns(xml: string): string {
  const clean = xml.includes('rPh') ? xml.replace(/<(\w+:)?rPh\b[\s\S]*?<\/(\w+:)?rPh>/g, '') : xml;
  let out = '';
  for (const m of clean.matchAll(/<(?:\w+:)?t(?:\s[^>]*)?>([\s\S]*?)<\/(?:\w+:)?t>/g)) out += m[1];
  return decodeXml(out);
}

// ---- workbook parts ----

interface SheetRef {
  name: string;
  path: string;
}

function sheetsOf(bytes: Uint8Array, entries: Map<string, ZipEntry>, limit?: number): { sheets: SheetRef[]; date1904: boolean } {
  const workbook = readZipText(bytes, entries, 'xl/workbook.xml', limit);
  const rels = readZipText(bytes, entries, 'xl/_rels/workbook.xml.rels', limit);
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
    const a = attributes(m[1]);
    const path = targets.get(a.get('r:id') ?? a.get('id') ?? '');
    if (path) sheets.push({ name: a.get('name') ?? '', path });
  }
  const pr = /<(?:\w+:)?workbookPr\b([^>]*)>/.exec(workbook);
  const flag = pr ? attributes(pr[1]).get('date1904') : undefined;
  return { sheets, date1904: flag === '1' || flag === 'true' };
}

function sharedStringsOf(bytes: Uint8Array, entries: Map<string, ZipEntry>, limit?: number): string[] {
  const xml = readZipText(bytes, entries, 'xl/sharedStrings.xml', limit);
  if (!xml) return [];
  const out: string[] = [];
  for (const m of xml.matchAll(/<(?:\w+:)?si\b[^>]*?(?:\/>|>([\s\S]*?)<\/(?:\w+:)?si>)/g)) out.push(m[1] ? textRuns(m[1]) : '');
  return out;
}

/** Built-in number formats that show dates (ECMA-376 Part 1, 18.8.30 numFmt). */
const BUILT_IN_DATE_FORMATS = new Set([14, 15, 16, 17, 18, 19, 20, 21, 22, 27, 28, 29, 30, 31, 32, 33, 34, 35, 36, 45, 46, 47, 50, 51, 52, 53, 54, 55, 56, 57, 58]);

export function isDateFormatCode(code: string): boolean {
  const bare = code.replace(/"[^"]*"/g, '').replace(/\[[^\]]*\]/g, '').replace(/\\./g, '');
  return /[dmyhs]/i.test(bare) && !/^general$/i.test(bare.trim());
}

/** For each cell style index: whether its number format shows a date. */
function dateStylesOf(bytes: Uint8Array, entries: Map<string, ZipEntry>, limit?: number): boolean[] {
  const xml = readZipText(bytes, entries, 'xl/styles.xml', limit);
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
      return decodeXml(v);
    case 'b':
      return v.trim() === '1';
    case 'e':
      return { unreadable: `the Excel error ${decodeXml(v)}` };
    case 'd': {
      const d = new Date(/[zZ]|[+-]\d\d:\d\d$/.test(v) ? v : `${v}Z`);
      return Number.isNaN(d.getTime()) ? { unreadable: `an unreadable date "${v}"` } : d;
    }
    default: {
      const n = Number(v);
      if (!Number.isFinite(n)) return { unreadable: `an unreadable number "${v}"` };
      if (style !== undefined && ctx.dateStyles[Number(style)]) return excelSerialToDate(n, ctx.date1904);
      return n;
    }
  }
}

const TAG = /<(?:\w+:)?(row|c|mergeCell)\b([^>]*?)(\/?)>/g;

function readSheet(xml: string, ctx: Context): { grid: Map<number, RawCell[]>; merges: Range[] } {
  const grid = new Map<number, RawCell[]>();
  const merges: Range[] = [];
  let row = 0;
  let col = 0;
  const ref: [number, number] = [0, 0];
  TAG.lastIndex = 0;
  for (let m = TAG.exec(xml); m; m = TAG.exec(xml)) {
    const [, name, attrs, selfClosing] = m;
    if (name === 'row') {
      const r = /\br="(\d+)"/.exec(attrs);
      row = r ? Number(r[1]) : row + 1;
      col = 0;
      continue;
    }
    if (name === 'mergeCell') {
      const range = /\bref="([A-Z$0-9]+):([A-Z$0-9]+)"/.exec(attrs);
      const a = range && decodeRef(range[1]);
      const b = range && decodeRef(range[2]);
      if (a && b) merges.push({ top: Math.min(a.row, b.row), left: Math.min(a.col, b.col), bottom: Math.max(a.row, b.row), right: Math.max(a.col, b.col) });
      continue;
    }
    if (refParts(attrs, ref)) {
      col = ref[0];
      row = ref[1];
    } else col += 1;
    let inner = '';
    if (!selfClosing) {
      // The cell's content runs to its own closing tag (a <c> holds no nested <c>).
      const closeCell = findCellClose(xml, TAG.lastIndex);
      inner = xml.slice(TAG.lastIndex, closeCell);
      TAG.lastIndex = xml.indexOf('>', closeCell) + 1;
    }
    const value = selfClosing ? null : cellValue(attrs, inner, ctx);
    if (value === null || value === '') continue;
    let cells = grid.get(row);
    if (!cells) grid.set(row, (cells = []));
    cells[col - 1] = value;
  }
  return { grid, merges };
}

function findCellClose(xml: string, from: number): number {
  let i = xml.indexOf('</', from);
  while (i >= 0) {
    const j = xml.indexOf('>', i);
    const tag = xml.slice(i + 2, j);
    if (tag === 'c' || tag.endsWith(':c')) return i;
    i = xml.indexOf('</', j);
  }
  throw new TableReadError('the worksheet XML is damaged (a cell is not closed)');
}

function isBlank(c: RawCell): boolean {
  return c === null || c === undefined || (typeof c === 'string' && c.trim() === '');
}

export async function readXlsx(bytes: Uint8Array, options: XlsxReadOptions = {}): Promise<RawTable & { sheetName: string }> {
  const maxBytes = options.maxBytes ?? MAX_XLSX_BYTES;
  if (bytes.byteLength > maxBytes) {
    throw new TableReadError(`the workbook is ${megabytes(bytes.byteLength)}, more than the ${megabytes(maxBytes)} accepted; split it or export the sheet as CSV`);
  }
  let entries: Map<string, ZipEntry>;
  try {
    entries = readZipDirectory(bytes);
  } catch (error) {
    if (error instanceof TableReadError) throw error;
    throw new TableReadError(`the file is not a readable XLSX workbook (${(error as Error).message})`);
  }
  const { sheets, date1904 } = sheetsOf(bytes, entries, options.maxPartBytes);
  if (sheets.length === 0) throw new TableReadError('the workbook has no sheets');
  let sheet = sheets[0];
  if (options.sheet !== undefined) {
    const want = options.sheet.trim().toLowerCase();
    const found = sheets.find((s) => s.name.trim().toLowerCase() === want);
    if (!found) throw new TableReadError(`the workbook has no sheet "${options.sheet}" (it has ${sheets.map((s) => `"${s.name}"`).join(', ')})`);
    sheet = found;
  }
  const xml = readZipText(bytes, entries, sheet.path, options.maxPartBytes);
  if (xml === undefined) throw new TableReadError(`the workbook's sheet "${sheet.name}" is missing from the file`);
  const ctx: Context = { shared: sharedStringsOf(bytes, entries, options.maxPartBytes), dateStyles: dateStylesOf(bytes, entries, options.maxPartBytes), date1904 };
  const { grid, merges } = readSheet(xml, ctx);

  // A merged range reads as its top-left value everywhere in it.
  for (const m of merges) {
    const master = grid.get(m.top)?.[m.left - 1];
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
