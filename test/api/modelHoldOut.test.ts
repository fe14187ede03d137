// Fitting the plant model with heats held out through the API: the answer scores them beside the
// cross-validated error (synthetic history of test/fixtures/analysisHistory.ts; invented mill).
import { afterAll, beforeAll, describe, expect, test } from 'vitest';
import { createTestApp, type TestApp } from '../helpers/testApp.ts';
import { importCertificates, syntheticHistory } from '../fixtures/analysisHistory.ts';

let t: TestApp;
const history = syntheticHistory({ seed: 61, mill: 'HOLDMILL', count: 90, start: '2023-01-02', everyDays: 3, prefix: 'HM' });
beforeAll(async () => {
  t = await createTestApp();
  await importCertificates(t.database.db, history.certificates);
}, 300_000);
afterAll(async () => t?.close());

describe('model fit with a held-out set', () => {
  test('the newest heats are held out and scored per distance and pooled', async () => {
    const cut = history.certificates[60].castDate as string;
    const r = await t.request('POST', '/api/v1/models/fit', { grade: '8620H', mill: 'HOLDMILL', holdOutFrom: cut });
    expect(r.status).toBe(201);
    expect(r.body.trainedTo < cut).toBe(true);
    expect(r.body.fits.heldOut).toMatchObject({ rule: `heats cast on or after ${cut}`, heats: 30 });
    for (const d of r.body.fits.distances) {
      expect(d.n).toBe(60);
      expect(d.heldOut.n).toBe(30);
      expect(d.heldOut.coverage95).toBeGreaterThanOrEqual(0);
      expect(d.heldOut.coverage95).toBeLessThanOrEqual(1);
    }
    expect(r.body.caution).toMatch(/do not replace end-quench testing/);
  });

  test('a hold-out that holds nothing is refused in words', async () => {
    const r = await t.request('POST', '/api/v1/models/fit', { grade: '8620H', mill: 'HOLDMILL', holdOutFrom: '2099-01-01' });
    expect(r.status).toBeGreaterThanOrEqual(400);
    expect(JSON.stringify(r.body)).toMatch(/no heat is held out/);
  });

  test('a mill’s own training window', async () => {
    const to = history.certificates[39].castDate as string;
    const r = await t.request('POST', '/api/v1/models/fit', { grade: '8620H', millWindows: [{ mill: 'HOLDMILL', to }] });
    expect(r.status).toBe(201);
    for (const d of r.body.fits.distances) expect(d.n).toBe(40);
    expect(r.body.trainedTo).toBe(to);
  });
});
