import { readFileSync } from 'node:fs';
import { crc32, deflateRawSync } from 'node:zlib';
import ExcelJS from 'exceljs';
import { describe, expect, it } from 'vitest';
import { loadMillLayout } from '../../../src/ingest/millLayout.ts';
import { parseCertificateTable } from '../../../src/ingest/tableParser.ts';
import { excelSerialToDate, isDateFormatCode, readXlsx } from '../../../src/ingest/xlsxReader.ts';

// Values checked below are the ones the test writes into the workbook.
const today = () => '2025-06-30';
const HEADER = ['mill', 'grade', 'heat_number', 'cast_date', 'C', 'Mn', 'lot_number', 'test_date', 'J 1/16', 'J 4/16', 'J 8/16'];
const utc = (y: number, m: number, d: number) => new Date(Date.UTC(y, m - 1, d));

async function toBytes(workbook: ExcelJS.Workbook): Promise<Uint8Array> {
  return new Uint8Array(await workbook.xlsx.writeBuffer());
}

function sheetWith(workbook: ExcelJS.Workbook, name: string, rows: unknown[][]): ExcelJS.Worksheet {
  const sheet = workbook.addWorksheet(name);
  for (const r of rows) sheet.addRow(r);
  return sheet;
}

describe('xlsx', () => {
  it('round-trips typed cells: numbers, Excel dates, formulas (cached result) and rich text', async () => {
    const wb = new ExcelJS.Workbook();
    const sheet = sheetWith(wb, 'Data', [
      HEADER,
      ['AVS', '8620H', 'A1', utc(2024, 3, 2), 0.21, 0.84, 'L1', utc(2024, 3, 6), 46, 35, 25],
      ['AVS', '8620H', 'A1', utc(2024, 3, 2), 0.21, 0.84, 'L2', utc(2024, 3, 6), 47, 34, 25],
    ]);
    sheet.getCell('J2').value = { formula: 'I2-11', result: 35 };
    sheet.getCell('B3').value = { richText: [{ text: '8620' }, { text: 'H', font: { bold: true } }] };
    const r = await parseCertificateTable(await toBytes(wb), { format: 'xlsx', today });
    expect(r.fileProblems).toEqual([]);
    expect(r.items).toHaveLength(1);
    expect(r.items[0].problems).toEqual([]);
    const c = r.items[0].certificate!;
    expect(c).toMatchObject({ grade: '8620H', castDate: '2024-03-02', chemistry: { C: 0.21, Mn: 0.84 } });
    expect(c.tests.map((t) => t.readings.map((x) => x.hrc))).toEqual([
      [46, 35, 25],
      [47, 34, 25],
    ]);
    expect(c.tests[0]).toMatchObject({ distanceSystem: 'sixteenths', testDate: '2024-03-06' });
  });

  it('gives the same records as the CSV for the committed sample pair', async () => {
    const fromCsv = await parseCertificateTable(readFileSync(new URL('../../../seed/samples/certificates-example.csv', import.meta.url)), { format: 'csv', today });
    const fromXlsx = await parseCertificateTable(readFileSync(new URL('../../../seed/samples/certificates-example.xlsx', import.meta.url)), { format: 'xlsx', today });
    expect(fromCsv.items.every((i) => i.problems.length === 0)).toBe(true);
    expect(fromCsv.items).toHaveLength(4);
    expect(fromXlsx).toEqual(fromCsv);
  });

  it('drops blank and merged footer rows at the end, and reads a vertically merged cell in every row', async () => {
    const wb = new ExcelJS.Workbook();
    const sheet = sheetWith(wb, 'Data', [
      HEADER,
      ['AVS', '8620H', 'A1', utc(2024, 3, 2), 0.21, 0.84, 'L1', utc(2024, 3, 6), 46, 35, 25],
      [null, '8620H', null, utc(2024, 3, 2), 0.21, 0.84, 'L2', utc(2024, 3, 6), 47, 34, 25],
      [],
      [],
      ['Approved by the works laboratory'],
    ]);
    sheet.mergeCells('A2:A3');
    sheet.mergeCells('C2:C3');
    sheet.mergeCells('A6:K6');
    const r = await parseCertificateTable(await toBytes(wb), { format: 'xlsx', today });
    expect(r.rowCount).toBe(2);
    expect(r.items.map((i) => [i.key, i.rows, i.problems])).toEqual([['AVS/A1', [2, 3], []]]);
  });

  it('reports an Excel error and a formula without a saved result at their cells', async () => {
    const wb = new ExcelJS.Workbook();
    const sheet = sheetWith(wb, 'Data', [HEADER, ['AVS', '8620H', 'A1', utc(2024, 3, 2), 0.21, 0.84, 'L1', utc(2024, 3, 6), 46, 35, 25]]);
    sheet.getCell('F2').value = { error: '#DIV/0!' } as ExcelJS.CellErrorValue;
    sheet.getCell('K2').value = { formula: 'J2-10' } as ExcelJS.CellFormulaValue;
    const r = await parseCertificateTable(await toBytes(wb), { format: 'xlsx', today });
    expect(r.items[0].problems.map((p) => [p.row, p.column, p.message])).toEqual([
      [2, 'Mn', 'row 2, column "Mn": holds the Excel error #DIV/0!'],
      [2, 'J 8/16', 'row 2, column "J 8/16": holds a formula with no saved result (open and save the file in a spreadsheet program)'],
    ]);
  });

  it('reads the first sheet unless the layout names one, and reports a missing sheet', async () => {
    const wb = new ExcelJS.Workbook();
    sheetWith(wb, 'Cover', [['Hardenability report']]);
    sheetWith(wb, 'Data', [
      ['Melt', 'C %', 'J1'],
      ['K-1', '0,40', 55],
    ]);
    const bytes = await toBytes(wb);
    const layout = {
      name: 'Two-sheet report',
      millCode: 'KBW',
      decimalComma: true,
      columns: { heat_number: 'Melt', C: 'C %' },
      distances: { unit: 'sixteenths', pattern: '^J(\\d+)$' },
      defaults: { grade: '4140H', cast_date: '2024-01-04' },
    };
    const named = await parseCertificateTable(bytes, { format: 'xlsx', today, layout: loadMillLayout({ ...layout, sheet: 'data' }) });
    expect(named.items[0].problems).toEqual([]);
    expect(named.items[0].certificate).toMatchObject({ mill: 'KBW', grade: '4140H', castDate: '2024-01-04', chemistry: { C: 0.4 } });
    const first = await parseCertificateTable(bytes, { format: 'xlsx', today, layout: loadMillLayout(layout) });
    expect(first.fileProblems.map((p) => p.message)).toEqual([
      'the file has no column "Melt", which the layout "Two-sheet report" names for heat_number; every row needs it',
    ]);
    const missing = await parseCertificateTable(bytes, { format: 'xlsx', today, layout: loadMillLayout({ ...layout, sheet: 'Results' }) });
    expect(missing.fileProblems.map((p) => p.message)).toEqual(['the workbook has no sheet "Results" (it has "Cover", "Data")']);
  });

  it('reads an Excel serial number in a date column as a date', async () => {
    const wb = new ExcelJS.Workbook();
    // Excel 1900 date system: 45292 is 2024-01-01 (from memory); 45353 is 61 days later, 2024-03-02.
    sheetWith(wb, 'Data', [HEADER, ['AVS', '8620H', 'A1', 45353, 0.21, 0.84, 'L1', '2024-03-06', 46, 35, 25]]);
    const r = await parseCertificateTable(await toBytes(wb), { format: 'xlsx', today });
    expect(r.items[0].certificate?.castDate).toBe('2024-03-02');
  });

  it('reports a file that is not a workbook', async () => {
    const r = await parseCertificateTable(new TextEncoder().encode('mill,heat_number\n'), { format: 'xlsx', today });
    expect(r.fileProblems[0].message).toMatch(/^the file is not a readable XLSX workbook/);
  });

  it('reads text with XML special characters, booleans and the 1904 date system', async () => {
    const wb = new ExcelJS.Workbook();
    wb.properties.date1904 = true;
    const sheet = sheetWith(wb, 'Data', [['Lab <North> & "South"', true, utc(2024, 3, 2)]]);
    sheet.getCell('C1').numFmt = 'dd.mm.yyyy';
    const t = await readXlsx(await toBytes(wb));
    expect(t.rows).toEqual([{ row: 1, cells: ['Lab <North> & "South"', true, utc(2024, 3, 2)] }]);
  });
});

