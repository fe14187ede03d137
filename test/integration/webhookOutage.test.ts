// A receiver's outage, on the default retry schedule, with the dispatcher's clock injected: the
// receiver is down (connection refused) for a simulated hour, then answers 500 for another hour, then
// is healthy. Every event must arrive, each key accepted exactly once, none dead. A receiver that never
// comes back must keep its events for at least 24 h before they become dead letters. Runs on PGlite and,
// with TEST_DATABASE_URL, on a PostgreSQL server.
import { createServer, type IncomingHttpHeaders, type Server } from 'node:http';
import type { AddressInfo } from 'node:net';
import { afterAll, beforeAll, describe, expect, test } from 'vitest';
import { sql } from 'drizzle-orm';
import { createApp } from '../../src/api/app.ts';
import { createLogger } from '../../src/logger.ts';
import { rowsOf } from '../../src/db/connection.ts';
import { raiseAlert } from '../../src/db/alerts.ts';
import { createDispatcher } from '../../src/alerts/dispatcher.ts';
import { DEFAULT_RETRY_SCHEDULE, describeSchedule, retrySpanMs } from '../../src/alerts/backoff.ts';
import { verifySignature } from '../../src/alerts/signature.ts';
import { createRng } from '../../src/stats/random.ts';
import { createTestDatabase, type TestDatabase } from '../helpers/testDatabase.ts';

const MINUTE = 60_000;
const HOUR = 60 * MINUTE;

type Mode = 'down' | 'error' | 'ok';

/** A receiver on a fixed loopback port: 'down' closes the port (connection refused), 'error' answers 500. */
class Receiver {
  private server: Server | null = null;
  port = 0;
  mode: Mode = 'ok';
  /** Every request that reached the receiver, with its answer and the simulated time. */
  log: Array<{ key: string; status: number; headers: IncomingHttpHeaders; body: string; at: number }> = [];
  constructor(private readonly now: () => number) {}

  async listen(port = 0) {
    this.server = createServer((req, res) => {
      const chunks: Buffer[] = [];
      req.on('data', (c) => chunks.push(c));
      req.on('end', () => {
        const status = this.mode === 'error' ? 500 : 200;
        this.log.push({ key: String(req.headers['idempotency-key']), status, headers: req.headers, body: Buffer.concat(chunks).toString('utf8'), at: this.now() });
        res.writeHead(status, { 'content-type': 'text/plain' }).end(status === 200 ? 'ok' : 'maintenance');
      });
    });
    await new Promise<void>((resolve) => this.server!.listen(port, '127.0.0.1', resolve));
    this.port = (this.server.address() as AddressInfo).port;
  }
  async setMode(mode: Mode) {
    if (mode === 'down' && this.server) {
      const s = this.server;
      this.server = null;
      s.closeAllConnections();
      await new Promise<void>((resolve) => s.close(() => resolve()));
    } else if (mode !== 'down' && !this.server) {
      await this.listen(this.port);
    }
    this.mode = mode;
  }
  get url() {
    return `http://127.0.0.1:${this.port}/hook`;
  }
  accepted() {
    return this.log.filter((r) => r.status === 200);
  }
}

let database: TestDatabase;
let app: ReturnType<typeof createApp>;
const receivers: Receiver[] = [];
const quiet = { info() {}, warn() {}, error() {}, debug() {} };

beforeAll(async () => {
  database = await createTestDatabase();
  app = createApp({ database, logger: createLogger('silent') });
});
afterAll(async () => {
  for (const r of receivers) await r.setMode('down');
  await database?.close();
});

async function subscribe(url: string) {
  await database.db.execute(sql`update webhook_subscriptions set active = false`);
  const response = await app.request('/api/v1/webhooks', { method: 'POST', headers: { 'content-type': 'application/json' }, body: JSON.stringify({ url, events: ['*'] }) });
  expect(response.status).toBe(201);
  return (await response.json()) as { id: number; secret: string };
}

