// Alerts in the database and over the API: one open alert per cause, raised in the caller's
// transaction together with its outbox rows; acknowledge and resolve with who, when and a note; and the
// out-of-band rule run inside the ingest transaction.
import { afterAll, beforeAll, describe, expect, test } from 'vitest';
import { sql } from 'drizzle-orm';
import { createApp } from '../../src/api/app.ts';
import { createLogger } from '../../src/logger.ts';
import { rowsOf } from '../../src/db/connection.ts';
import { raiseAlert, type RaiseAlertInput } from '../../src/db/alerts.ts';
import { createSubscription } from '../../src/db/outbox.ts';
import { outOfBandRule } from '../../src/alerts/rules/outOfBand.ts';
import { createTestDatabase, type TestDatabase } from '../helpers/testDatabase.ts';
import { certificate } from '../fixtures/certificates.ts';

let database: TestDatabase;
let app: ReturnType<typeof createApp>;

async function call(method: string, path: string, body?: unknown) {
  const init: RequestInit = { method, headers: body === undefined ? {} : { 'content-type': 'application/json' } };
  if (body !== undefined) init.body = JSON.stringify(body);
  const response = await app.request(path, init);
  const text = await response.text();
  return { status: response.status, body: text ? JSON.parse(text) : null };
}

const count = async (query: ReturnType<typeof sql>) => rowsOf<{ n: number }>(await database.db.execute(query))[0].n;

let brennwaldId = 0;
let gradeId = 0;
const alertInput = (causeKey: string, extra: Partial<RaiseAlertInput> = {}): RaiseAlertInput => ({
  rule: 'manual_check',
  severity: 'warning',
  causeKey,
  title: `check ${causeKey}`,
  evidence: { note: 'raised by the test' },
  millId: brennwaldId,
  gradeId,
  ...extra,
});

beforeAll(async () => {
  database = await createTestDatabase();
  app = createApp({ database, logger: createLogger('silent'), access: { afterWrite: [outOfBandRule] } });
  await call('POST', '/api/v1/mills', { code: 'BRENNWALD', name: 'Brennwald Stahl (invented)' });
  await call('POST', '/api/v1/mills', { code: 'OSTRAVEK', name: 'Ostravek Ocel (invented)' });
  await call('POST', '/api/v1/grades', { code: '8620H', distanceSystem: 'mm' });
  await call('POST', '/api/v1/grades', { code: '4140H', distanceSystem: 'mm' });
  brennwaldId = rowsOf<{ id: number }>(await database.db.execute(sql`select id from mills where code = 'BRENNWALD'`))[0].id;
  gradeId = rowsOf<{ id: number }>(await database.db.execute(sql`select id from grades where code = '8620H'`))[0].id;
});
afterAll(async () => database?.close());

describe('raising', () => {
  test('the same cause gives one open alert, and its event is queued once per matching active subscription', async () => {
    const all = await createSubscription(database.db, { url: 'http://127.0.0.1:9/all', events: ['*'] });
    const raised = await createSubscription(database.db, { url: 'http://127.0.0.1:9/raised', events: ['alert.raised'] });
    await createSubscription(database.db, { url: 'http://127.0.0.1:9/resolved', events: ['alert.resolved'] });
    const first = await database.db.transaction((tx) => raiseAlert(tx, alertInput('dup-1')));
    const second = await database.db.transaction((tx) => raiseAlert(tx, alertInput('dup-1', { title: 'another title' })));
    expect(first.created).toBe(true);
    expect(first.deliveries).toBe(2);
    expect(second.created).toBe(false);
    expect(second.deliveries).toBe(0);
    expect(second.alert.id).toBe(first.alert.id);
    expect(second.alert.title).toBe('check dup-1');
    expect(await count(sql`select count(*)::int as n from alerts where cause_key = 'dup-1'`)).toBe(1);
    const queued = rowsOf<{ subscription_id: number; idempotency_key: string }>(
      await database.db.execute(sql`select subscription_id, idempotency_key from outbox where idempotency_key = ${`alert.raised:${first.alert.id}`} order by subscription_id`),
    );
    expect(queued.map((q) => q.subscription_id)).toEqual([all.subscription.id, raised.subscription.id]);
    await database.db.execute(sql`update webhook_subscriptions set active = false`);
  });

  test('two transactions raising the same cause at once still give one alert', async () => {
    const results = await Promise.all([0, 1, 2].map(() => database.db.transaction((tx) => raiseAlert(tx, alertInput('race-1')))));
    expect(results.filter((r) => r.created)).toHaveLength(1);
    expect(new Set(results.map((r) => r.alert.id)).size).toBe(1);
    expect(await count(sql`select count(*)::int as n from alerts where cause_key = 'race-1'`)).toBe(1);
  });

  test('an alert raised in a transaction that rolls back leaves neither alert nor outbox row', async () => {
    await createSubscription(database.db, { url: 'http://127.0.0.1:9/rollback', events: ['*'] });
    const outboxBefore = await count(sql`select count(*)::int as n from outbox`);
    await expect(
      database.db.transaction(async (tx) => {
        const r = await raiseAlert(tx, alertInput('rollback-1'));
        expect(r.deliveries).toBe(1);
        throw new Error('the ingest failed after the alert');
      }),
    ).rejects.toThrow('the ingest failed');
    expect(await count(sql`select count(*)::int as n from alerts where cause_key = 'rollback-1'`)).toBe(0);
    expect(await count(sql`select count(*)::int as n from outbox`)).toBe(outboxBefore);
    await database.db.execute(sql`update webhook_subscriptions set active = false`);
  });

  test('the database itself refuses a second unresolved alert for a cause', async () => {
    await expect(
      database.db.execute(sql`insert into alerts (rule, severity, cause_key, title, evidence) values ('x', 'info', 'dup-1', 't', '{}'::jsonb)`),
    ).rejects.toThrow();
  });
});

