// SIGKILL of the service (a child process) in the middle of an import, of a webhook delivery, and of a
// refit, on PGlite (data directory) and, with TEST_DATABASE_URL, on a PostgreSQL server. After each:
// nothing half-written, no alert lost or doubled, and the interrupted work runs again cleanly.
import { spawn } from 'node:child_process';
import { createServer, type IncomingHttpHeaders, type ServerResponse } from 'node:http';
import type { AddressInfo } from 'node:net';
import { mkdtempSync, rmSync } from 'node:fs';
import { tmpdir } from 'node:os';
import { join } from 'node:path';
import { afterAll, afterEach, describe, expect, test } from 'vitest';
import { sql } from 'drizzle-orm';
import { openDatabase, rowsOf, type Database } from '../../src/db/connection.ts';
import { raiseAlert } from '../../src/db/alerts.ts';
import { createSubscription } from '../../src/db/outbox.ts';
import { runImport } from '../../src/ingest/importPipeline.ts';
import { verifySignature } from '../../src/alerts/signature.ts';
import { variedCertificates } from '../fixtures/variedCertificates.ts';
import { createTestDatabase, type TestDatabase } from '../helpers/testDatabase.ts';
import { startServiceProcess, stopAllServices } from '../helpers/serviceProcess.ts';

const onServer = Boolean(process.env.TEST_DATABASE_URL);
const label = onServer ? 'postgres' : 'pglite';
const sleep = (ms: number) => new Promise((r) => setTimeout(r, ms));

/** A store the child can use and the test can inspect between runs (PGlite: only while no child has it open). */
interface Store {
  env: Record<string, string>;
  /** Runs fn on the store (opened for the call on PGlite). */
  use<T>(fn: (db: Database['db']) => Promise<T>): Promise<T>;
  close(): Promise<void>;
}

async function newStore(): Promise<Store> {
  if (onServer) {
    const database: TestDatabase = await createTestDatabase();
    return { env: { DATABASE_URL: database.url! }, use: (fn) => fn(database.db), close: () => database.close() };
  }
  const dir = mkdtempSync(join(tmpdir(), 'endquench-faults-'));
  return {
    env: { ENDQUENCH_DATA_DIR: dir },
    use: async (fn) => {
      const database = await openDatabase({ dataDir: dir });
      try {
        await database.migrate();
        return await fn(database.db);
      } finally {
        await database.close();
      }
    },
    close: async () => rmSync(dir, { recursive: true, force: true }),
  };
}

const stores: Store[] = [];
afterEach(async () => {
  await stopAllServices();
});
afterAll(async () => {
  for (const s of stores) await s.close();
});

async function counts(db: Database['db']) {
  const [row] = rowsOf<{ heats: number; readings: number; tests: number; alerts: number; outbox: number; accepted: number; doubledCauses: number }>(
    await db.execute(sql`select (select count(*)::int from heats) as heats, (select count(*)::int from end_quench_readings) as readings,
      (select count(*)::int from end_quench_tests) as tests, (select count(*)::int from alerts) as alerts, (select count(*)::int from outbox) as outbox,
      (select count(*)::int from imports where status = 'accepted') as accepted,
      (select count(*)::int from (select cause_key from alerts group by cause_key, resolved_at having count(*) > 1) d) as "doubledCauses"`),
  );
  return row;
}

