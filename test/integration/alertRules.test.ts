// The statistical and certificate alert rules, run inside the ingest transaction through the real import
// pipeline, on synthetic histories (test/fixtures/analysisHistory.ts: a known linear chemistry model with
// AR(1) errors between distances; invented mills, the published 8620H band of SAE J1268). Each test uses
// its own mill, so its series starts empty. Runs on PGlite, or on PostgreSQL with TEST_DATABASE_URL.
import { afterAll, beforeAll, describe, expect, test } from 'vitest';
import { sql } from 'drizzle-orm';
import { rowsOf } from '../../src/db/connection.ts';
import { addBandVersion, upsertGrade } from '../../src/db/referenceData.ts';
import { listAlerts, resolveAlert, type AlertView } from '../../src/db/alerts.ts';
import { runImport, type ImportReport } from '../../src/ingest/importPipeline.ts';
import type { CertificateInput } from '../../src/ingest/certificateSchema.ts';
import { ingestRules, runIngestRules } from '../../src/alerts/rules/index.ts';
import { alertSettings, AlertSettingsError, deploymentAlertSettings, type AlertSettingsOverride } from '../../src/alerts/rules/settings.ts';
import { BAND_8620H, DISTANCES_MM, syntheticHistory, addDays } from '../fixtures/analysisHistory.ts';
import { createTestDatabase, type TestDatabase } from '../helpers/testDatabase.ts';

let database: TestDatabase;

beforeAll(async () => {
  database = await createTestDatabase();
  await upsertGrade(database.db, { code: '8620H', distanceSystem: 'mm', chemistryLimits: [] });
  await addBandVersion(database.db, '8620H', {
    effectiveFrom: '2020-01-01',
    status: 'active',
    kind: 'standard',
    points: BAND_8620H.map((p) => ({ distanceMm: p.at, label: `${p.at} mm`, minHrc: p.min, maxHrc: p.max })),
  });
}, 120_000);
afterAll(async () => database?.close());

let documents = 0;
/** Imports certificates with the given rule settings in the import's own transaction. */
async function ingest(certificates: readonly CertificateInput[], override: AlertSettingsOverride = {}): Promise<ImportReport> {
  const rules = ingestRules(alertSettings(override));
  const report = await runImport(database.db, {
    // A fresh document each time (the filename is not part of the bytes; the counter is), so a re-import is
    // judged by what it writes, not refused as the same document.
    bytes: new TextEncoder().encode(JSON.stringify({ certificates, note: `document ${++documents}` })),
    format: 'json',
    options: { createMissing: true },
    createdBy: 'test',
    afterWrite: (tx, written) => runIngestRules(tx, written, rules),
  });
  expect(report.status).toBe('accepted');
  return report;
}

async function alertsOf(mill: string, rule?: string): Promise<AlertView[]> {
  return (await listAlerts(database.db, { mill, rule, limit: 1000 })).alerts;
}

/** Alerts raised by one step: compares the mill's alert ids before and after. */
async function raisedBy(mill: string, step: () => Promise<unknown>): Promise<AlertView[]> {
  const before = new Set((await alertsOf(mill)).map((a) => a.id));
  await step();
  return (await alertsOf(mill)).filter((a) => !before.has(a.id));
}

const history = (mill: string, count: number, seed: number, extra: Partial<Parameters<typeof syntheticHistory>[0]> = {}) =>
  syntheticHistory({ seed, mill, count, start: '2024-01-02', everyDays: 2, prefix: mill.slice(0, 3), ...extra }).certificates;

/** A certificate of the mill cast after its history, with the given readings (one per DISTANCES_MM). */
function lot(base: CertificateInput, heatNumber: string, castDate: string, hrc: number[]): CertificateInput {
  return {
    ...base,
    heatNumber,
    castDate,
    tests: [{ ...base.tests[0], readings: DISTANCES_MM.map((at, j) => ({ at, hrc: hrc[j] })) }],
  };
}

const countOf = (alerts: AlertView[], rule: string) => alerts.filter((a) => a.rule === rule).length;