describe('xlsx number formats and serials', () => {
  it('tells date formats from number formats', () => {
    // Format codes as ECMA-376 Part 1 18.8.31 writes them.
    for (const code of ['yyyy-mm-dd', 'dd.mm.yyyy', 'd/m/yy h:mm', '[$-409]mmm d, yyyy']) expect(isDateFormatCode(code)).toBe(true);
    for (const code of ['General', '0.00', '#,##0.000', '0.00"mm"', '[Red]0.0', '@']) expect(isDateFormatCode(code)).toBe(false);
  });

  it('converts serials in both date systems', () => {
    // 1900 system: 45292 is 2024-01-01 (from memory). 1904 system: the same day is 1462 days fewer
    // (the documented offset between Excel's two date systems).
    expect(excelSerialToDate(45292, false).toISOString()).toBe('2024-01-01T00:00:00.000Z');
    expect(excelSerialToDate(45292 - 1462, true).toISOString()).toBe('2024-01-01T00:00:00.000Z');
    expect(excelSerialToDate(45292.5, false).toISOString()).toBe('2024-01-01T12:00:00.000Z');
  });
});

// A hand-written workbook for SpreadsheetML forms exceljs does not write: a namespace prefix, inline
// and formula strings, cells without a reference, a t="d" ISO date. ZIP layout per PKWARE APPNOTE.TXT.
function zip(files: Record<string, string>): Uint8Array {
  const chunks: Buffer[] = [];
  const central: Buffer[] = [];
  let offset = 0;
  for (const [name, text] of Object.entries(files)) {
    const data = Buffer.from(text, 'utf8');
    const packed = deflateRawSync(data);
    const nameBytes = Buffer.from(name, 'utf8');
    const local = Buffer.alloc(30);
    local.writeUInt32LE(0x04034b50, 0);
    local.writeUInt16LE(20, 4);
    local.writeUInt16LE(8, 8);
    local.writeUInt32LE(crc32(data), 14);
    local.writeUInt32LE(packed.length, 18);
    local.writeUInt32LE(data.length, 22);
    local.writeUInt16LE(nameBytes.length, 26);
    const entry = Buffer.alloc(46);
    entry.writeUInt32LE(0x02014b50, 0);
    entry.writeUInt16LE(20, 4);
    entry.writeUInt16LE(20, 6);
    entry.writeUInt16LE(8, 10);
    entry.writeUInt32LE(crc32(data), 16);
    entry.writeUInt32LE(packed.length, 20);
    entry.writeUInt32LE(data.length, 24);
    entry.writeUInt16LE(nameBytes.length, 28);
    entry.writeUInt32LE(offset, 42);
    chunks.push(local, nameBytes, packed);
    central.push(entry, nameBytes);
    offset += local.length + nameBytes.length + packed.length;
  }
  const dir = Buffer.concat(central);
  const end = Buffer.alloc(22);
  end.writeUInt32LE(0x06054b50, 0);
  end.writeUInt16LE(Object.keys(files).length, 8);
  end.writeUInt16LE(Object.keys(files).length, 10);
  end.writeUInt32LE(dir.length, 12);
  end.writeUInt32LE(offset, 16);
  return new Uint8Array(Buffer.concat([...chunks, dir, end]));
}

