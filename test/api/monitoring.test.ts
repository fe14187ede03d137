// The drift-monitoring configuration per grade (versioned, stored) and the series view over HTTP; the
// alerts follow the stored configuration. Synthetic histories from test/fixtures/analysisHistory.ts.
import { afterAll, beforeAll, describe, expect, test } from 'vitest';
import { createTestApp, type TestApp } from '../helpers/testApp.ts';
import { BAND_8620H, importCertificates, syntheticHistory } from '../fixtures/analysisHistory.ts';
import { runImport } from '../../src/ingest/importPipeline.ts';
import { runIngestRules } from '../../src/alerts/rules/index.ts';
import { listAlerts } from '../../src/db/alerts.ts';
import type { CertificateInput } from '../../src/ingest/certificateSchema.ts';

let t: TestApp;
const steady = syntheticHistory({ seed: 51, mill: 'ORMSBY', count: 160, start: '2022-01-03', everyDays: 2, prefix: 'O' });

async function ingest(certificates: CertificateInput[]) {
  const report = await runImport(t.database.db, {
    bytes: new TextEncoder().encode(JSON.stringify({ certificates })),
    format: 'json',
    filename: 'h.json',
    options: { createMissing: true },
    createdBy: 'test',
    afterWrite: runIngestRules,
  });
  expect(report.status).toBe('accepted');
}

beforeAll(async () => {
  t = await createTestApp();
  await importCertificates(t.database.db, steady.certificates.slice(0, 1));
  expect((await t.request('POST', '/api/v1/grades/8620H/bands', { effectiveFrom: '2020-01-01', distanceSystem: 'mm', points: BAND_8620H })).status).toBe(201);
  await importCertificates(t.database.db, steady.certificates.slice(1));
}, 300_000);
afterAll(async () => t?.close());

describe('monitoring configuration per grade', () => {
  test('without a stored version the deployment defaults are in force', async () => {
    const r = await t.request('GET', '/api/v1/monitoring/8620H');
    expect(r.status).toBe(200);
    expect(r.body.version).toBeNull();
    expect(r.body.inForce.curve).toMatchObject({ enabled: true, referenceHeats: 100, yearsPerFalseAlarm: 3 });
    expect((await t.request('GET', '/api/v1/monitoring/NOPE')).status).toBe(404);
  });

  test('unusable values and unknown parts are refused in plain words', async () => {
    const bad = await t.request('PUT', '/api/v1/monitoring/8620H', { settings: { curve: { lambda: 0 } }, reason: 'try' });
    expect(bad.status).toBe(400);
    expect(JSON.stringify(bad.body)).toMatch(/curve.lambda must be in \(0, 1\]/);
    expect((await t.request('PUT', '/api/v1/monitoring/8620H', { settings: { capability: { minPpk: 2 } }, reason: 'x' })).status).toBe(400);
    expect((await t.request('PUT', '/api/v1/monitoring/8620H', { settings: { curve: { yearsPerFalseAlarm: 5 } } })).status).toBe(400);
  });

  test('each save is a new version with who and why; the series view designs for it', async () => {
    const one = await t.request('PUT', '/api/v1/monitoring/8620H', { settings: { curve: { yearsPerFalseAlarm: 5 } }, reason: 'fewer false alarms for a stable grade' });
    expect(one.status).toBe(200);
    expect(one.body.version).toMatchObject({ version: 1, reason: 'fewer false alarms for a stable grade', createdBy: 'local' });
    expect(one.body.inForce.curve.yearsPerFalseAlarm).toBe(5);
    const view = await t.request('GET', '/api/v1/monitoring/8620H/series?mill=ORMSBY');
    expect(view.status).toBe(200);
    expect(view.body.status).toBe('monitoring');
    // One false alarm in five years at the reference's heat rate (365.25/2 heats a year: one heat every
    // two days): ARL = heats a year × years (Montgomery, Introduction to SQC, §5.3.3).
    expect(view.body.reference.arl.scheme).toBeCloseTo(view.body.reference.heatsPerYear * 5, 0);
    expect(typeof view.body.reference.lag1Autocorrelation).toBe('number');
    expect(view.body.reference.level.L).toBeGreaterThan(view.body.reference.level.knownParameterL);
    expect(view.body.points).toHaveLength(60);
    const two = await t.request('PUT', '/api/v1/monitoring/8620H', { settings: { curve: { yearsPerFalseAlarm: 3 } }, reason: 'back to the plant default' });
    expect(two.body.version.version).toBe(2);
    expect(two.body.versions.map((v: { version: number }) => v.version)).toEqual([2, 1]);
  });

  test('the alerts follow the stored configuration of the grade', async () => {
    const shifted = (mill: string, seed: number) => syntheticHistory({ seed, mill, count: 160, start: '2022-01-03', everyDays: 2, prefix: mill.slice(0, 3), shift: { from: 110, hrc: () => 4 } }).certificates;
    await t.request('PUT', '/api/v1/monitoring/8620H', { settings: { curve: { enabled: false } }, reason: 'paused while the band is revised' });
    await ingest(shifted('PAUSED', 52));
    await t.request('PUT', '/api/v1/monitoring/8620H', { settings: { curve: { enabled: true } }, reason: 'watching again' });
    await ingest(shifted('WATCHED', 52));
    const curveAlerts = (await listAlerts(t.database.db, { limit: 1000 })).alerts.filter((a) => a.rule === 'curve_level_shift');
    expect(curveAlerts.filter((a) => a.mill === 'PAUSED')).toHaveLength(0);
    expect(curveAlerts.filter((a) => a.mill === 'WATCHED').length).toBeGreaterThan(0);
  });
});
