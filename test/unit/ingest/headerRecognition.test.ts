// Header recognition: the header names mills write are read as our fields, J-distance labels by
// ISO 642 (mm) and ASTM A255 (sixteenths of an inch) usage, and the mapping is said in words.
import { readFileSync } from 'node:fs';
import { describe, expect, test } from 'vitest';
import { previewTableHeaders, recogniseHeaders, synonymKey } from '../../../src/ingest/headerRecognition.ts';
import { loadMillLayout } from '../../../src/ingest/millLayout.ts';
import type { RawRow } from '../../../src/ingest/cellValues.ts';

const rows = (...lines: string[][]): RawRow[] => lines.map((cells, i) => ({ row: i + 1, cells }));

describe('synonyms', () => {
  test.each([
    ['heat', 'heat_number'],
    ['Heat No.', 'heat_number'],
    ['Charge', 'heat_number'],
    ['melt', 'heat_number'],
    ['Melt no', 'heat_number'],
    ['C %', 'C'],
    ['Mn (%)', 'Mn'],
    ['Cr wt%', 'Cr'],
    ['Sulphur', 'S'],
    ['Steel grade', 'grade'],
    ['Aust. temp. °C', 'austenitizing_c'],
  ])('"%s" becomes %s', (header, field) => {
    const m = recogniseHeaders(rows([header, 'J 1.5 mm']), { millCode: 'X' });
    expect(m.columns[0]).toMatchObject({ became: 'field', field, how: expect.any(String) });
  });

  test('synonymKey drops units and dots', () => {
    expect(synonymKey(' Heat  No. ')).toBe('heat no');
    expect(synonymKey('Mo [%]')).toBe('mo');
  });
});

describe('distance labels', () => {
  // ISO 642 writes mm positions 1.5, 3, 5, 7 ... ("J 1,5"); ASTM A255 numbers sixteenths J1 ... J16 (common practice).
  test('J1.5, "J 1,5 mm", "3 mm" and a whole J beside a decimal read as millimetres', () => {
    const m = recogniseHeaders(rows(['heat', 'J1.5', 'J 1,5 mm x', 'J 3 mm', '5 mm', 'J7']), { millCode: 'X' });
    const d = m.columns.filter((c) => c.became === 'distance').map((c) => (c.became === 'distance' ? [c.header, c.system, c.at] : null));
    expect(d).toEqual([
      ['J1.5', 'mm', 1.5],
      ['J 3 mm', 'mm', 3],
      ['5 mm', 'mm', 5],
      ['J7', 'mm', 7],
    ]);
    expect(m.notes.join(' ')).toMatch(/millimetres/);
  });

  test('J1 ... J16 holding J1 and J2 read as sixteenths (ASTM A255 numbering)', () => {
    const m = recogniseHeaders(rows(['heat', 'J1', 'J2', 'J3', 'J16']), { millCode: 'X' });
    expect(m.columns.filter((c) => c.became === 'distance').every((c) => c.became === 'distance' && c.system === 'sixteenths')).toBe(true);
  });

  test('whole J headers whose set says nothing are ignored with the reason, unless a unit is stated', () => {
    const m = recogniseHeaders(rows(['heat', 'J3', 'J5', 'J9']), { millCode: 'X' });
    expect(m.columns[1]).toMatchObject({ became: 'ignored', why: expect.stringMatching(/3 mm or 3\/16 in/) });
    expect(m.missing.join(' ')).toMatch(/no J-distance columns/);
    const stated = recogniseHeaders(rows(['heat', 'J3', 'J5', 'J9']), { millCode: 'X', distanceUnit: 'mm' });
    expect(stated.columns[1]).toMatchObject({ became: 'distance', system: 'mm', at: 3 });
  });
});

describe('the preview and the layout', () => {
  test('says what is missing and what was ignored, in words', () => {
    const m = recogniseHeaders(rows(['Remarks', 'C %', 'J 1.5 mm']));
    expect(m.lines.join('\n')).toMatch(/Ignored \(1\): "Remarks"/);
    expect(m.missing.join(' ')).toMatch(/heat number/);
    expect(m.missing.join(' ')).toMatch(/mill/);
    expect(m.layout).toBeNull();
  });

  test('our own layout needs no layout', () => {
    const m = recogniseHeaders(rows(['mill', 'heat_number', 'grade', 'C', 'J 1.5 mm']));
    expect(m.ownLayout).toBe(true);
  });

  test('the invented sample mill file: header row, decimal comma, dates and sixteenths found; the layout loads', async () => {
    const bytes = new Uint8Array(readFileSync(new URL('../../../seed/samples/kessler-bar-works-hardenability.csv', import.meta.url)));
    const m = await previewTableHeaders(bytes, 'csv', { millCode: 'KBW' });
    expect(m.headerRow).toBe(3);
    expect(m.ownLayout).toBe(false);
    const layout = loadMillLayout(m.layout);
    expect(layout).toMatchObject({ millCode: 'KBW', delimiter: ';', decimalComma: true, dateFormat: 'DD.MM.YYYY', headerRow: 3 });
    expect(layout.columns.heat_number).toBe('Melt No.');
    // The sample's own hand-written layout (seed/samples/layouts/kessler-bar-works.json) reads J1..J16 as sixteenths too.
    expect(layout.distances).toEqual([{ unit: 'sixteenths', columns: { J1: 1, J2: 2, J3: 3, J4: 4, J5: 5, J6: 6, J8: 8, J10: 10, J12: 12, J16: 16 } }]);
    expect(layout.ignoreColumns).toEqual(['Remarks']);
  });

  test('a large CSV is previewed from its first part, with the same mapping', async () => {
    const lines = ['heat,C %,J 1.5 mm'];
    for (let i = 0; i < 30_000; i++) lines.push(`H${i},0.2${i % 10},4${i % 10}`);
    const bytes = new TextEncoder().encode(lines.join('\n') + '\n');
    expect(bytes.byteLength).toBeGreaterThan(262_144);
    const m = await previewTableHeaders(bytes, 'csv', { millCode: 'X' });
    expect(m.columns.map((c) => c.became)).toEqual(['field', 'field', 'distance']);
    expect(m.layout).not.toBeNull();
  });
});