describe('xlsx written by other programs', () => {
  it('reads prefixed elements, inline and formula strings, unreferenced cells and ISO date cells', async () => {
    const ns = 'http://schemas.openxmlformats.org/spreadsheetml/2006/main';
    const bytes = zip({
      'xl/workbook.xml': `<x:workbook xmlns:x="${ns}" xmlns:r="http://schemas.openxmlformats.org/officeDocument/2006/relationships"><x:sheets><x:sheet name="Jominy" sheetId="1" r:id="rId1"/></x:sheets></x:workbook>`,
      'xl/_rels/workbook.xml.rels': '<Relationships><Relationship Id="rId1" Target="worksheets/sheet1.xml"/></Relationships>',
      'xl/worksheets/sheet1.xml':
        `<x:worksheet xmlns:x="${ns}"><x:sheetData>` +
        '<x:row r="1"><x:c t="inlineStr"><x:is><x:t>Melt</x:t></x:is></x:c><x:c t="inlineStr"><x:is><x:r><x:t>C </x:t></x:r><x:r><x:t>%</x:t></x:r></x:is></x:c><x:c t="inlineStr"><x:is><x:t>Cast</x:t></x:is></x:c><x:c t="inlineStr"><x:is><x:t>J1</x:t></x:is></x:c></x:row>' +
        '<x:row r="2"><x:c r="A2" t="str"><x:f>"K-"&amp;"9"</x:f><x:v>K-9</x:v></x:c><x:c r="B2"><x:v>0.41</x:v></x:c><x:c r="C2" t="d"><x:v>2024-01-04</x:v></x:c><x:c r="D2"><x:f>50+7</x:f><x:v>57</x:v></x:c></x:row>' +
        '</x:sheetData></x:worksheet>',
    });
    const r = await parseCertificateTable(bytes, {
      format: 'xlsx',
      today,
      layout: loadMillLayout({
        name: 'Hand-written',
        millCode: 'KBW',
        sheet: 'Jominy',
        columns: { heat_number: 'Melt', C: 'C %', cast_date: 'Cast' },
        distances: { unit: 'sixteenths', pattern: '^J(\\d+)$' },
        defaults: { grade: '4140H' },
      }),
    });
    expect(r.fileProblems).toEqual([]);
    expect(r.items.map((i) => [i.key, i.problems])).toEqual([['KBW/K-9', []]]);
    expect(r.items[0].certificate).toMatchObject({ castDate: '2024-01-04', chemistry: { C: 0.41 }, tests: [{ readings: [{ at: 1, hrc: 57 }] }] });
  });
});

