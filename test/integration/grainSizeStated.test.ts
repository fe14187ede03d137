// Grain size stated as a range, a bound or a word comes through the file import and JSON, is stored as
// written beside the number calculations use, and a word that is not a grain size is a row problem.
import { afterAll, beforeAll, describe, expect, test } from 'vitest';
import { createTestDatabase, type TestDatabase } from '../helpers/testDatabase.ts';
import { runImport } from '../../src/ingest/importPipeline.ts';
import { getHeat, listHeats } from '../../src/db/heats.ts';
import { certificate } from '../fixtures/certificates.ts';

let db: TestDatabase;
const HEADER = 'mill,grade,heat_number,cast_date,certificate_number,certificate_date,grain_size,C,Mn,lot_number,source,test_date,J 1.5 mm,J 9 mm';
const row = (heat: string, grain: string) => `BRENNWALD,8620H,${heat},2025-02-01,C-${heat},2025-03-01,${grain},0.20,0.80,L1,mill_certificate,2025-03-01,44,30`;
const csv = (rows: string[]) => new TextEncoder().encode([HEADER, ...rows].join('\n'));

beforeAll(async () => {
  db = await createTestDatabase();
});
afterAll(async () => db?.close());

async function heatNamed(heatNumber: string) {
  const id = (await listHeats(db.db, { grade: '8620H', limit: 100 })).heats.find((h) => h.heatNumber === heatNumber)!.id;
  return (await getHeat(db.db, id))!;
}

describe('grain size as stated', () => {
  test('ranges, bounds and "fine" from a CSV file', async () => {
    const report = await runImport(db.db, { bytes: csv([row('G-1', '7'), row('G-2', '5-8'), row('G-3', '≥5'), row('G-4', 'fine')]), format: 'csv', options: { createMissing: true }, createdBy: 'test' });
    expect(report.problems).toEqual([]);
    expect(report.status).toBe('accepted');
    expect(await heatNamed('G-1')).toMatchObject({ grainSize: 7, grainSizeStated: null });
    expect(await heatNamed('G-2')).toMatchObject({ grainSize: 6.5, grainSizeStated: '5-8' });
    expect(await heatNamed('G-3')).toMatchObject({ grainSize: null, grainSizeStated: '≥5' });
    expect(await heatNamed('G-4')).toMatchObject({ grainSize: null, grainSizeStated: 'fine' });
  });

  test('a word that is not a grain size is a problem at its row and column', async () => {
    const report = await runImport(db.db, { bytes: csv([row('G-5', 'medium')]), format: 'csv', options: { createMissing: true }, createdBy: 'test' });
    expect(report.status).toBe('rejected');
    const problems = report.items.flatMap((i) => i.problems);
    expect(problems[0]).toMatchObject({ row: 2, column: 'grain_size' });
    expect(problems[0].message).toMatch(/not an ASTM E112 number, a range/);
  });

  test('JSON takes the same forms; the same certificate sent again is unchanged', async () => {
    const c = certificate({ heatNumber: 'G-6', certificateNumber: 'C-G-6', grainSize: '6 to 8' });
    const first = await runImport(db.db, { bytes: new TextEncoder().encode(JSON.stringify(c)), format: 'json', createdBy: 'test' });
    expect(first.status).toBe('accepted');
    expect(await heatNamed('G-6')).toMatchObject({ grainSize: 7, grainSizeStated: '6 to 8' });
    const again = await runImport(db.db, { bytes: new TextEncoder().encode(JSON.stringify({ certificates: [c] })), format: 'json', createdBy: 'test' });
    expect(again.items[0].status).toBe('unchanged');
  });
});
