// Writes certificates-example.xlsx from certificates-example.csv (same data, typed cells: numbers as
// numbers, dates as Excel dates), so the two sample files stay in step.
// Run: npx tsx seed/samples/make-xlsx.ts
import { readFileSync } from 'node:fs';
import { dirname, join } from 'node:path';
import { fileURLToPath } from 'node:url';
import { parse } from 'csv-parse/sync';
import ExcelJS from 'exceljs';

const here = dirname(fileURLToPath(import.meta.url));
const TEXT_COLUMNS = new Set(['mill', 'grade', 'heat_number', 'certificate_number', 'lot_number', 'purchase_order', 'source', 'basis', 'laboratory']);
const DATE_COLUMNS = new Set(['cast_date', 'certificate_date', 'received_date', 'test_date']);

export function buildWorkbook(records: string[][]): ExcelJS.Workbook {
  const [header, ...rows] = records;
  const workbook = new ExcelJS.Workbook();
  // Fixed document dates keep the written file the same from run to run.
  workbook.created = new Date(Date.UTC(2024, 0, 1));
  workbook.modified = new Date(Date.UTC(2024, 0, 1));
  workbook.creator = 'endquench sample generator';
  const sheet = workbook.addWorksheet('Certificates');
  sheet.addRow(header);
  sheet.getRow(1).font = { bold: true };
  for (const row of rows) {
    sheet.addRow(
      row.map((text, i) => {
        const name = header[i];
        if (text === '') return null;
        if (TEXT_COLUMNS.has(name)) return text;
        if (DATE_COLUMNS.has(name)) return new Date(`${text}T00:00:00Z`);
        const n = Number(text);
        if (!Number.isFinite(n)) throw new Error(`column ${name}: "${text}" is not a number`);
        return n;
      }),
    );
  }
  header.forEach((name, i) => {
    if (DATE_COLUMNS.has(name)) sheet.getColumn(i + 1).numFmt = 'yyyy-mm-dd';
  });
  return workbook;
}

if (process.argv[1] && fileURLToPath(import.meta.url) === process.argv[1]) {
  const records = parse(readFileSync(join(here, 'certificates-example.csv'), 'utf8'), { relax_column_count: true }) as string[][];
  const out = join(here, 'certificates-example.xlsx');
  await buildWorkbook(records).xlsx.writeFile(out);
  console.log(`wrote ${out} (${records.length - 1} rows)`);
}