describe('API', () => {
  test('filters by status, mill, grade and rule', async () => {
    await database.db.transaction(async (tx) => {
      await raiseAlert(tx, alertInput('filter-a', { rule: 'rule_a', severity: 'critical' }));
      const ostravek = rowsOf<{ id: number }>(await tx.execute(sql`select id from mills where code = 'OSTRAVEK'`))[0].id;
      await raiseAlert(tx, alertInput('filter-b', { rule: 'rule_b', millId: ostravek, gradeId: null }));
    });
    const byRule = await call('GET', '/api/v1/alerts?rule=rule_a');
    expect(byRule.status).toBe(200);
    expect(byRule.body.total).toBe(1);
    expect(byRule.body.alerts[0]).toMatchObject({ causeKey: 'filter-a', severity: 'critical', mill: 'BRENNWALD', grade: '8620H', status: 'open' });
    const byMill = await call('GET', '/api/v1/alerts?mill=OSTRAVEK');
    expect(byMill.body.alerts.map((a: { causeKey: string }) => a.causeKey)).toEqual(['filter-b']);
    const byGrade = await call('GET', '/api/v1/alerts?grade=8620H&status=open');
    expect(byGrade.body.alerts.map((a: { causeKey: string }) => a.causeKey)).toContain('filter-a');
    expect(byGrade.body.alerts.map((a: { causeKey: string }) => a.causeKey)).not.toContain('filter-b');
    expect((await call('GET', '/api/v1/alerts?status=closed')).status).toBe(400);
  });

  test('acknowledge then resolve, each with who, when and a note; wrong transitions are 409', async () => {
    const { alert } = await database.db.transaction((tx) => raiseAlert(tx, alertInput('life-1')));
    const sub = await createSubscription(database.db, { url: 'http://127.0.0.1:9/life', events: ['alert.acknowledged', 'alert.resolved'] });
    const ack = await call('POST', `/api/v1/alerts/${alert.id}/ack`, { note: 'mill asked for the retained sample' });
    expect(ack.status).toBe(200);
    expect(ack.body.status).toBe('acknowledged');
    expect(ack.body.acknowledged).toMatchObject({ by: 'local', note: 'mill asked for the retained sample' });
    expect(Math.abs(Date.parse(ack.body.acknowledged.at) - Date.now())).toBeLessThan(60_000);
    expect((await call('POST', `/api/v1/alerts/${alert.id}/ack`, {})).status).toBe(409);
    const resolved = await call('POST', `/api/v1/alerts/${alert.id}/resolve`);
    expect(resolved.status).toBe(200);
    expect(resolved.body).toMatchObject({ status: 'resolved', resolved: { by: 'local', note: null } });
    expect(resolved.body.acknowledged.note).toBe('mill asked for the retained sample');
    const again = await call('POST', `/api/v1/alerts/${alert.id}/resolve`, { note: 'twice' });
    expect(again.status).toBe(409);
    expect(again.body.error.code).toBe('alert_state');
    expect((await call('POST', `/api/v1/alerts/${alert.id}/ack`)).status).toBe(409);
    expect((await call('POST', '/api/v1/alerts/999999/ack')).status).toBe(404);
    expect((await call('GET', `/api/v1/alerts/${alert.id}`)).body.status).toBe('resolved');
    const events = rowsOf<{ event_type: string }>(await database.db.execute(sql`select event_type from outbox where subscription_id = ${sub.subscription.id} order by id`));
    expect(events.map((e) => e.event_type)).toEqual(['alert.acknowledged', 'alert.resolved']);
    await database.db.execute(sql`update webhook_subscriptions set active = false`);
    // Once resolved, the same cause may raise a new alert.
    const later = await database.db.transaction((tx) => raiseAlert(tx, alertInput('life-1')));
    expect(later.created).toBe(true);
    expect(later.alert.id).not.toBe(alert.id);
  });
});

