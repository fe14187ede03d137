// A curve the certificate states as calculated from chemistry (ASTM A255 §1.2; ISO 642 allows one by
// agreement) is not a measurement of the heat: the series loader leaves it out of process statistics,
// model training and forensics unless asked, and the Mills page counts it beside the measured heats.
import { afterAll, beforeAll, describe, expect, test } from 'vitest';
import { createTestDatabase, type TestDatabase } from '../helpers/testDatabase.ts';
import { certificate } from '../fixtures/certificates.ts';
import { importCertificates } from '../fixtures/analysisHistory.ts';
import { loadSeriesCurves } from '../../src/analysis/seriesData.ts';
import { millsOverview } from '../../src/web/data/millsOverview.ts';

let db: TestDatabase;
beforeAll(async () => {
  db = await createTestDatabase();
  const measured = [1, 2, 3].map((i) => certificate({ heatNumber: `M-${i}`, certificateNumber: `C-M-${i}`, castDate: `2025-03-0${i}` }));
  const calculated = certificate({ heatNumber: 'K-1', certificateNumber: 'C-K-1', castDate: '2025-03-05' });
  calculated.tests = calculated.tests.map((t) => ({ ...t, basis: 'calculated' as const }));
  await importCertificates(db.db, [...measured, calculated]);
});
afterAll(async () => db?.close());

describe('calculated curves', () => {
  test('the series loader gives measured curves unless asked for calculated or both', async () => {
    const heats = async (basis?: 'measured' | 'calculated' | 'both') =>
      (await loadSeriesCurves(db.db, { grade: '8620H', basis })).map((c) => c.heatNumber);
    expect(await heats()).toEqual(['M-1', 'M-2', 'M-3']);
    expect(await heats('calculated')).toEqual(['K-1']);
    expect(await heats('both')).toEqual(['M-1', 'M-2', 'M-3', 'K-1']);
    // The mill and date filters narrow the current-certificate step too: the same curves come back.
    expect((await loadSeriesCurves(db.db, { grade: '8620H', mill: 'BRENNWALD', from: '2025-03-02', to: '2025-03-05', basis: 'both' })).map((c) => c.heatNumber)).toEqual(['M-2', 'M-3', 'K-1']);
  });

  test('the Mills overview counts them beside the measured heats and leaves them out of its figures', async () => {
    const overview = await millsOverview(db.db, {});
    const row = overview.rows.find((r) => r.mill === 'BRENNWALD' && r.grade === '8620H')!;
    expect(row.heats).toBe(3);
    expect(row.calculatedCurves).toBe(1);
  });
});
