// The work one workbook may cause is bounded: each hostile workbook is refused with the limit it passed,
// limits hold exactly at their edge, and reading a part in pieces gives the same table as reading it whole.
import fc from 'fast-check';
import { describe, expect, it } from 'vitest';
import { readXlsx, XLSX_LIMITS, XlsxLimitError } from '../../../src/ingest/xlsxReader.ts';
import { hostileWorkbooks, workbookWith, zipParts } from '../../fixtures/hostileXlsx.ts';

const NS = 'http://schemas.openxmlformats.org/spreadsheetml/2006/main';
const sheet = (rows: string, after = '') => `<worksheet xmlns="${NS}"><sheetData>${rows}</sheetData>${after}</worksheet>`;
const numberRow = (r: number, values: number[]) => `<row r="${r}">${values.map((v) => `<c><v>${v}</v></c>`).join('')}</row>`;

describe('hostile workbooks', () => {
  for (const c of hostileWorkbooks()) {
    it(`refuses ${c.name} under ${c.limit} (${c.status})`, async () => {
      expect(c.bytes.length).toBeLessThan(5_000_000);
      const error = await readXlsx(c.bytes).then(
        () => undefined,
        (e: unknown) => e,
      );
      expect(error).toBeInstanceOf(XlsxLimitError);
      expect((error as XlsxLimitError).limit).toBe(c.limit);
      expect((error as XlsxLimitError).status).toBe(c.status);
      expect((error as XlsxLimitError).value).toBe(XLSX_LIMITS[c.limit]);
      expect((error as Error).message).toContain(`(limit ${c.limit})`);
    });
  }
});

describe('limits at their edge', () => {
  it('maxCells counts each row as wide as its last filled column', async () => {
    const bytes = workbookWith(sheet(numberRow(1, [1, 2, 3, 4, 5]) + numberRow(2, [6, 7, 8, 9, 10])));
    expect((await readXlsx(bytes, { maxCells: 10 })).rows).toHaveLength(2);
    await expect(readXlsx(bytes, { maxCells: 9 })).rejects.toMatchObject({ limit: 'maxCells', status: 422 });
  });

  it('maxCells counts a merged range before it is expanded', async () => {
    const rows = '<row r="1"><c r="A1"><v>1</v></c><c r="B1"><v>2</v></c></row><row r="2"><c r="B2"><v>3</v></c></row><row r="3"><c r="B3"><v>4</v></c></row>';
    const bytes = workbookWith(sheet(rows, '<mergeCells><mergeCell ref="A1:A3"/></mergeCells>'));
    // Three rows two wide, plus the merged area counted as 3 rows as wide as its right edge (1).
    expect((await readXlsx(bytes, { maxCells: 9 })).rows.map((r) => r.cells)).toEqual([
      [1, 2],
      [1, 3],
      [1, 4],
    ]);
    await expect(readXlsx(bytes, { maxCells: 8 })).rejects.toMatchObject({ limit: 'maxCells' });
  });

  it('maxColumns and maxRows are the last column and row read', async () => {
    const bytes = workbookWith(sheet('<row r="4"><c r="C4"><v>1</v></c></row>'));
    expect((await readXlsx(bytes, { maxColumns: 3, maxRows: 4 })).rows).toEqual([{ row: 4, cells: [null, null, 1] }]);
    await expect(readXlsx(bytes, { maxColumns: 2 })).rejects.toThrow(/^row 4 has a cell in column C, beyond column B \(the 2 columns read\) \(limit maxColumns\)$/);
    await expect(readXlsx(bytes, { maxRows: 3 })).rejects.toMatchObject({ limit: 'maxRows' });
  });

  it('maxMerges, maxSharedStrings, maxSharedTextChars and maxItemChars', async () => {
    const merged = workbookWith(sheet(numberRow(1, [1]) + numberRow(3, [7]), '<mergeCells><mergeCell ref="A1:B1"/><mergeCell ref="A2:B2"/></mergeCells>'));
    expect((await readXlsx(merged, { maxMerges: 2 })).rows.map((r) => r.cells)).toEqual([[1, 1], [7]]);
    await expect(readXlsx(merged, { maxMerges: 1 })).rejects.toMatchObject({ limit: 'maxMerges' });
    const shared = workbookWith(sheet('<row r="1"><c t="s"><v>1</v></c></row>'), {
      'xl/sharedStrings.xml': `<sst xmlns="${NS}"><si><t>abc</t></si><si><t>defg</t></si></sst>`,
    });
    expect((await readXlsx(shared, { maxSharedStrings: 2, maxSharedTextChars: 7 })).rows).toEqual([{ row: 1, cells: ['defg'] }]);
    await expect(readXlsx(shared, { maxSharedStrings: 1 })).rejects.toMatchObject({ limit: 'maxSharedStrings' });
    await expect(readXlsx(shared, { maxSharedTextChars: 6 })).rejects.toMatchObject({ limit: 'maxSharedTextChars' });
    const long = workbookWith(sheet(`<row r="1"><c t="inlineStr"><is><t>${'x'.repeat(500)}</t></is></c></row>`));
    expect((await readXlsx(long, { maxItemChars: 600, chunkBytes: 64 })).rows[0].cells[0]).toBe('x'.repeat(500));
    await expect(readXlsx(long, { maxItemChars: 400, chunkBytes: 64 })).rejects.toMatchObject({ limit: 'maxItemChars' });
  });

  it('byte limits answer 413, count limits 422', async () => {
    const bytes = workbookWith(sheet(numberRow(1, [1])));
    await expect(readXlsx(bytes, { maxBytes: 100 })).rejects.toMatchObject({ limit: 'maxBytes', status: 413 });
    await expect(readXlsx(bytes, { maxMetaPartBytes: 50 })).rejects.toMatchObject({ limit: 'maxMetaPartBytes', status: 413 });
    await expect(readXlsx(bytes, { maxPartBytes: 50 })).rejects.toMatchObject({ limit: 'maxPartBytes', status: 413 });
  });
});

