// The usual caution travels with machine-readable verdicts and predictions: JSON answers of the
// analysis routes and webhook payloads; answers that judge nothing (lists of heats) carry none.
import { afterAll, beforeAll, describe, expect, test } from 'vitest';
import { sql } from 'drizzle-orm';
import { createTestApp, type TestApp } from '../helpers/testApp.ts';
import { BAND_8620H, importCertificates, syntheticHistory } from '../fixtures/analysisHistory.ts';
import { API_CAUTION, cautionFor } from '../../src/api/caution.ts';
import { raiseAlert } from '../../src/db/alerts.ts';
import { createSubscription } from '../../src/db/outbox.ts';
import { rowsOf } from '../../src/db/connection.ts';

let t: TestApp;
beforeAll(async () => {
  t = await createTestApp();
  await importCertificates(t.database.db, syntheticHistory({ seed: 51, mill: 'CAUTIONMILL', count: 40, start: '2023-01-02', prefix: 'CM' }).certificates);
  expect((await t.request('POST', '/api/v1/grades/8620H/bands', { effectiveFrom: '2020-01-01', distanceSystem: 'mm', points: BAND_8620H })).status).toBe(201);
}, 300_000);
afterAll(async () => t?.close());

describe('caution in API answers', () => {
  test('a capability answer and a heat review carry it; the heat list does not', async () => {
    const capability = await t.request('GET', '/api/v1/capability?grade=8620H&mill=CAUTIONMILL');
    expect(capability.status).toBe(200);
    expect(capability.body.caution).toBe(API_CAUTION);
    const heats = await t.request('GET', '/api/v1/heats?mill=CAUTIONMILL&limit=5');
    expect(heats.body.caution).toBeUndefined();
    const review = await t.request('GET', `/api/v1/heats/${heats.body.heats[4].id}/review`);
    expect(review.status).toBe(200);
    expect(review.body.caution).toBe(API_CAUTION);
  });

  test('an error answer is left as it is', async () => {
    const r = await t.request('GET', '/api/v1/capability?grade=NOPE');
    expect(r.status).toBeGreaterThanOrEqual(400);
    expect(r.body.caution).toBeUndefined();
  });

  test('the paths that judge or predict', () => {
    expect(cautionFor('/api/v1/heats/12/review')).toBe(true);
    expect(cautionFor('/api/v1/predict')).toBe(true);
    expect(cautionFor('/api/v1/heats/12')).toBe(false);
  });
});

describe('caution in webhook payloads', () => {
  test('an alert event carries it', async () => {
    await createSubscription(t.database.db, { url: 'http://127.0.0.1:9/all', events: ['*'] });
    await t.database.db.transaction((tx) => raiseAlert(tx, { rule: 'out_of_band', severity: 'warning', causeKey: 'caution:1', title: 'test', evidence: {} }));
    const [row] = rowsOf<{ payload: unknown }>(await t.database.db.execute(sql`select payload from outbox order by id desc limit 1`));
    const payload = (typeof row.payload === 'string' ? JSON.parse(row.payload) : row.payload) as { caution?: string; event: string };
    expect(payload.event).toBe('alert.raised');
    expect(payload.caution).toBe(API_CAUTION);
  });
});
