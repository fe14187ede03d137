// Webhook delivery through the outbox to a real HTTP receiver on 127.0.0.1: signatures, retries after
// the receiver was down, dead letters visible in the API, manual retry, at-least-once after a lost
// claim, and two dispatchers on two pools sharing the queue (PostgreSQL server only).
import { createServer, type IncomingHttpHeaders, type Server } from 'node:http';
import type { AddressInfo } from 'node:net';
import { afterAll, beforeAll, describe, expect, test } from 'vitest';
import { sql } from 'drizzle-orm';
import { createApp } from '../../src/api/app.ts';
import { createLogger } from '../../src/logger.ts';
import { openDatabase, rowsOf, type Database } from '../../src/db/connection.ts';
import { raiseAlert } from '../../src/db/alerts.ts';
import { claimDue } from '../../src/db/outbox.ts';
import { createDispatcher, type DispatcherOptions } from '../../src/alerts/dispatcher.ts';
import { verifySignature } from '../../src/alerts/signature.ts';
import { createTestDatabase, type TestDatabase } from '../helpers/testDatabase.ts';

interface Received {
  headers: IncomingHttpHeaders;
  body: string;
}

/** A webhook receiver on an ephemeral loopback port that can answer a chosen status, be slow, or go down. */
class Receiver {
  received: Received[] = [];
  status = 200;
  delayMs = 0;
  inFlight = new Map<string, number>();
  maxInFlightPerKey = 0;
  private server: Server | null = null;
  port = 0;

  async start(port = 0) {
    this.server = createServer((req, res) => {
      const chunks: Buffer[] = [];
      req.on('data', (c) => chunks.push(c));
      req.on('end', async () => {
        const key = String(req.headers['idempotency-key']);
        const now = (this.inFlight.get(key) ?? 0) + 1;
        this.inFlight.set(key, now);
        this.maxInFlightPerKey = Math.max(this.maxInFlightPerKey, now);
        this.received.push({ headers: req.headers, body: Buffer.concat(chunks).toString('utf8') });
        if (this.delayMs) await new Promise((r) => setTimeout(r, this.delayMs));
        this.inFlight.set(key, this.inFlight.get(key)! - 1);
        res.writeHead(this.status, { 'content-type': 'text/plain' }).end(this.status < 300 ? 'thanks' : 'receiver trouble');
      });
    });
    await new Promise<void>((resolve) => this.server!.listen(port, '127.0.0.1', resolve));
    this.port = (this.server.address() as AddressInfo).port;
    return this;
  }
  get url() {
    return `http://127.0.0.1:${this.port}/hook`;
  }
  async stop() {
    const s = this.server;
    this.server = null;
    if (!s) return;
    s.closeAllConnections();
    await new Promise<void>((resolve) => s.close(() => resolve()));
  }
  keys() {
    return this.received.map((r) => String(r.headers['idempotency-key']));
  }
}

let database: TestDatabase;
let app: ReturnType<typeof createApp>;
const receivers: Receiver[] = [];

async function call(method: string, path: string, body?: unknown) {
  const init: RequestInit = { method, headers: body === undefined ? {} : { 'content-type': 'application/json' } };
  if (body !== undefined) init.body = JSON.stringify(body);
  const response = await app.request(path, init);
  const text = await response.text();
  return { status: response.status, body: text ? JSON.parse(text) : null };
}

async function newReceiver() {
  const r = await new Receiver().start();
  receivers.push(r);
  return r;
}

let causes = 0;
async function raise(title = 'test alert') {
  causes++;
  return database.db.transaction((tx) => raiseAlert(tx, { rule: 'test_rule', severity: 'warning', causeKey: `webhook-test-${causes}`, title, evidence: { n: causes } }));
}

/** Subscribe a receiver; other subscriptions are switched off so each test sees only its own rows. */
async function subscribe(receiver: Receiver, events: string[] = ['alert.raised']) {
  await database.db.execute(sql`update webhook_subscriptions set active = false`);
  const r = await call('POST', '/api/v1/webhooks', { url: receiver.url, events });
  expect(r.status).toBe(201);
  return r.body as { id: number; secret: string };
}