describe('out-of-band rule in the ingest transaction', () => {
  // An invented band for the test (not a published one): at 9 mm the fixture's 29 HRC is 1 HRC under
  // the minimum of 30; at 1.5 mm its 45 HRC is inside 40..48.
  beforeAll(async () => {
    const band = await call('POST', '/api/v1/grades/8620H/bands', {
      effectiveFrom: '2020-01-01',
      distanceSystem: 'mm',
      points: [
        { at: 1.5, min: 40, max: 48 },
        { at: 9, min: 30, max: 40 },
      ],
    });
    expect(band.status).toBe(201);
  });
  const outOfBand = async () => (await call('GET', '/api/v1/alerts?rule=out_of_band')).body;

  test('a test outside the band in force raises one critical alert with readable evidence', async () => {
    const r = await call('POST', '/api/v1/certificates', certificate({ heatNumber: 'OOB-1' }));
    expect(r.status).toBe(201);
    const page = await outOfBand();
    expect(page.total).toBe(1);
    const alert = page.alerts[0];
    expect(alert).toMatchObject({ severity: 'critical', mill: 'BRENNWALD', grade: '8620H', heat: { heatNumber: 'OOB-1' }, distanceMm: 9, status: 'open' });
    // A mill-certificate test belongs to the heat, not to a lot.
    expect(alert.lot).toBeNull();
    // By construction: 29 HRC against a 30 HRC minimum misses by 1 HRC.
    expect(alert.evidence.failingPoints).toEqual([{ label: '9 mm', distanceMm: 9, hrc: 29, minHrc: 30, maxHrc: 40, margin: -1, basis: 'measured' }]);
    expect(alert.evidence.band).toMatchObject({ grade: '8620H', version: 1 });
    expect(alert.evidence.summary).toMatch(/1 of 2 band point\(s\) missed; worst by 1 HRC at 9 mm \(min limit\)/);
  });

  test('importing the same certificate again, even after the alert was resolved, raises nothing', async () => {
    const [alert] = (await outOfBand()).alerts;
    expect((await call('POST', '/api/v1/imports?format=json', [certificate({ heatNumber: 'OOB-1' })])).status).toBeLessThan(300);
    expect((await outOfBand()).total).toBe(1);
    await call('POST', `/api/v1/alerts/${alert.id}/resolve`, { note: 'accepted by concession' });
    const r = await call('POST', '/api/v1/imports?format=json', [certificate({ heatNumber: 'OOB-1' }), certificate({ heatNumber: 'OOB-2', certificateNumber: 'C-2' })]);
    expect(r.status).toBe(201);
    const page = await outOfBand();
    // OOB-2 is a new heat with the same out-of-band curve: one new alert; OOB-1 none.
    expect(page.total).toBe(2);
    expect(page.alerts.map((a: { heat: { heatNumber: string } }) => a.heat.heatNumber).sort()).toEqual(['OOB-1', 'OOB-2']);
  });

  test('a conforming test raises nothing; a grade without a band raises nothing', async () => {
    const good = certificate({ heatNumber: 'OK-1', certificateNumber: 'C-OK' });
    good.tests = [{ ...good.tests[0], readings: good.tests[0].readings.map((p) => (p.at === 9 ? { at: 9, hrc: 31 } : p)) }];
    expect((await call('POST', '/api/v1/certificates', good)).status).toBe(201);
    expect((await call('POST', '/api/v1/certificates', certificate({ grade: '4140H', heatNumber: 'NB-1', certificateNumber: 'C-NB' }))).status).toBe(201);
    expect((await outOfBand()).total).toBe(2);
  });

  test('a miss found only by interpolation between readings is a warning', async () => {
    // Invented band at 4 mm, between the readings at 3 mm (43 HRC) and 5 mm (38 HRC): a monotone
    // interpolant (Fritsch & Carlson 1980) lies strictly between them there, so above a 38 HRC maximum.
    await call('POST', '/api/v1/grades', { code: '5120H', distanceSystem: 'mm' });
    await call('POST', '/api/v1/grades/5120H/bands', { effectiveFrom: '2020-01-01', distanceSystem: 'mm', points: [{ at: 4, max: 38 }] });
    expect((await call('POST', '/api/v1/certificates', certificate({ grade: '5120H', heatNumber: 'INT-1', certificateNumber: 'C-INT' }))).status).toBe(201);
    const page = (await call('GET', '/api/v1/alerts?rule=out_of_band&grade=5120H')).body;
    expect(page.total).toBe(1);
    expect(page.alerts[0].severity).toBe('warning');
    const point = page.alerts[0].evidence.failingPoints[0];
    expect(point.basis).toBe('interpolated');
    expect(point.hrc).toBeGreaterThan(38);
    expect(point.hrc).toBeLessThan(43);
  });
});
