// Reads one worksheet of an XLSX workbook (Office Open XML, ECMA-376) into rows of cells: numbers,
// text, booleans, dates (exceljs gives date-formatted cells as Date objects holding the calendar date
// in UTC), and for a formula its saved result. A merged cell reads as its top-left value in every
// cell of the range. Blank trailing rows, and trailing rows that hold only one merged range (a
// footer such as "Approved by ..."), are dropped.
import ExcelJS from 'exceljs';
import { TableReadError, type RawCell, type RawTable } from './cellValues.ts';

export interface XlsxReadOptions {
  /** Sheet name (trimmed, case-insensitive); absent: the first sheet. */
  sheet?: string;
}

type ExcelValue = ExcelJS.CellValue | undefined;

export function normaliseExcelValue(value: ExcelValue): RawCell {
  if (value === null || value === undefined) return null;
  if (typeof value === 'number' || typeof value === 'string' || typeof value === 'boolean' || value instanceof Date) return value;
  if (typeof value === 'object') {
    if ('formula' in value || 'sharedFormula' in value) {
      const result = (value as ExcelJS.CellFormulaValue).result;
      if (result === undefined || result === null) return { unreadable: 'a formula with no saved result (open and save the file in a spreadsheet program)' };
      return normaliseExcelValue(result as ExcelValue);
    }
    if ('richText' in value) return value.richText.map((r) => r.text).join('');
    if ('error' in value) return { unreadable: `the Excel error ${value.error}` };
    if ('text' in value) return typeof value.text === 'string' ? value.text : normaliseExcelValue(value.text as ExcelValue);
  }
  return { unreadable: 'a value of a kind that cannot be read' };
}

export async function readXlsx(bytes: Uint8Array, options: XlsxReadOptions = {}): Promise<RawTable & { sheetName: string }> {
  const workbook = new ExcelJS.Workbook();
  try {
    await workbook.xlsx.load(Buffer.from(bytes.buffer, bytes.byteOffset, bytes.byteLength) as unknown as ArrayBuffer);
  } catch (error) {
    throw new TableReadError(`the file is not a readable XLSX workbook (${(error as Error).message})`);
  }
  const sheets = workbook.worksheets;
  if (sheets.length === 0) throw new TableReadError('the workbook has no sheets');
  let sheet = sheets[0];
  if (options.sheet !== undefined) {
    const want = options.sheet.trim().toLowerCase();
    const found = sheets.find((s) => s.name.trim().toLowerCase() === want);
    if (!found) throw new TableReadError(`the workbook has no sheet "${options.sheet}" (it has ${sheets.map((s) => `"${s.name}"`).join(', ')})`);
    sheet = found;
  }
  const rows: RawTable['rows'] = [];
  sheet.eachRow({ includeEmpty: false }, (row, rowNumber) => {
    const values = row.values as ExcelValue[];
    const cells: RawCell[] = [];
    for (let c = 1; c < values.length; c++) cells.push(normaliseExcelValue(values[c]));
    rows.push({ row: rowNumber, cells });
  });
  while (rows.length > 0 && isBlankOrFooter(sheet, rows[rows.length - 1])) rows.pop();
  return { rows, notes: [], sheetName: sheet.name };
}

function isBlankOrFooter(sheet: ExcelJS.Worksheet, raw: RawTable['rows'][number]): boolean {
  const filled = raw.cells.map((c, i) => ({ c, col: i + 1 })).filter(({ c }) => !(c === null || (typeof c === 'string' && c.trim() === '')));
  if (filled.length === 0) return true;
  const row = sheet.getRow(raw.row);
  const masters = new Set<string>();
  for (const { col } of filled) {
    const cell = row.getCell(col);
    if (!cell.isMerged) return false;
    masters.add(cell.master.address);
  }
  if (masters.size !== 1) return false;
  // The range must span at least two cells of this row (a footer merged across columns).
  let spanned = 0;
  const master = [...masters][0];
  for (let col = 1; col <= Math.max(row.cellCount, 2); col++) {
    const cell = row.getCell(col);
    if (cell.isMerged && cell.master.address === master) spanned++;
  }
  return spanned >= 2;
}