describe(`SIGKILL of the service (${label})`, () => {
  test('during an import: all or nothing, and the import runs again', async () => {
    const store = await newStore();
    stores.push(store);
    const N = 3000;
    const body = JSON.stringify(variedCertificates(N, { prefix: 'K' }));
    let service = await startServiceProcess({ ...store.env, ENDQUENCH_WEBHOOKS: 'off' });
    // A dry run of the same document reads, validates and plans it without writing: the import itself does
    // all that and then writes, so killing it once the dry run's time has passed lands inside the import on
    // a fast machine and a slow one alike (a fixed sleep did not: on an idle machine the import finished first).
    const dryStarted = performance.now();
    const dry = await fetch(`${service.url}/api/v1/imports?format=json&createMissing=true&dryRun=true`, { method: 'POST', headers: { 'content-type': 'application/json' }, body });
    expect(dry.status).toBe(200);
    await dry.arrayBuffer();
    const dryMs = performance.now() - dryStarted;
    let answered = false;
    const sent = fetch(`${service.url}/api/v1/imports?format=json&createMissing=true`, { method: 'POST', headers: { 'content-type': 'application/json' }, body })
      .then(() => (answered = true))
      .catch(() => 'no answer');
    await sleep(dryMs);
    await service.kill('SIGKILL');
    expect(await sent).toBe('no answer');
    expect(answered).toBe(false);

    const after = await store.use(counts);
    // Killed before the commit: nothing of the data, no alert, no outbox row.
    expect(after).toMatchObject({ heats: 0, readings: 0, tests: 0, alerts: 0, outbox: 0, accepted: 0 });

    service = await startServiceProcess({ ...store.env, ENDQUENCH_WEBHOOKS: 'off' });
    const again = await fetch(`${service.url}/api/v1/imports?format=json&createMissing=true`, { method: 'POST', headers: { 'content-type': 'application/json' }, body });
    expect(again.status).toBe(201);
    await again.arrayBuffer();
    await service.kill('SIGTERM');
    const done = await store.use(counts);
    expect(done).toMatchObject({ heats: N, tests: N, readings: N * 8, accepted: 1, doubledCauses: 0 });
    console.info(`[kill during import, ${label}] nothing stored after the kill; the re-run stored ${done.heats} heats and raised ${done.alerts} alert(s), none doubled`);
  }, 240_000);

  test('during a webhook delivery: the event is sent again with the same key and settled once', async () => {
    const store = await newStore();
    stores.push(store);
    const received: Array<{ headers: IncomingHttpHeaders; body: string }> = [];
    let hold = true;
    const held: ServerResponse[] = [];
    const receiver = createServer((req, res) => {
      const chunks: Buffer[] = [];
      req.on('data', (c) => chunks.push(c));
      req.on('end', () => {
        received.push({ headers: req.headers, body: Buffer.concat(chunks).toString('utf8') });
        if (hold) held.push(res);
        else res.writeHead(200).end('ok');
      });
    });
    await new Promise<void>((resolve) => receiver.listen(0, '127.0.0.1', resolve));
    const url = `http://127.0.0.1:${(receiver.address() as AddressInfo).port}/hook`;
    try {
      const { secret } = await store.use(async (db) => {
        const sub = await createSubscription(db, { url, events: ['*'] });
        await db.transaction((tx) => raiseAlert(tx, { rule: 'kill_test', severity: 'warning', causeKey: 'kill-test-1', title: 'delivered across a crash', evidence: {} }));
        return sub;
      });
      const env = { ...store.env, ENDQUENCH_WEBHOOKS: 'on', ENDQUENCH_WEBHOOK_INTERVAL_MS: '100', ENDQUENCH_WEBHOOK_TIMEOUT_MS: '1000' };
      let service = await startServiceProcess(env);
      for (let i = 0; i < 200 && received.length === 0; i++) await sleep(50);
      expect(received).toHaveLength(1);
      await service.kill('SIGKILL'); // the receiver has the event; the service never heard its answer
      hold = false;
      for (const r of held) r.destroy();

      const between = await store.use(async (db) => rowsOf<{ status: string; attempts: number }>(await db.execute(sql`select status, attempts from outbox`)));
      expect(between).toEqual([{ status: 'pending', attempts: 1 }]);

      service = await startServiceProcess(env);
      // The claim's lock (6 x the 1 s timeout) expires, then the row is claimed again.
      for (let i = 0; i < 400 && received.length < 2; i++) await sleep(50);
      await sleep(500);
      await service.kill('SIGTERM');
      expect(received).toHaveLength(2);
      const keys = received.map((r) => r.headers['idempotency-key']);
      expect(new Set(keys).size).toBe(1); // the same key: a receiver that remembers keys acts once
      for (const r of received) {
        const check = verifySignature({ secret, body: r.body, signature: r.headers['x-endquench-signature'] as string, timestamp: r.headers['x-endquench-timestamp'] as string });
        expect(check).toEqual({ ok: true });
      }
      const rows = await store.use(async (db) => rowsOf<{ status: string; attempts: number }>(await db.execute(sql`select status, attempts from outbox`)));
      expect(rows).toEqual([{ status: 'delivered', attempts: 2 }]);
      expect((await store.use(counts)).alerts).toBe(1);
      console.info(`[kill during delivery, ${label}] posted twice with key ${keys[0]}, settled once (delivered, 2 attempts)`);
    } finally {
      receiver.closeAllConnections();
      await new Promise<void>((resolve) => receiver.close(() => resolve()));
    }
  }, 120_000);

  test('during a refit: every stored model is whole, and the refit runs again', async () => {
    const store = await newStore();
    stores.push(store);
    await store.use(async (db) => {
      for (const [i, mill] of ['BRENNWALD', 'KORVALLEN', 'MIRASOL'].entries()) {
        const certs = variedCertificates(120, { prefix: `M${i}-`, seed: 100 + i, mill });
        await runImport(db, { bytes: new TextEncoder().encode(JSON.stringify(certs)), format: 'json', options: { createMissing: true } });
      }
    });
    const refit = (kill: boolean) =>
      new Promise<{ code: number | null; output: string }>((resolve) => {
        const base = { ...process.env };
        delete base.DATABASE_URL;
        delete base.ENDQUENCH_DATA_DIR;
        const child = spawn(process.execPath, ['bin/endquench.js', 'refit'], { env: { ...base, ...store.env, LOG_LEVEL: 'warn' }, stdio: ['ignore', 'pipe', 'pipe'] });
        let output = '';
        child.stdout.on('data', (c: Buffer) => (output += c.toString()));
        child.stderr.on('data', (c: Buffer) => (output += c.toString()));
        if (kill && onServer) {
          // On the server the test can watch: kill once the first model is stored and others are still to come.
          const watch = setInterval(async () => {
            const [row] = await store.use(async (db) => rowsOf<{ n: number }>(await db.execute(sql`select count(*)::int as n from models`)));
            if (row.n > 0) {
              clearInterval(watch);
              child.kill('SIGKILL');
            }
          }, 5);
          child.on('exit', () => clearInterval(watch));
        } else if (kill) setTimeout(() => child.kill('SIGKILL'), 2500); // PGlite is locked by the child: a fixed moment
        child.on('exit', (code) => resolve({ code, output }));
      });
    const killed = await refit(true);
    const models = () =>
      store.use(async (db) =>
        rowsOf<{ grade: string; mill: string | null; version: number; fits: unknown; heat_count: number }>(
          await db.execute(sql`select g.code as grade, m.code as mill, md.version, md.fits, md.heat_count from models md join grades g on g.id = md.grade_id left join mills m on m.id = md.mill_id order by 1, 2, 3`),
        ),
      );
    const afterKill = await models();
    for (const m of afterKill) {
      expect(m.fits).not.toBeNull();
      expect(m.heat_count).toBeGreaterThan(0);
    }
    const again = await refit(false);
    expect(again.code, again.output).toBe(0);
    const afterRerun = await models();
    // Four series (the grade, and each of 3 mills) have a model; versions per series count up from 1 without gaps.
    const bySeries = new Map<string, number[]>();
    for (const m of afterRerun) bySeries.set(`${m.grade}/${m.mill}`, [...(bySeries.get(`${m.grade}/${m.mill}`) ?? []), m.version]);
    expect(bySeries.size).toBe(4);
    for (const versions of bySeries.values()) expect(versions).toEqual(versions.map((_, i) => i + 1));
    console.info(`[kill during refit, ${label}] killed with ${killed.code === null ? 'SIGKILL' : `exit ${killed.code}`}, ${afterKill.length} whole model(s) on file; the re-run stored ${afterRerun.length - afterKill.length} more`);
  }, 240_000);
});