// Text with characters that need escaping and multi-byte UTF-8 (cut mid-character by small pieces).
const text = fc.string({ unit: fc.constantFrom('a', 'Z', '7', ' ', '<', '&', '"', 'é', '€', '𝄞', 'J', '/'), minLength: 1, maxLength: 12 });
const escape = (s: string) => s.replace(/&/g, '&amp;').replace(/</g, '&lt;').replace(/"/g, '&quot;');
const cell = fc.oneof(
  fc.integer({ min: -1000, max: 1000 }).map((n) => ({ xml: `<v>${n}</v>`, attrs: '' })),
  text.map((s) => ({ xml: `<is><t>${escape(s)}</t></is>`, attrs: ' t="inlineStr"' })),
  fc.nat({ max: 2 }).map((i) => ({ xml: `<v>${i}</v>`, attrs: ' t="s"' })),
);
const table = fc.array(fc.array(fc.option(cell, { nil: undefined }), { minLength: 1, maxLength: 6 }), { minLength: 1, maxLength: 12 });

describe('reading in pieces', () => {
  it('gives the same table whatever the piece size, stored or deflated', async () => {
    await fc.assert(
      fc.asyncProperty(table, fc.integer({ min: 1, max: 200 }), fc.boolean(), async (rows, piece, merge) => {
        const body = rows
          .map((cells, r) => `<row r="${r + 1}">${cells.map((c, i) => (c ? `<c r="${String.fromCharCode(65 + i)}${r + 1}"${c.attrs}>${c.xml}</c>` : '')).join('')}</row>`)
          .join('');
        const xml = sheet(body, merge ? '<mergeCells count="1"><mergeCell ref="A1:B2"/></mergeCells>' : '');
        const shared = `<sst xmlns="${NS}"><si><t>first</t></si><si><r><t>ri</t></r><r><t>ch</t></r></si><si><t>th&amp;ird é</t></si></sst>`;
        const stored = workbookStored(xml, shared);
        const whole = await readXlsx(stored);
        expect(await readXlsx(stored, { chunkBytes: piece })).toEqual(whole);
        expect(await readXlsx(workbookWith(xml, { 'xl/sharedStrings.xml': shared }), { chunkBytes: 64 + piece })).toEqual(whole);
      }),
      { numRuns: 150, seed: 20261204 },
    );
  });
});

function workbookStored(sheetXml: string, shared: string): Uint8Array {
  const enc = (s: string) => ({ stored: new Uint8Array(Buffer.from(s, 'utf8')) });
  return zipParts({
    'xl/workbook.xml': enc(`<workbook xmlns="${NS}" xmlns:r="http://schemas.openxmlformats.org/officeDocument/2006/relationships"><sheets><sheet name="S1" sheetId="1" r:id="rId1"/></sheets></workbook>`),
    'xl/_rels/workbook.xml.rels': enc('<Relationships><Relationship Id="rId1" Target="worksheets/sheet1.xml"/></Relationships>'),
    'xl/worksheets/sheet1.xml': enc(sheetXml),
    'xl/sharedStrings.xml': enc(shared),
  });
}