let causes = 0;
async function raise(title: string) {
  causes++;
  const { alert } = await database.db.transaction((tx) => raiseAlert(tx, { rule: 'outage_test', severity: 'warning', causeKey: `outage-${causes}`, title, evidence: { n: causes } }));
  return `alert.raised:${alert.id}`;
}

async function outboxOf(subscriptionId: number) {
  return rowsOf<{ idempotency_key: string; status: string; attempts: number }>(
    await database.db.execute(sql`select idempotency_key, status, attempts from outbox where subscription_id = ${subscriptionId} order by id`),
  );
}

describe('the default schedule', () => {
  test('spans 24.1 to 48.3 hours from the first attempt to the last', () => {
    // Arithmetic of the schedule (backoff.ts): ceilings 60 s * 2^(n-1) for n = 1..8 sum to 60 * 255 = 15,300 s;
    // n = 9..19 are capped at 14,400 s: 11 * 14,400 = 158,400 s; the longest span is 173,700 s, the shortest half of it.
    expect(DEFAULT_RETRY_SCHEDULE).toEqual({ maxAttempts: 20, baseMs: 60_000, maxMs: 14_400_000 });
    expect(retrySpanMs(DEFAULT_RETRY_SCHEDULE.maxAttempts, { baseMs: DEFAULT_RETRY_SCHEDULE.baseMs, maxMs: DEFAULT_RETRY_SCHEDULE.maxMs })).toEqual({ minMs: 86_850_000, maxMs: 173_700_000 });
    expect(describeSchedule(20, { baseMs: 60_000, maxMs: 14_400_000 })).toBe('20 attempts over 24.1-48.3 h (first retry after 30-60 s, ceiling 4 h)');
    // The old default (8 attempts, 5 s, cap 1 h) ended within 10.6 min at most: 5 s * (2^7 - 1) = 635 s.
    expect(retrySpanMs(8, { baseMs: 5_000, maxMs: 3_600_000 }).maxMs).toBe(635_000);
  });
});