describe('xlsx size limits (zip bombs)', () => {
  const ns = 'http://schemas.openxmlformats.org/spreadsheetml/2006/main';
  // A 200 kB run of blank rows packs to a few hundred bytes: a small zip bomb.
  const padded = zip({
    'xl/workbook.xml': `<workbook xmlns="${ns}" xmlns:r="http://schemas.openxmlformats.org/officeDocument/2006/relationships"><sheets><sheet name="S" sheetId="1" r:id="rId1"/></sheets></workbook>`,
    'xl/_rels/workbook.xml.rels': '<Relationships><Relationship Id="rId1" Target="worksheets/sheet1.xml"/></Relationships>',
    'xl/worksheets/sheet1.xml': `<worksheet xmlns="${ns}"><sheetData><row r="1"><c r="A1"><v>7</v></c></row>${'<row/>'.repeat(40_000)}</sheetData></worksheet>`,
  });

  it('reads the workbook within the limits', async () => {
    expect(padded.length).toBeLessThan(10_000);
    expect((await readXlsx(padded, { maxPartBytes: 1_000_000 })).rows).toEqual([{ row: 1, cells: [7] }]);
  });

  it('refuses a part that unpacks past the limit, and a file past the size limit', async () => {
    await expect(readXlsx(padded, { maxPartBytes: 100_000 })).rejects.toThrow(/^the workbook entry xl\/worksheets\/sheet1\.xml unpacks to more than the 0\.1 MB accepted \(limit maxPartBytes\), which is refused/);
    await expect(readXlsx(padded, { maxBytes: 1_000 })).rejects.toThrow(/^the workbook is 0\.0 MB, more than the 0\.0 MB accepted \(limit maxBytes\); split it or export the sheet as CSV$/);
  });
});
