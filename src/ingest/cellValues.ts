// Reading one cell of a table: blanks, numbers (decimal point or comma, optional declared thousands
// separator, less-than values), calendar dates (ISO 8601 or a layout's own DD/MM/YYYY pattern, or an
// Excel date), and text. Each reader returns a value or a plain reason, never throws on cell content.
// Excel date serials count days from 1899-12-30 (the 1900 date system, Microsoft's documented
// convention that keeps the fictitious 29 Feb 1900).

/** A cell as the readers hand it over: CSV gives text; XLSX gives text, numbers, booleans, dates or unreadable cells. */
export type RawCell = string | number | boolean | Date | UnreadableCell | null | undefined;
/** A spreadsheet cell with no usable value: an Excel error (#N/A) or a formula with no saved result. */
export interface UnreadableCell {
  /** What the cell holds, in words ("the Excel error #N/A"). */
  unreadable: string;
}

/** One row of a table as read from the file. */
export interface RawRow {
  /** 1-based row number as a spreadsheet shows it. */
  row: number;
  cells: RawCell[];
}

export interface RawTable {
  rows: RawRow[];
  /** Things the reader noticed that do not stop reading (e.g. the text encoding it fell back to). */
  notes: string[];
}

/** The file as a whole cannot be read (not a CSV or XLSX, broken quoting, missing sheet). */
export class TableReadError extends Error {
  override name = 'TableReadError';
}

export type CellResult<T> = { ok: true; value: T | undefined; note?: string } | { ok: false; reason: string };

export interface NumberFormat {
  /** "0,21" means 0.21 (and a point is then refused). */
  decimalComma: boolean;
  /** A declared thousands separator (" ", ".", "," or "'"), allowed only in groups of three digits. */
  thousandsSeparator?: string;
}

/** What to do with a chemistry value written "<0.005" (below the laboratory's detection limit). */
export type BelowDetectionPolicy = 'reject' | 'bound' | 'zero';

/** Marks a person writes for "not measured"; they read as an empty cell. */
const BLANK_MARKS = new Set(['', '-', '–', '—', 'n/a']);

export function isUnreadable(cell: RawCell): cell is UnreadableCell {
  return typeof cell === 'object' && cell !== null && !(cell instanceof Date) && 'unreadable' in cell;
}

export function isBlankCell(cell: RawCell): boolean {
  if (cell === null || cell === undefined) return true;
  if (typeof cell === 'string') return BLANK_MARKS.has(cell.trim().toLowerCase());
  return false;
}

/** The cell as a person would read it, for messages. */
export function showCell(cell: RawCell): string {
  if (cell === null || cell === undefined) return '(empty)';
  if (cell instanceof Date) return Number.isNaN(cell.getTime()) ? '(invalid date)' : cell.toISOString().slice(0, 10);
  if (isUnreadable(cell)) return `(${cell.unreadable})`;
  return String(cell);
}

function quoted(cell: RawCell): string {
  return typeof cell === 'string' ? JSON.stringify(cell.trim()) : showCell(cell);
}

const PLAIN_NUMBER = /^[+-]?(?:\d+(?:\.\d*)?|\.\d+)(?:[eE][+-]?\d+)?$/;
const groupedCache = new Map<string, RegExp>();

function groupedPattern(sep: string, decimal: string): RegExp {
  const key = sep + decimal;
  let re = groupedCache.get(key);
  if (!re) {
    const s = sep.replace(/[.*+?^${}()|[\]\\]/g, '\\$&');
    const d = decimal.replace(/[.*+?^${}()|[\]\\]/g, '\\$&');
    re = new RegExp(`^[+-]?\\d{1,3}(?:${s}\\d{3})+(?:${d}\\d+)?$`);
    groupedCache.set(key, re);
  }
  return re;
}

/** Text to a number under the format; undefined when it is not a number. */
function textToNumber(text: string, format: NumberFormat): number | undefined {
  const decimal = format.decimalComma ? ',' : '.';
  const sep = format.thousandsSeparator;
  let t = text;
  if (sep && t.includes(sep) && groupedPattern(sep, decimal).test(t)) t = t.split(sep).join('');
  if (format.decimalComma) {
    if (t.includes('.')) return undefined;
    t = t.replace(',', '.');
  }
  if (!PLAIN_NUMBER.test(t)) return undefined;
  const n = Number(t);
  return Number.isFinite(n) ? n : undefined;
}