describe(`alert rules in the ingest transaction (${process.env.TEST_DATABASE_URL ? 'postgres' : 'test database'})`, () => {
  test('a lot outside the band raises one out-of-band alert; importing it again raises nothing, even after resolving', async () => {
    const past = history('OOBMILL', 60, 11);
    await ingest(past);
    // 8620H (SAE J1268) maxima: 32 HRC at 11 mm, 30 at 13 mm, 29 at 15 mm; the readings below exceed them.
    const bad = lot(past[59], 'OOB-9001', addDays(past[59].castDate, 2), [45, 43, 38, 33, 30, 33, 31, 30]);
    const raised = await raisedBy('OOBMILL', () => ingest([bad]));
    expect(countOf(raised, 'out_of_band')).toBe(1);
    const alert = raised.find((a) => a.rule === 'out_of_band')!;
    expect(alert.heat?.heatNumber).toBe('OOB-9001');
    expect(await raisedBy('OOBMILL', () => ingest([bad]))).toEqual([]);
    await resolveAlert(database.db, alert.id, { by: 'test', note: 'concession' });
    expect(await raisedBy('OOBMILL', () => ingest([bad]))).toEqual([]);
  });

  test('a lot beyond 3 sigma fires Nelson rule 1 once (with rules 1, 2, 3, 5 on); re-imports raise nothing', async () => {
    const settings: AlertSettingsOverride = { nelson: { enabled: true, rules: [1, 2, 3, 5] } };
    const past = history('NELSONMILL', 80, 12);
    await ingest(past, settings);
    // 11 mm has no band minimum in 8620H (SAE J1268); 17 HRC is about 10 HRC under the series' mean of ~27.
    const low = lot(past[79], 'NEL-9001', addDays(past[79].castDate, 2), [45, 43, 38, 33, 29, 17, 16, 15]);
    const raised = await raisedBy('NELSONMILL', () => ingest([low], settings));
    expect(countOf(raised, 'nelson_rule_1')).toBe(1);
    const alert = raised.find((a) => a.rule === 'nelson_rule_1')!;
    expect(alert.heat?.heatNumber).toBe('NEL-9001');
    expect(alert.severity).toBe('warning');
    const at11 = (alert.evidence.distances as Array<{ distanceMm: number; firing: Array<{ hrc: number }>; limits: { centreHrc: number; sigmaHrc: number; from: { type: string } } }>).find((d) => d.distanceMm === 11)!;
    expect(at11.firing.map((f) => f.hrc)).toEqual([17]);
    // Nelson (1984) rule 1: beyond 3 sigma of the centre line, here the phase I limits of the history.
    expect((17 - at11.limits.centreHrc) / at11.limits.sigmaHrc).toBeLessThan(-3);
    expect(at11.limits.from.type).toBe('phase_one_on_window');
    expect(await raisedBy('NELSONMILL', () => ingest([low], settings))).toEqual([]);
    await resolveAlert(database.db, alert.id, { by: 'test' });
    // History already seen does not raise again, even once its alert is resolved.
    expect(await raisedBy('NELSONMILL', () => ingest([low], settings))).toEqual([]);
  });

  test('a certificate copying an earlier heat raises one copied-certificate alert naming it; re-imports raise nothing', async () => {
    const past = history('COPYMILL', 40, 13);
    await ingest(past);
    const source = past[20];
    const copy: CertificateInput = { ...source, heatNumber: 'CPY-9001', castDate: addDays(past[39].castDate, 3), certificateNumber: 'CPY-C-1' };
    const raised = await raisedBy('COPYMILL', () => ingest([copy]));
    expect(countOf(raised, 'copied_certificate')).toBe(1);
    const alert = raised.find((a) => a.rule === 'copied_certificate')!;
    expect(alert).toMatchObject({ severity: 'critical', heat: { heatNumber: 'CPY-9001' } });
    expect((alert.evidence.matches as Array<{ heatNumber: string; kind: string }>).map((m) => [m.heatNumber, m.kind]).sort()).toEqual([
      [source.heatNumber, 'chemistry_exact'],
      [source.heatNumber, 'curve_exact'],
    ]);
    expect(await raisedBy('COPYMILL', () => ingest([copy]))).toEqual([]);
  });

  test('a copy and its source arriving in the same import raise one alert, on the later heat', async () => {
    const past = history('PAIRMILL', 30, 14);
    const source = past[29];
    const copy: CertificateInput = { ...source, heatNumber: 'PAIR-9001', castDate: addDays(source.castDate, 5), certificateNumber: 'PAIR-C-1' };
    const raised = await raisedBy('PAIRMILL', () => ingest([...past, copy]));
    expect(raised.filter((a) => a.rule === 'copied_certificate').map((a) => a.heat?.heatNumber)).toEqual(['PAIR-9001']);
  });

  // The per-distance EWMA and CUSUM rules are off by default (the curve-level scheme replaces them) and
  // can be switched on per deployment: these tests switch them on.
  const perDistance: AlertSettingsOverride = { ewma: { enabled: true }, cusum: { enabled: true } };

  test('a drift of 1.5 sigma raises one EWMA and one CUSUM alert for the series (when switched on), also when it arrives a few heats per import', async () => {
    const draws = syntheticHistory({ seed: 15, mill: 'DRIFTMILL', count: 160, start: '2024-01-02', everyDays: 2, prefix: 'DRF', shift: { from: 100, hrc: () => 3 } });
    await ingest(draws.certificates.slice(0, 100), perDistance);
    // 5 heats per import: EWMA and CUSUM carry the history into each import's new points.
    const raised = await raisedBy('DRIFTMILL', async () => {
      for (let i = 100; i < 160; i += 5) await ingest(draws.certificates.slice(i, i + 5), perDistance);
    });
    // The curve-level rule (on by default) finds the same drift as one upward level shift after it began.
    const level = raised.filter((a) => a.rule === 'curve_level_shift');
    expect(level.map((a) => a.causeKey.split(':mill:')[0])).toEqual(['curve_level_shift:high']);
    expect(Number(level[0].heat!.heatNumber.slice(4))).toBeGreaterThan(100);
    // One alert per rule and side for the series, however many imports and distances saw the signal.
    const ewma = raised.filter((a) => a.rule === 'ewma_signal');
    const cusum = raised.filter((a) => a.rule === 'cusum_signal');
    expect(ewma).toHaveLength(1);
    expect(cusum).toHaveLength(1);
    expect(ewma[0].causeKey).toMatch(/^ewma_signal:high:/);
    expect(cusum[0].causeKey).toMatch(/^cusum_signal:high:/);
    // The shift was applied from heat 101 on: no signal may name an earlier heat.
    for (const a of [...ewma, ...cusum]) {
      for (const h of a.evidence.heats as string[]) expect(Number(h.slice(4))).toBeGreaterThan(100);
      expect((a.evidence.distancesMm as number[]).length).toBeGreaterThanOrEqual(2);
      // Heats are listed in time order (the fixture casts heat n+1 two days after heat n), so the title names the first that fired.
      const numbers = (a.evidence.heats as string[]).map((h) => Number(h.slice(4)));
      expect(numbers).toEqual([...numbers].sort((x, y) => x - y));
      expect(a.title).toContain(`heat ${(a.evidence.heats as string[])[0]}`);
    }
  });

  test('with a cause per distance the same drift gives one alert per distance that fired', async () => {
    const draws = syntheticHistory({ seed: 16, mill: 'PERDMILL', count: 140, start: '2024-01-02', everyDays: 2, prefix: 'PRD', shift: { from: 100, hrc: (j) => (j === 5 ? 4 : 0) } });
    await ingest(draws.certificates.slice(0, 100), { ...perDistance, causePerDistance: true });
    const raised = await raisedBy('PERDMILL', () => ingest(draws.certificates.slice(100), { ...perDistance, causePerDistance: true }));
    const ewma = raised.filter((a) => a.rule === 'ewma_signal');
    expect(ewma.map((a) => a.distanceMm)).toContain(11);
    expect(new Set(ewma.map((a) => a.causeKey)).size).toBe(ewma.length);
    for (const a of ewma) expect(a.causeKey).toContain(`:mm:${a.distanceMm}:`);
  });

  test('a curve unusual in shape raises a T² alert (when switched on) naming the distances that drive it', async () => {
    const past = history('SHAPEMILL', 100, 17);
    await ingest(past, { t2: { enabled: true } });
    // A typical curve with 5 mm raised 4 HRC and 7 mm lowered 4 HRC: each reading within ~2 sigma of
    // its own series, but the two distances move together in the model (AR(1), rho 0.6, and chemistry).
    const base = past[99].tests[0].readings.map((r) => r.hrc);
    const odd = base.map((v, j) => (j === 2 ? v + 4 : j === 3 ? v - 4 : v));
    const raised = await raisedBy('SHAPEMILL', () => ingest([lot(past[99], 'SHP-9001', addDays(past[99].castDate, 2), odd)], { t2: { enabled: true } }));
    // The curve-level shape statistic (on by default) sees the same curve.
    expect(raised.filter((a) => a.rule === 'curve_shape_change').map((a) => a.heat?.heatNumber)).toEqual(['SHP-9001']);
    expect(countOf(raised, 't2_signal')).toBe(1);
    const alert = raised.find((a) => a.rule === 't2_signal')!;
    expect(alert.heat?.heatNumber).toBe('SHP-9001');
    const driving = alert.evidence.drivingDistancesMm as number[];
    expect(driving).toContain(5);
    expect(driving).toContain(7);
    expect(alert.title).toMatch(/driven by .*(5 mm|7 mm)/);
    const limits = alert.evidence.limits as { ucl: number; referenceCurves: number };
    expect(limits.referenceCurves).toBe(100);
    expect((alert.evidence.signalled as Array<{ t2: number }>)[0].t2).toBeGreaterThan(limits.ucl);
  });

  test('the Ppk of the last 50 heats falling below 1.0 raises one capability alert', async () => {
    // An invented grade with a wide band (12 HRC either side of the fixture's mean curve), so the history is
    // capable; then 50 heats 8 HRC higher at 9 mm bring the mean within 4 HRC of the maximum.
    const mean = [45, 43, 38, 33, 29, 27, 25, 24];
    await upsertGrade(database.db, { code: 'WIDE-T', distanceSystem: 'mm', chemistryLimits: [] });
    await addBandVersion(database.db, 'WIDE-T', {
      effectiveFrom: '2020-01-01',
      status: 'active',
      kind: 'standard',
      points: DISTANCES_MM.map((d, j) => ({ distanceMm: d, label: `${d} mm`, minHrc: mean[j] - 12, maxHrc: mean[j] + 12 })),
    });
    const draws = syntheticHistory({ seed: 18, mill: 'PPKMILL', grade: 'WIDE-T', count: 110, start: '2024-01-02', everyDays: 2, prefix: 'PPK', shift: { from: 60, hrc: (j) => (j === 4 ? 8 : 0) } });
    const before = await raisedBy('PPKMILL', () => ingest(draws.certificates.slice(0, 60)));
    expect(countOf(before, 'capability_drop')).toBe(0);
    const raised = await raisedBy('PPKMILL', () => ingest(draws.certificates.slice(60)));
    expect(countOf(raised, 'capability_drop')).toBe(1);
    const alert = raised.find((a) => a.rule === 'capability_drop')!;
    const at9 = (alert.evidence.distances as Array<{ distanceMm: number; ppk: number; ppkInterval: { upper: number } }>).find((d) => d.distanceMm === 9)!;
    // Ppk = (USL − mean) / 3s with the n − 1 SD (ISO 22514-2; NIST/SEMATECH e-Handbook §6.1.6), computed
    // here directly from the 50 readings at 9 mm that were imported.
    const xs = draws.certificates.slice(60).map((c) => c.tests[0].readings[4].hrc);
    const m = xs.reduce((a, b) => a + b, 0) / xs.length;
    const s = Math.sqrt(xs.reduce((a, b) => a + (b - m) ** 2, 0) / (xs.length - 1));
    expect(at9.ppk).toBeCloseTo(Math.min((mean[4] + 12 - m) / (3 * s), (m - (mean[4] - 12)) / (3 * s)), 10);
    // Judged on the one-sided 95 % upper bound (Bissell 1990), which must itself be below the level.
    expect(at9.ppkInterval.upper).toBeLessThan(1);
    expect(alert.distanceMm).toBe(9);
    expect(await raisedBy('PPKMILL', () => ingest(draws.certificates.slice(60)))).toEqual([]);
  });

  test('a reading harder than martensite of its carbon, and a curve far from its chemistry, raise their certificate alerts', async () => {
    const past = history('CHECKMILL', 60, 19);
    await ingest(past);
    const last = past[59];
    // ASTM A255 initial hardness for 0.20 % C is about 44 HRC (from memory); 55 HRC at 1.5 mm is far above it.
    const hard: CertificateInput = { ...lot(last, 'CHK-9001', addDays(last.castDate, 2), [55, 43, 38, 33, 29, 27, 25, 24]), chemistry: { ...last.chemistry, C: 0.2 } };
    // The same chemistry as a typical heat but the curve 12 HRC low from 5 mm on: |z| well above 4 there.
    const soft = lot(last, 'CHK-9002', addDays(last.castDate, 3), last.tests[0].readings.map((r, j) => (j >= 2 ? r.hrc - 12 : r.hrc)));
    const raised = await raisedBy('CHECKMILL', () => ingest([hard, soft]));
    expect(raised.filter((a) => a.rule === 'impossible_j1').map((a) => a.heat?.heatNumber)).toEqual(['CHK-9001']);
    const j1 = raised.find((a) => a.rule === 'impossible_j1')!;
    expect(j1.severity).toBe('critical');
    expect((j1.evidence.values as { hardestHrc: number; ceilingHrc: number }).hardestHrc).toBe(55);
    expect(raised.filter((a) => a.rule === 'inconsistent_with_chemistry').map((a) => a.heat?.heatNumber)).toContain('CHK-9002');
    const incon = raised.find((a) => a.rule === 'inconsistent_with_chemistry' && a.heat?.heatNumber === 'CHK-9002')!;
    const rows = incon.evidence.rows as Array<{ z: number; distanceMm: number }>;
    expect(rows.filter((r) => Math.abs(r.z) > 4).length).toBeGreaterThanOrEqual(2);
    expect(await raisedBy('CHECKMILL', () => ingest([hard, soft]))).toEqual([]);
  });

  test('settings: defaults can be overridden per deployment, and nonsense is refused in plain words', () => {
    expect(deploymentAlertSettings({}).nelson.enabled).toBe(false);
    expect(deploymentAlertSettings({ ENDQUENCH_ALERT_SETTINGS: '{"nelson":{"enabled":true}}' }).nelson).toEqual({ enabled: true, rules: [1, 2, 3, 5] });
    expect(() => deploymentAlertSettings({ ENDQUENCH_ALERT_SETTINGS: '{nope' })).toThrow(AlertSettingsError);
    expect(() => alertSettings({ ewma: { lambda: 0 } })).toThrow(/lambda/);
    expect(() => alertSettings({ reference: { minHeats: 5 } })).toThrow(/minHeats/);
  });

  test('the rules write nothing when the import writes nothing', async () => {
    const [{ n: before }] = rowsOf<{ n: number }>(await database.db.execute(sql`select count(*)::int as n from alerts`));
    const past = history('OOBMILL', 60, 11);
    await ingest(past);
    const [{ n: after }] = rowsOf<{ n: number }>(await database.db.execute(sql`select count(*)::int as n from alerts`));
    expect(after).toBe(before);
  });
});