/** A clock the test moves; it starts a little ahead of the database's now(). */
function testClock() {
  let t = Date.now() + 1000;
  return { now: () => new Date(t), advance: (ms: number) => (t += ms), get: () => t };
}

const quiet = { info() {}, warn() {}, error() {}, debug() {} };
const dispatcher = (extra: Partial<DispatcherOptions> = {}) =>
  createDispatcher({ db: database.db, logger: quiet, baseDelayMs: 1000, maxDelayMs: 8000, timeoutMs: 2000, maxAttempts: 3, ...extra });

beforeAll(async () => {
  database = await createTestDatabase();
  app = createApp({ database, logger: createLogger('silent') });
});
afterAll(async () => {
  for (const r of receivers) await r.stop();
  await database?.close();
});

describe('delivery', () => {
  test('an alert reaches the receiver once, signed with the secret shown at subscription, with its idempotency key', async () => {
    const receiver = await newReceiver();
    const sub = await subscribe(receiver);
    expect(sub.secret).toMatch(/^eqwh_/);
    const listed = await call('GET', '/api/v1/webhooks');
    expect(listed.body.map((s: { id: number }) => s.id)).toEqual([sub.id]);
    expect(JSON.stringify(listed.body)).not.toContain(sub.secret);

    const { alert } = await raise('reaches the receiver');
    const clock = testClock();
    const d = dispatcher({ clock: clock.now });
    expect(await d.runOnce()).toMatchObject({ claimed: 1, delivered: 1, retrying: 0, dead: 0 });
    expect(receiver.received).toHaveLength(1);
    const [got] = receiver.received;
    expect(got.headers['idempotency-key']).toBe(`alert.raised:${alert.id}`);
    expect(got.headers['x-endquench-event']).toBe('alert.raised');
    const check = verifySignature({
      secret: sub.secret,
      body: got.body,
      signature: got.headers['x-endquench-signature'] as string,
      timestamp: got.headers['x-endquench-timestamp'] as string,
      now: clock.now(),
    });
    expect(check).toEqual({ ok: true });
    expect(verifySignature({ secret: 'not-the-secret', body: got.body, signature: got.headers['x-endquench-signature'] as string, timestamp: got.headers['x-endquench-timestamp'] as string, now: clock.now() }).ok).toBe(false);
    const payload = JSON.parse(got.body);
    expect(payload).toMatchObject({ event: 'alert.raised', id: `alert.raised:${alert.id}`, alert: { id: alert.id, title: 'reaches the receiver', status: 'open' } });

    // Delivered rows are not sent again.
    expect((await d.runOnce()).claimed).toBe(0);
    const deliveries = await call('GET', `/api/v1/webhooks/${sub.id}/deliveries`);
    expect(deliveries.body.total).toBe(1);
    expect(deliveries.body.deliveries[0]).toMatchObject({ status: 'delivered', attempts: 1, lastError: null, idempotencyKey: `alert.raised:${alert.id}` });
  });

  test('start() delivers on its interval and stop() waits for the round in progress', async () => {
    const receiver = await newReceiver();
    await subscribe(receiver);
    const d = dispatcher({ intervalMs: 20 });
    d.start();
    expect(d.running).toBe(true);
    await raise('via the loop');
    for (let i = 0; i < 200 && receiver.received.length === 0; i++) await new Promise((r) => setTimeout(r, 25));
    await d.stop();
    expect(d.running).toBe(false);
    expect(receiver.received).toHaveLength(1);
  });

  test('a receiver that was down for a while still gets the event, after the back-off', async () => {
    const receiver = await newReceiver();
    const sub = await subscribe(receiver);
    const port = receiver.port;
    await receiver.stop();
    const { alert } = await raise('receiver down');
    const clock = testClock();
    const t0 = clock.get();
    const d = dispatcher({ clock: clock.now, random: () => 0.5 });
    expect(await d.runOnce()).toMatchObject({ claimed: 1, retrying: 1, delivered: 0 });
    const [pending] = (await call('GET', `/api/v1/webhooks/${sub.id}/deliveries?status=pending`)).body.deliveries;
    expect(pending.attempts).toBe(1);
    expect(pending.lastError).toMatch(/^attempt 1\/3: /);
    // Equal jitter with random 0.5 after the first failure: 1000/2 + 0.5 * 1000/2 = 750 ms (backoff.ts).
    expect(Date.parse(pending.nextAttemptAt) - t0).toBe(750);

    clock.advance(500);
    expect((await d.runOnce()).claimed).toBe(0); // not due yet
    await receiver.start(port);
    clock.advance(300);
    expect(await d.runOnce()).toMatchObject({ claimed: 1, delivered: 1 });
    expect(receiver.keys()).toEqual([`alert.raised:${alert.id}`]);
    const [done] = (await call('GET', `/api/v1/webhooks/${sub.id}/deliveries`)).body.deliveries;
    expect(done).toMatchObject({ status: 'delivered', attempts: 2, lastError: null });
  });

  test('after N failed attempts a delivery is dead, visible in the API, and can be retried by hand', async () => {
    const receiver = await newReceiver();
    receiver.status = 500;
    const sub = await subscribe(receiver);
    await raise('always failing');
    const clock = testClock();
    const d = dispatcher({ clock: clock.now });
    const outcomes = [];
    for (let i = 0; i < 4; i++) {
      outcomes.push(await d.runOnce());
      clock.advance(8000); // the cap: every retry is due
    }
    expect(outcomes.map((o) => [o.retrying, o.dead])).toEqual([
      [1, 0],
      [1, 0],
      [0, 1],
      [0, 0],
    ]);
    expect(receiver.received).toHaveLength(3);
    expect(new Set(receiver.keys()).size).toBe(1);
    const dead = await call('GET', `/api/v1/webhooks/${sub.id}/deliveries?status=dead`);
    expect(dead.body.total).toBe(1);
    const row = dead.body.deliveries[0];
    expect(row).toMatchObject({ status: 'dead', attempts: 3, nextAttemptAt: null });
    expect(row.lastError).toBe('attempt 3/3: HTTP 500: receiver trouble');

    receiver.status = 200;
    const retried = await call('POST', `/api/v1/webhooks/${sub.id}/deliveries/${row.id}/retry`);
    expect(retried.status).toBe(200);
    expect(retried.body).toMatchObject({ status: 'pending', attempts: 0 });
    clock.advance(1000);
    expect(await d.runOnce()).toMatchObject({ delivered: 1 });
    expect(receiver.received).toHaveLength(4);
    expect((await call('POST', `/api/v1/webhooks/${sub.id}/deliveries/${row.id}/retry`)).status).toBe(409);
    expect((await call('POST', `/api/v1/webhooks/${sub.id}/deliveries/999999/retry`)).status).toBe(404);
  });

  test('a claim that is never settled (a crashed instance) is delivered by another once its lock expires', async () => {
    const receiver = await newReceiver();
    await subscribe(receiver);
    await raise('lost claim');
    const clock = testClock();
    const lost = await claimDue(database.db, { now: clock.now(), lockMs: 5000, limit: 10 });
    expect(lost).toHaveLength(1);
    const d = dispatcher({ clock: clock.now });
    clock.advance(4000);
    expect((await d.runOnce()).claimed).toBe(0);
    clock.advance(1001);
    expect(await d.runOnce()).toMatchObject({ claimed: 1, delivered: 1 });
    expect(receiver.received).toHaveLength(1);
  });

  test('a last attempt that was claimed and never settled ends dead rather than beyond the limit', async () => {
    const receiver = await newReceiver();
    const sub = await subscribe(receiver);
    await raise('lost last attempt');
    const clock = testClock();
    await database.db.execute(sql`update outbox set attempts = 2 where subscription_id = ${sub.id}`);
    expect(await claimDue(database.db, { now: clock.now(), lockMs: 5000, limit: 10 })).toHaveLength(1); // attempt 3 of 3, lost
    clock.advance(6000);
    expect(await dispatcher({ clock: clock.now }).runOnce()).toMatchObject({ claimed: 0, buried: 1 });
    const [row] = (await call('GET', `/api/v1/webhooks/${sub.id}/deliveries`)).body.deliveries;
    expect(row.status).toBe('dead');
    expect(row.lastError).toMatch(/never settled/);
    expect(receiver.received).toHaveLength(0);
  });

  test('deleting a subscription stops its deliveries; their history stays readable', async () => {
    const receiver = await newReceiver();
    const sub = await subscribe(receiver, ['*']);
    await raise('before delete');
    expect((await call('DELETE', `/api/v1/webhooks/${sub.id}`)).status).toBe(204);
    expect((await call('DELETE', `/api/v1/webhooks/${sub.id}`)).status).toBe(404);
    expect((await dispatcher().runOnce()).claimed).toBe(0);
    const rows = (await call('GET', `/api/v1/webhooks/${sub.id}/deliveries`)).body.deliveries;
    expect(rows).toHaveLength(1);
    expect(rows[0]).toMatchObject({ status: 'dead', lastError: 'subscription deleted' });
    expect((await call('POST', `/api/v1/webhooks/${sub.id}/deliveries/${rows[0].id}/retry`)).status).toBe(409);
    expect((await call('GET', '/api/v1/webhooks')).body.map((s: { id: number }) => s.id)).not.toContain(sub.id);
    expect((await call('GET', '/api/v1/webhooks?includeDeleted=true')).body.find((s: { id: number }) => s.id === sub.id).active).toBe(false);
  });

  test('a subscription needs an http(s) URL and known events', async () => {
    expect((await call('POST', '/api/v1/webhooks', { url: 'ftp://127.0.0.1/x', events: ['alert.raised'] })).status).toBe(400);
    expect((await call('POST', '/api/v1/webhooks', { url: 'http://127.0.0.1/x', events: ['alert.exploded'] })).status).toBe(400);
    expect((await call('POST', '/api/v1/webhooks', { url: 'http://127.0.0.1/x', events: [] })).status).toBe(400);
  });
});

