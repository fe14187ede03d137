// The curve-level drift rule through the real import pipeline: the same history sent 1, 3 and 25 heats
// per import, and in one import, raises the same alerts (fixed reference, statistic in time order), and
// the planted step is found. Synthetic heats from test/fixtures/analysisHistory.ts (known model).
import { afterAll, beforeAll, describe, expect, test } from 'vitest';
import { createTestApp, type TestApp } from '../helpers/testApp.ts';
import { BAND_8620H, importCertificates, syntheticHistory } from '../fixtures/analysisHistory.ts';
import { listAlerts, type AlertView } from '../../src/db/alerts.ts';
import { runImport } from '../../src/ingest/importPipeline.ts';
import { runIngestRules } from '../../src/alerts/rules/index.ts';
import type { CertificateInput } from '../../src/ingest/certificateSchema.ts';

let t: TestApp;
const STEP_AT = 160;
// A step of 2 HRC at every distance (TRUE_SIGMA 1.2 HRC plus the chemistry's scatter: about 1 SD) from heat 161 on.
const base = syntheticHistory({ seed: 41, mill: 'X', count: 230, start: '2022-01-03', everyDays: 2, prefix: 'H', shift: { from: STEP_AT, hrc: () => 2 } });
const batchings: Record<string, number> = { ONEBYONE: 1, THREES: 3, TWENTYFIVES: 25, HISTORY: 230 };

const asMill = (mill: string): CertificateInput[] => base.certificates.map((c) => ({ ...c, mill, heatNumber: `${mill.slice(0, 2)}${c.heatNumber}` }));

async function send(certificates: CertificateInput[], perImport: number) {
  for (let i = 0; i < certificates.length; i += perImport) {
    const report = await runImport(t.database.db, {
      bytes: new TextEncoder().encode(JSON.stringify({ certificates: certificates.slice(i, i + perImport) })),
      format: 'json',
      filename: `batch-${i}.json`,
      options: { createMissing: true },
      createdBy: 'test',
      afterWrite: runIngestRules,
    });
    expect(report.status).toBe('accepted');
  }
}

let alerts: AlertView[];
beforeAll(async () => {
  t = await createTestApp();
  await importCertificates(t.database.db, asMill('SETUP').slice(0, 1));
  expect((await t.request('POST', '/api/v1/grades/8620H/bands', { effectiveFrom: '2020-01-01', distanceSystem: 'mm', points: BAND_8620H })).status).toBe(201);
  for (const [mill, per] of Object.entries(batchings)) await send(asMill(mill), per);
  alerts = (await listAlerts(t.database.db, { limit: 10_000 })).alerts.filter((a) => a.rule.startsWith('curve_'));
}, 600_000);
afterAll(async () => t?.close());

const signature = (mill: string) =>
  alerts
    .filter((a) => a.mill === mill)
    .map((a) => `${a.causeKey.replace(/:mill:\d+:/, ':mill:*:').replace(/:from:../, ':from:')} @ ${a.heat?.heatNumber.slice(2)}`)
    .sort();

describe('curve-level drift alerts do not depend on batching', () => {
  test('1, 3 and 25 heats per import and one history import raise the same alerts (common practice: an alert belongs to the data, not to the delivery)', () => {
    const one = signature('ONEBYONE');
    expect(one.length).toBeGreaterThan(0);
    expect(signature('THREES')).toEqual(one);
    expect(signature('TWENTYFIVES')).toEqual(one);
    expect(signature('HISTORY')).toEqual(one);
  });

  test('the planted step is found as an upward level shift after it began, driven by named distances', () => {
    const up = alerts.filter((a) => a.mill === 'ONEBYONE' && a.causeKey.startsWith('curve_level_shift:high:'));
    expect(up).toHaveLength(1);
    const index = Number(up[0].heat!.heatNumber.slice(4)) - 1;
    expect(index).toBeGreaterThanOrEqual(STEP_AT);
    // Within 50 heats of the step (its size is about one SD; the benchmark measures the delay distribution).
    expect(index - STEP_AT).toBeLessThan(50);
    expect((up[0].evidence.driving as unknown[]).length).toBeGreaterThan(0);
    expect(up[0].evidence.reference).toMatchObject({ heats: 100, origin: { type: 'first_heats' } });
  });

  test('only the history import marks its alerts as found on loading history', () => {
    for (const a of alerts) expect(a.evidence.foundOnLoadingHistory).toBe(a.mill === 'HISTORY');
    for (const a of alerts.filter((x) => x.mill === 'HISTORY')) expect(a.title).toMatch(/^On loading history: /);
  });
});
