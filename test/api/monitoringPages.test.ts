// Pages and answers use the alert rules' monitoring settings, and a heat review never fails for want of
// chart history (issue-level behaviour; synthetic histories from test/fixtures/analysisHistory.ts).
import { afterAll, beforeAll, describe, expect, test } from 'vitest';
import { createTestApp, type TestApp } from '../helpers/testApp.ts';
import { BAND_8620H, importCertificates, syntheticHistory } from '../fixtures/analysisHistory.ts';

let t: TestApp;
const history = syntheticHistory({ seed: 31, mill: 'BRACKWELL', count: 60, start: '2021-01-04', prefix: 'B' });
// Three years after the last one: the only heat of the series in the two years before it.
const late = syntheticHistory({ seed: 32, mill: 'BRACKWELL', count: 1, start: '2025-06-02', prefix: 'L' });

beforeAll(async () => {
  t = await createTestApp();
  await importCertificates(t.database.db, [...history.certificates, ...late.certificates]);
  expect((await t.request('POST', '/api/v1/grades/8620H/bands', { effectiveFrom: '2020-01-01', distanceSystem: 'mm', points: BAND_8620H })).status).toBe(201);
  const frozen = await t.request('POST', '/api/v1/baselines', { grade: '8620H', mill: 'BRACKWELL', from: '2021-01-01', to: '2021-06-30', reason: 'first half-year, stable' });
  expect(frozen.status).toBe(201);
}, 300_000);
afterAll(async () => t?.close());

describe('heat review with a frozen baseline', () => {
  test('the first heat of the mill answers 200 with a note instead of 422', async () => {
    const heats = (await t.request('GET', '/api/v1/heats?mill=BRACKWELL&grade=8620H&limit=1000')).body.heats as Array<{ id: number; heatNumber: string }>;
    for (const number of ['B-0001', 'L-0001']) {
      const heat = heats.find((h) => h.heatNumber === number)!;
      const r = await t.request('GET', `/api/v1/heats/${heat.id}/review`);
      expect(r.status).toBe(200);
      expect(r.body.verdict).not.toBeNull();
      expect(r.body.notes.join(' ')).toMatch(/first heat/);
    }
    const page = await t.request('GET', `/heats/${heats.find((h) => h.heatNumber === 'L-0001')!.id}`);
    expect(page.status).toBe(200);
  });
});

describe('pages show what the drift alerts judge', () => {
  test('Trends shows the whole-curve scheme first, its reference and lag-1 autocorrelation, and marks per-distance charts as explanation', async () => {
    const r = await t.request('GET', '/trends?grade=8620H&mill=BRACKWELL&distance=9');
    expect(r.status).toBe(200);
    const html = String(r.body);
    expect(html).toMatch(/Whole curve: what the drift alerts judge/);
    expect(html).toMatch(/Lag-1 autocorrelation of the curve level over the reference/);
    expect(html).toMatch(/frozen baseline #/);
    expect(html).toMatch(/per-distance rules are off for this grade, so a signal drawn here is a looser view/);
    expect(html).not.toMatch(/\bN[1-8]\b/);
  });

  test('the monitoring settings page shows the defaults and saves a new version from its form', async () => {
    const page = await t.request('GET', '/monitoring?grade=8620H');
    expect(page.status).toBe(200);
    expect(String(page.body)).toMatch(/deployment’s defaults are in force/);
    const form = new URLSearchParams({ grade: '8620H', 'curve.enabled': 'on', 'curve.yearsPerFalseAlarm': '4', 'curve.lambda': '0.1', 'curve.referenceHeats': '100', 'curve.minReferenceHeats': '30', 'curve.guarantee': '0.9', 'curve.autocorrelationThreshold': '0.2', 'curve.heatsPerYear': '', reason: 'four-year budget' });
    const saved = await t.request('POST', '/monitoring', form.toString(), { 'content-type': 'application/x-www-form-urlencoded', origin: 'http://localhost' });
    expect(saved.status).toBe(303);
    const config = await t.request('GET', '/api/v1/monitoring/8620H');
    expect(config.body.version).toMatchObject({ version: 1, reason: 'four-year budget' });
    expect(config.body.inForce.curve).toMatchObject({ yearsPerFalseAlarm: 4, heatsPerYear: null, enabled: true });
    expect(config.body.inForce.ewma.enabled).toBe(false);
  });
});