// FOR UPDATE SKIP LOCKED between instances needs several connections; PGlite has exactly one.
const onServer = Boolean(process.env.TEST_DATABASE_URL);
describe.skipIf(!onServer)('two dispatchers on two pools (PostgreSQL server; set TEST_DATABASE_URL)', () => {
  const pools: Database[] = [];
  afterAll(async () => {
    for (const p of pools) await p.close();
  });

  test('never deliver the same event twice at the same time, and share the work', async () => {
    const receiver = await newReceiver();
    receiver.delayMs = 15;
    await subscribe(receiver);
    const events = 60;
    for (let i = 0; i < events; i++) await raise(`shared ${i}`);
    for (let i = 0; i < 2; i++) pools.push(await openDatabase({ url: database.url!, poolMax: 4 }));
    const [a, b] = pools.map((p) => createDispatcher({ db: p.db, logger: quiet, batchSize: 4, concurrency: 2, timeoutMs: 5000 }));
    const delivered = [0, 0];
    for (let round = 0; round < 100; round++) {
      const [ra, rb] = await Promise.all([a.runOnce(), b.runOnce()]);
      delivered[0] += ra.delivered;
      delivered[1] += rb.delivered;
      if (ra.claimed === 0 && rb.claimed === 0) break;
    }
    expect(delivered[0] + delivered[1]).toBe(events);
    expect(delivered[0]).toBeGreaterThan(0);
    expect(delivered[1]).toBeGreaterThan(0);
    expect(receiver.received).toHaveLength(events);
    expect(new Set(receiver.keys()).size).toBe(events);
    expect(receiver.maxInFlightPerKey).toBe(1);
  });
});
if (!onServer) {
  test.skip('two dispatchers on two pools: skipped, PGlite is a single connection (set TEST_DATABASE_URL=postgres://... to run it)', () => {});
}