function notANumber(cell: RawCell, text: string, format: NumberFormat): string {
  let hint = '';
  if (!format.decimalComma && /^[+-]?\d+,\d+$/.test(text) && format.thousandsSeparator !== ',') {
    hint = ' (this layout writes decimals with a point; a file with decimal commas needs a mill layout with "decimalComma": true)';
  } else if (format.decimalComma && /^[+-]?\d*\.\d+$/.test(text) && format.thousandsSeparator !== '.') {
    hint = ' (this layout declares a decimal comma, so a point is not allowed)';
  } else if (/^[+-]?\d{1,3}([ ,.'’])\d{3}/.test(text) && !format.thousandsSeparator) {
    hint = ' (thousands separators are refused unless the layout declares one)';
  }
  return `${quoted(cell)} is not a number${hint}`;
}

export function parseNumberCell(cell: RawCell, format: NumberFormat): CellResult<number> {
  if (isBlankCell(cell)) return { ok: true, value: undefined };
  if (typeof cell === 'number') return Number.isFinite(cell) ? { ok: true, value: cell } : { ok: false, reason: `${cell} is not a number` };
  if (isUnreadable(cell)) return { ok: false, reason: `holds ${cell.unreadable}` };
  if (typeof cell !== 'string') return { ok: false, reason: `${quoted(cell)} is not a number` };
  const text = cell.trim();
  const n = textToNumber(text, format);
  return n === undefined ? { ok: false, reason: notANumber(cell, text, format) } : { ok: true, value: n };
}

/**
 * A chemistry value: a number, or "<0.005" (below detection), handled by the policy: 'bound' takes
 * the limit, 'zero' takes 0, 'reject' refuses. An accepted less-than value comes back with a note.
 */
export function parseChemistryCell(cell: RawCell, format: NumberFormat, policy: BelowDetectionPolicy): CellResult<number> {
  if (typeof cell === 'string') {
    const m = /^<\s*=?\s*(.+)$/.exec(cell.trim());
    if (m) {
      const bound = textToNumber(m[1].trim(), format);
      if (bound === undefined) return { ok: false, reason: notANumber(cell, cell.trim(), format) };
      if (policy === 'reject') {
        return {
          ok: false,
          reason: `${quoted(cell)} is a less-than value; write a number, or import with a mill layout that declares "belowDetection"`,
        };
      }
      const value = policy === 'bound' ? bound : 0;
      return { ok: true, value, note: `${quoted(cell)} (below detection) was taken as ${value}` };
    }
  }
  return parseNumberCell(cell, format);
}

export function parseTextCell(cell: RawCell): CellResult<string> {
  if (isBlankCell(cell)) return { ok: true, value: undefined };
  if (isUnreadable(cell)) return { ok: false, reason: `holds ${cell.unreadable}` };
  if (cell instanceof Date) return { ok: false, reason: `holds a date (${showCell(cell)}) where text was expected` };
  return { ok: true, value: String(cell).trim() };
}

// ---- dates ----

/** A compiled date pattern such as DD.MM.YYYY (tokens DD, D, MM, M, YYYY, YY; anything else is literal). */
export interface DatePattern {
  text: string;
  regex: RegExp;
  order: Array<'day' | 'month' | 'year4' | 'year2'>;
}

export class InvalidDateFormatError extends Error {
  override name = 'InvalidDateFormatError';
}

export function compileDateFormat(format: string): DatePattern {
  const order: DatePattern['order'] = [];
  let source = '';
  const tokens = /YYYY|YY|DD|D|MM|M/g;
  let last = 0;
  for (const m of format.matchAll(tokens)) {
    source += escapeLiteral(format.slice(last, m.index));
    last = m.index + m[0].length;
    switch (m[0]) {
      case 'YYYY':
        order.push('year4');
        source += '(\\d{4})';
        break;
      case 'YY':
        order.push('year2');
        source += '(\\d{2})';
        break;
      case 'DD':
      case 'D':
        order.push('day');
        source += m[0] === 'DD' ? '(\\d{2})' : '(\\d{1,2})';
        break;
      default:
        order.push('month');
        source += m[0] === 'MM' ? '(\\d{2})' : '(\\d{1,2})';
    }
  }
  source += escapeLiteral(format.slice(last));
  const count = (k: string) => order.filter((o) => o === k || (k === 'year' && o.startsWith('year'))).length;
  if (count('day') !== 1 || count('month') !== 1 || count('year') !== 1) {
    throw new InvalidDateFormatError(`date format "${format}" must hold a day (DD or D), a month (MM or M) and a year (YYYY or YY) exactly once`);
  }
  if (/[A-Za-z]/.test(format.replace(/YYYY|YY|DD|D|MM|M/g, ''))) {
    throw new InvalidDateFormatError(`date format "${format}" holds letters other than the tokens DD, D, MM, M, YYYY, YY`);
  }
  return { text: format, regex: new RegExp(`^${source}$`), order };
}

function escapeLiteral(s: string): string {
  return s.replace(/[.*+?^${}()|[\]\\]/g, '\\$&');
}

const ISO_DATE = /^(\d{4})-(\d{2})-(\d{2})$/;
const EXCEL_EPOCH_MS = Date.UTC(1899, 11, 30);
/** Excel serials accepted as dates: 1 (1900-01-01) .. 109574 (2199-12-31). */
const MAX_EXCEL_SERIAL = 109574;

const DAYS_IN_MONTH = [31, 28, 31, 30, 31, 30, 31, 31, 30, 31, 30, 31];

/** Gregorian calendar: a leap year is divisible by 4, except centuries not divisible by 400. */
function daysInMonth(y: number, m: number): number {
  if (m === 2 && y % 4 === 0 && (y % 100 !== 0 || y % 400 === 0)) return 29;
  return DAYS_IN_MONTH[m - 1];
}

function isoFromParts(y: number, m: number, d: number): string | undefined {
  if (y < 1000 || y > 9999 || m < 1 || m > 12 || d < 1 || d > daysInMonth(y, m)) return undefined;
  return `${y}-${m < 10 ? '0' : ''}${m}-${d < 10 ? '0' : ''}${d}`;
}

/** Two-digit years: 00-69 are 2000-2069, 70-99 are 1970-1999. */
export function expandTwoDigitYear(yy: number): number {
  return yy < 70 ? 2000 + yy : 1900 + yy;
}

/**
 * A date cell to YYYY-MM-DD: an Excel date (Date object, its calendar date in UTC, as exceljs
 * gives it), an Excel serial number (xlsx only), ISO text, or text in the layout's pattern.
 */
export function parseDateCell(cell: RawCell, pattern?: DatePattern, allowSerial = false): CellResult<string> {
  if (isBlankCell(cell)) return { ok: true, value: undefined };
  if (cell instanceof Date) {
    if (Number.isNaN(cell.getTime())) return { ok: false, reason: 'holds an invalid date' };
    return { ok: true, value: cell.toISOString().slice(0, 10) };
  }
  if (isUnreadable(cell)) return { ok: false, reason: `holds ${cell.unreadable}` };
  if (typeof cell === 'number') {
    if (allowSerial && Number.isInteger(cell) && cell >= 1 && cell <= MAX_EXCEL_SERIAL) {
      return { ok: true, value: new Date(EXCEL_EPOCH_MS + cell * 86_400_000).toISOString().slice(0, 10) };
    }
    return { ok: false, reason: `${cell} is not a date` };
  }
  const text = String(cell).trim();
  const expected = pattern ? `YYYY-MM-DD or ${pattern.text}` : 'YYYY-MM-DD';
  const iso = ISO_DATE.exec(text);
  if (iso) {
    const v = isoFromParts(+iso[1], +iso[2], +iso[3]);
    return v ? { ok: true, value: v } : { ok: false, reason: `${quoted(cell)} is not a real calendar date` };
  }
  if (pattern) {
    const m = pattern.regex.exec(text);
    if (m) {
      let y = 0;
      let mo = 0;
      let d = 0;
      pattern.order.forEach((part, i) => {
        const n = Number(m[i + 1]);
        if (part === 'day') d = n;
        else if (part === 'month') mo = n;
        else if (part === 'year4') y = n;
        else y = expandTwoDigitYear(n);
      });
      const v = isoFromParts(y, mo, d);
      return v ? { ok: true, value: v } : { ok: false, reason: `${quoted(cell)} is not a real calendar date` };
    }
  }
  return { ok: false, reason: `${quoted(cell)} is not a date written ${expected}` };
}