describe('a receiver down for an hour, then failing for an hour, then healthy', () => {
  test('gets every event, each key accepted once, none dead', async () => {
    let t = Date.now() + 1000;
    const receiver = new Receiver(() => t);
    receivers.push(receiver);
    await receiver.listen();
    const sub = await subscribe(receiver.url);
    await receiver.setMode('down');
    const rng = createRng(16);
    // Defaults of the schedule; only the answer timeout is short (a refused connection fails at once anyway).
    const dispatcher = createDispatcher({ db: database.db, logger: quiet, clock: () => new Date(t), random: () => rng.next(), timeoutMs: 2000 });

    const keys: string[] = [];
    for (let i = 0; i < 6; i++) keys.push(await raise(`before the outage ${i}`));
    const start = t;
    let raisedLater = false;
    let healthyAt = 0;
    let rounds = 0;
    let dead = 0;
    // One round per simulated minute until everything is delivered (at most 30 simulated hours).
    while (t - start < 30 * HOUR) {
      const elapsed = t - start;
      if (elapsed >= 20 * MINUTE && !raisedLater) {
        for (let i = 0; i < 6; i++) keys.push(await raise(`during the outage ${i}`));
        raisedLater = true;
      }
      if (elapsed >= HOUR && receiver.mode === 'down') await receiver.setMode('error');
      if (elapsed >= 2 * HOUR && receiver.mode === 'error') {
        await receiver.setMode('ok');
        healthyAt = t;
      }
      const round = await dispatcher.runOnce();
      dead += round.dead + round.buried;
      rounds++;
      if (raisedLater && receiver.accepted().length === keys.length) break;
      t += MINUTE;
    }

    expect(dead).toBe(0);
    const accepted = receiver.accepted();
    // Every event arrived, and each key was accepted exactly once.
    expect(accepted.map((r) => r.key).sort()).toEqual([...keys].sort());
    expect(new Set(accepted.map((r) => r.key)).size).toBe(keys.length);
    const rows = await outboxOf(sub.id);
    expect(rows.map((r) => r.status)).toEqual(keys.map(() => 'delivered'));
    // Each event failed at least once (the outage), so each was retried; none was posted after its success.
    for (const r of rows) expect(r.attempts).toBeGreaterThan(1);
    expect(receiver.log.filter((r) => r.status === 200 && r.at < healthyAt)).toHaveLength(0);
    // The 500 hour reached the receiver: retries went on while it answered errors.
    expect(receiver.log.some((r) => r.status === 500)).toBe(true);
    // After recovery everything arrived within one ceiling (4 h) plus a round.
    const lastAt = Math.max(...accepted.map((r) => r.at));
    expect(lastAt - healthyAt).toBeLessThanOrEqual(DEFAULT_RETRY_SCHEDULE.maxMs + MINUTE);

    // The signature carries the (simulated) sending time: valid then, refused as a replay 10 minutes later.
    const sample = accepted[0];
    const input = { secret: sub.secret, body: sample.body, signature: sample.headers['x-endquench-signature'] as string, timestamp: sample.headers['x-endquench-timestamp'] as string };
    expect(verifySignature({ ...input, now: new Date(sample.at) })).toEqual({ ok: true });
    expect(verifySignature({ ...input, now: new Date(sample.at + 10 * MINUTE) })).toEqual({ ok: false, reason: 'stale' });
    // The idempotency key is the event's id, in the header and the payload alike.
    expect(JSON.parse(sample.body).id).toBe(sample.key);
    console.info(`[outage, ${database.label}] ${keys.length} events, ${rounds} rounds, ${receiver.log.length} requests reached the receiver (${receiver.log.filter((r) => r.status === 500).length} answered 500), last delivered ${Math.round((lastAt - healthyAt) / MINUTE)} min after recovery`);
  }, 120_000);
});

describe('a receiver that never comes back', () => {
  test('keeps each event for at least 24 hours before it is a dead letter', async () => {
    let t = Date.now() + 1000;
    const receiver = new Receiver(() => t);
    receivers.push(receiver);
    await receiver.listen();
    const sub = await subscribe(receiver.url);
    await receiver.setMode('down');
    const rng = createRng(1616);
    const dispatcher = createDispatcher({ db: database.db, logger: quiet, clock: () => new Date(t), random: () => rng.next(), timeoutMs: 2000 });
    await raise('never delivered');
    const start = t;
    let firstAttempt = 0;
    let deadAt = 0;
    const step = 5 * MINUTE;
    while (t - start < 50 * HOUR && !deadAt) {
      const round = await dispatcher.runOnce();
      if (round.claimed && !firstAttempt) firstAttempt = t;
      if (round.dead) deadAt = t;
      t += step;
    }
    const [row] = await outboxOf(sub.id);
    expect(row).toMatchObject({ status: 'dead', attempts: DEFAULT_RETRY_SCHEDULE.maxAttempts });
    const span = retrySpanMs(DEFAULT_RETRY_SCHEDULE.maxAttempts, { baseMs: DEFAULT_RETRY_SCHEDULE.baseMs, maxMs: DEFAULT_RETRY_SCHEDULE.maxMs });
    expect(deadAt - firstAttempt).toBeGreaterThanOrEqual(span.minMs);
    // Rounds every 5 simulated minutes can add up to one step per attempt.
    expect(deadAt - firstAttempt).toBeLessThanOrEqual(span.maxMs + DEFAULT_RETRY_SCHEDULE.maxAttempts * step);
    console.info(`[never back, ${database.label}] dead after ${DEFAULT_RETRY_SCHEDULE.maxAttempts} attempts, ${((deadAt - firstAttempt) / HOUR).toFixed(1)} h after the first`);
  }, 120_000);
});
