// Readings off the scale ("<20", "< 20 HRC", ">65"), as mills write them when the hardness is under the
// C scale's range (ASTM E18 gives HRC from 20 up): accepted from CSV and JSON, stored with their side,
// judged as failures where the band's minimum is the bound or more, raising the out-of-band alert, and
// taken into capability by the censored-normal estimate (Cohen 1959) instead of being dropped.
import { afterAll, beforeAll, describe, expect, test } from 'vitest';
import { createTestDatabase, type TestDatabase } from '../helpers/testDatabase.ts';
import { addBandVersion, upsertGrade } from '../../src/db/referenceData.ts';
import { getHeat, listHeats } from '../../src/db/heats.ts';
import { listAlerts } from '../../src/db/alerts.ts';
import { runImport } from '../../src/ingest/importPipeline.ts';
import { runIngestRules } from '../../src/alerts/rules/index.ts';
import { loadSeriesCurves, pointsAt } from '../../src/analysis/seriesData.ts';
import { capabilityAtBand } from '../../src/analysis/capabilityStudy.ts';
import { bandOn } from '../../src/analysis/bandOf.ts';
import { certificate } from '../fixtures/certificates.ts';

let db: TestDatabase;
const HEADER = 'mill,grade,heat_number,cast_date,certificate_number,certificate_date,C,Mn,lot_number,source,test_date,J 1.5 mm,J 9 mm,J 25 mm';
// Invented heats; the 25 mm readings straddle 20 HRC, three written off the scale in three ways.
const far = ['23', '<20', '21', '< 20 HRC', '22', '24', '≤20', '21', '22', '23', '25', '22', '21', '24', '22', '23', '21', '22', '20', '23'];
const csv = [HEADER, ...far.map((v, i) => `BRENNWALD,5120H,K-${String(i).padStart(2, '0')},2025-02-${String(i + 1).padStart(2, '0')},KC-${i},2025-03-01,0.20,0.80,L1,mill_certificate,2025-03-01,44,30,${v.includes(',') ? `"${v}"` : v}`)].join('\n');

beforeAll(async () => {
  db = await createTestDatabase();
  await upsertGrade(db.db, { code: '5120H', distanceSystem: 'mm', chemistryLimits: [] });
  // An invented band for the test: minimum 20 HRC at 25 mm.
  await addBandVersion(db.db, '5120H', {
    effectiveFrom: '2020-01-01', status: 'active', kind: 'standard',
    points: [{ distanceMm: 1.5, label: '1.5 mm', minHrc: 40, maxHrc: 48 }, { distanceMm: 9, label: '9 mm', minHrc: 25, maxHrc: 36 }, { distanceMm: 25, label: '25 mm', minHrc: 20, maxHrc: 30 }],
  });
  const report = await runImport(db.db, {
    bytes: new TextEncoder().encode(csv), format: 'csv', options: { createMissing: true }, createdBy: 'test',
    afterWrite: (tx, written) => runIngestRules(tx, written),
  });
  expect(report.problems).toEqual([]);
  expect(report.status).toBe('accepted');
}, 120_000);
afterAll(async () => db?.close());

describe('readings off the scale', () => {
  test('are stored with their side and the bound', async () => {
    const id = (await listHeats(db.db, { grade: '5120H', limit: 100 })).heats.find((h) => h.heatNumber === 'K-01')!.id;
    const detail = (await getHeat(db.db, id))!;
    expect(detail.tests[0].readings.find((r) => r.distanceMm === 25)).toMatchObject({ hrc: 20, censored: 'below' });
    expect(detail.tests[0].readings.find((r) => r.distanceMm === 9)).toMatchObject({ hrc: 30, censored: null });
  });

  test('a "<20" against a minimum of 20 fails the band and raises the out-of-band alert', async () => {
    const alerts = (await listAlerts(db.db, { rule: 'out_of_band', limit: 100 })).alerts;
    // K-01 "<20", K-03 "< 20 HRC", K-06 "≤20"; K-18 reads exactly 20 and passes.
    expect(alerts.map((a) => a.title).join(' ')).toMatch(/K-01/);
    expect(alerts.filter((a) => /K-0[136]\b/.test(a.title)).length).toBe(3);
    expect(alerts.some((a) => /K-18\b/.test(a.title))).toBe(false);
  });

  test('capability keeps them: censored-normal estimate, counted as nonconforming, and said so', async () => {
    const curves = await loadSeriesCurves(db.db, { grade: '5120H' });
    expect(pointsAt(curves, 25).filter((p) => p.censored === 'below').length).toBe(3);
    const band = (await bandOn(db.db, '5120H', '2025-06-01'))!;
    const at25 = capabilityAtBand(curves, band).find((d) => d.distanceMm === 25)!;
    expect(at25.n).toBe(20);
    const r = at25.result!;
    expect(r.censoring).toMatchObject({ below: 3, above: 0 });
    expect(at25.note).toMatch(/off the scale/);
    // Three of twenty heats below the minimum: observed 150,000 PPM below.
    expect(r.observedPpm.below).toBeCloseTo(150_000, 6);
    // Taking each "<20" as 20 would put the mean higher than the censored estimate does.
    const asTwenty = pointsAt(curves, 25).reduce((s, p) => s + p.value, 0) / 20;
    expect(r.mean).toBeLessThan(asTwenty);
  });

  test('JSON certificates carry them as censored: "below" / "above"', async () => {
    const c = certificate({ mill: 'BRENNWALD', grade: '5120H', heatNumber: 'J-1', certificateNumber: 'JC-1' });
    c.tests = [{ source: 'mill_certificate', basis: 'measured', distanceSystem: 'mm', readings: [{ at: 1.5, hrc: 65, censored: 'above' }, { at: 9, hrc: 30 }, { at: 25, hrc: 20, censored: 'below' }] }];
    const report = await runImport(db.db, { bytes: new TextEncoder().encode(JSON.stringify(c)), format: 'json', createdBy: 'test' });
    expect(report.status).toBe('accepted');
    const bad = await runImport(db.db, { bytes: new TextEncoder().encode(JSON.stringify({ ...c, heatNumber: 'J-2', tests: [{ ...c.tests[0], readings: [{ at: 9, hrc: 30, censored: 'under' }] }] })), format: 'json', createdBy: 'test' });
    expect(bad.status).toBe('rejected');
  });
});
