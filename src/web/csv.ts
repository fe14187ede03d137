// CSV export of a table. Fields follow RFC 4180 (comma separator, CRLF line ends, fields with a
// double quote doubled inside double quotes). Text fields are guarded against spreadsheet formula
// injection as the OWASP "CSV Injection" guidance advises: every text field is quoted, and one that
// begins with = + - @ tab or carriage return (we add line feed) is prefixed with a single quote so a
// spreadsheet shows it as text instead of evaluating it. Numbers stay unquoted numbers (a number cannot
// carry a formula), so "-3.2" written as a number stays a number.

export type CsvValue = string | number | boolean | null | undefined | Date;

export interface CsvColumn {
  key: string;
  label: string;
}

/** Characters that make a spreadsheet treat a cell as a formula when they come first. */
export const FORMULA_TRIGGERS: readonly string[] = ['=', '+', '-', '@', '\t', '\r', '\n'];

/** One text field, quoted and neutralised. */
export function csvText(text: string): string {
  const guarded = text.length > 0 && FORMULA_TRIGGERS.includes(text[0]) ? `'${text}` : text;
  return `"${guarded.replace(/"/g, '""')}"`;
}

/** One field of any supported type. Non-finite numbers are written empty (no spreadsheet reads NaN). */
export function csvField(value: CsvValue): string {
  if (value === null || value === undefined) return '';
  if (typeof value === 'number') return Number.isFinite(value) ? String(value) : '';
  if (typeof value === 'boolean') return value ? 'true' : 'false';
  if (value instanceof Date) return csvText(value.toISOString());
  return csvText(String(value));
}

/** A whole document: header row of labels, then one row per record. UTF-8 byte-order mark first, so
 * spreadsheet programs read accented names correctly. */
export function toCsv(columns: readonly CsvColumn[], rows: readonly Record<string, unknown>[]): string {
  if (columns.length === 0) throw new CsvError('a CSV table needs at least one column');
  const lines = [columns.map((c) => csvText(c.label)).join(',')];
  for (const row of rows) lines.push(columns.map((c) => csvField(row[c.key] as CsvValue)).join(','));
  return '\uFEFF' + lines.join('\r\n') + '\r\n';
}

/** A file name safe in a Content-Disposition header: letters, digits, dot, dash and underscore only. */
export function safeFileName(name: string, extension: string): string {
  const stem = name.normalize('NFKD').replace(/[^A-Za-z0-9._-]+/g, '-').replace(/^-+|-+$/g, '').slice(0, 80) || 'data';
  return `${stem}.${extension}`;
}

export class CsvError extends Error {}
