// The database connection lost under the running service (PostgreSQL server only: PGlite runs inside
// the process and has no connection to lose). The service is a child process; the test cuts its
// connections with pg_terminate_backend while an import and reads run, then takes the database away
// for a while (renamed, so connecting fails with "does not exist") and brings it back.
// Expected: /healthz says 503, every request in the meantime answers 200 or a clear 503
// database_unavailable (never 500, never a refused connection), the process stays up and recovers by
// itself, the cut import left nothing behind and can be sent again.
import { afterAll, beforeAll, describe, expect, test } from 'vitest';
import { sql } from 'drizzle-orm';
import pg from 'pg';
import { openDatabase, rowsOf } from '../../src/db/connection.ts';
import { isDatabaseUnavailable } from '../../src/api/errors.ts';
import { certificate } from '../fixtures/certificates.ts';
import { variedCertificates } from '../fixtures/variedCertificates.ts';
import { createTestDatabase, type TestDatabase } from '../helpers/testDatabase.ts';
import { startServiceProcess, stopAllServices, type ServiceProcess } from '../helpers/serviceProcess.ts';

const serverUrl = process.env.TEST_DATABASE_URL;
const N = 1500;
const APP_NAME = 'endquench_fault_test';

let database: TestDatabase;
let service: ServiceProcess;
let dbName: string;

async function admin<T>(text: string, values: unknown[] = []): Promise<T[]> {
  const client = new pg.Client({ connectionString: serverUrl });
  await client.connect();
  try {
    return (await client.query(text, values)).rows as T[];
  } finally {
    await client.end();
  }
}

/** Terminates the service's backends (those with its application_name); returns how many. */
async function cutServiceConnections(): Promise<number> {
  const rows = await admin<{ pid: number }>(`select pg_terminate_backend(pid) as t, pid from pg_stat_activity where datname = $1 and application_name = $2`, [dbName, APP_NAME]);
  return rows.length;
}

async function counts() {
  const [row] = rowsOf<{ heats: number; readings: number; accepted: number; unfinished: number; alerts: number; doubled: number }>(
    await database.db.execute(sql`select (select count(*)::int from heats) as heats, (select count(*)::int from end_quench_readings) as readings,
      (select count(*)::int from alerts) as alerts,
      (select count(*)::int from (select cause_key from alerts group by cause_key, resolved_at having count(*) > 1) d) as doubled,
      (select count(*)::int from imports where status = 'accepted') as accepted,
      (select count(*)::int from imports where status in ('received', 'failed')) as unfinished`),
  );
  return row;
}

const body = JSON.stringify(variedCertificates(N, { prefix: 'F' }));
const postImport = () => fetch(`${service.url}/api/v1/imports?format=json&createMissing=true`, { method: 'POST', headers: { 'content-type': 'application/json' }, body });

/** Reads in a loop until stopped; records each answer's status (or 'refused' when nothing answered). */
function readLoop(paths: string[]) {
  const seen: Array<number | string> = [];
  const codes = new Set<string>();
  let stop = false;
  const done = (async () => {
    for (let i = 0; !stop; i++) {
      try {
        const r = await fetch(`${service.url}${paths[i % paths.length]}`);
        seen.push(r.status);
        if (r.status >= 500) codes.add(`${r.status} ${(await r.json()).error?.code} retry-after=${r.headers.get('retry-after')}`);
        else await r.arrayBuffer();
      } catch {
        seen.push('refused');
      }
    }
  })();
  return {
    seen,
    codes,
    stop: async () => {
      stop = true;
      await done;
    },
  };
}

const onServer = Boolean(serverUrl);
describe.skipIf(!onServer)('database connection lost (PostgreSQL server)', () => {
  beforeAll(async () => {
    database = await createTestDatabase();
    dbName = new URL(database.url!).pathname.slice(1);
    const url = new URL(database.url!);
    url.searchParams.set('application_name', APP_NAME);
    service = await startServiceProcess({ DATABASE_URL: url.toString(), ENDQUENCH_WEBHOOKS: 'off' });
  }, 90_000);
  afterAll(async () => {
    await stopAllServices();
    await database?.close();
  });

  test('backends terminated during an import and reads: 503, no partial data, recovery, the import runs again', async () => {
    const reads = readLoop(['/api/v1/heats?limit=5', '/healthz', '/api/v1/mills', '/api/v1/alerts?limit=5']);
    const started = Date.now();
    const importing = postImport();
    // Wait until the import is inside its transaction (its archive row exists, status received).
    for (;;) {
      const [row] = rowsOf<{ n: number }>(await database.db.execute(sql`select count(*)::int as n from imports where status = 'received'`));
      if (row.n > 0) break;
      if (Date.now() - started > 60_000) throw new Error('the import never started');
      await new Promise((r) => setTimeout(r, 20));
    }
    await new Promise((r) => setTimeout(r, 300));
    const cut = await cutServiceConnections();
    expect(cut).toBeGreaterThan(0);
    const answer = await importing;
    const answerBody = await answer.json();
    expect(answer.status, JSON.stringify(answerBody).slice(0, 500)).toBe(503);
    expect(answerBody.error.code).toBe('database_unavailable');
    expect(answer.headers.get('retry-after')).toBe('5');
    await new Promise((r) => setTimeout(r, 500));
    await reads.stop();

    // The process is up and answered every read: 200 or 503, never 500, never a refused connection.
    expect(service.alive(), service.output()).toBe(true);
    expect(reads.seen.filter((s) => s !== 200 && s !== 503), [...reads.codes].join('; ')).toEqual([]);
    for (const c of reads.codes) expect(c).toMatch(/^503 database_unavailable retry-after=5$/);
    const health = await fetch(`${service.url}/healthz`);
    expect(health.status).toBe(200);

    // Nothing of the cut import was stored; its archive row says it did not finish.
    expect(await counts()).toMatchObject({ heats: 0, readings: 0, accepted: 0, unfinished: 1, alerts: 0 });
    // Sent again, it is stored whole.
    const again = await postImport();
    expect(again.status).toBe(201);
    await again.arrayBuffer();
    expect(await counts()).toMatchObject({ heats: N, readings: N * 8, accepted: 1, doubled: 0 });
    console.info(`[faults, postgres] cut ${cut} backend(s) mid-import; reads during the cut: ${reads.seen.length} (${reads.seen.filter((s) => s === 503).length} answered 503)`);
  }, 180_000);

  test('connections cut twelve times over (more than the pool holds) while writes run: each answer 201 or 503, then all is well', async () => {
    const statuses: number[] = [];
    const certificates = variedCertificates(12 * 4, { prefix: 'R', seed: 1612 });
    for (let round = 0; round < 12; round++) {
      const writes = certificates.slice(round * 4, round * 4 + 4).map((c) =>
        fetch(`${service.url}/api/v1/certificates?createMissing=true`, { method: 'POST', headers: { 'content-type': 'application/json' }, body: JSON.stringify(c) }).then(async (r) => {
          statuses.push(r.status);
          await r.arrayBuffer();
        }),
      );
      await new Promise((r) => setTimeout(r, round % 3 === 0 ? 0 : 5 * round));
      await cutServiceConnections();
      await Promise.all(writes);
    }
    expect(statuses.filter((s) => s !== 201 && s !== 503)).toEqual([]);
    expect(service.alive(), service.output()).toBe(true);
    // No connection leaked: a read answers at once, and a write goes through.
    const t0 = Date.now();
    const read = await fetch(`${service.url}/api/v1/mills`);
    expect(read.status).toBe(200);
    await read.arrayBuffer();
    expect(Date.now() - t0).toBeLessThan(4000); // below the 5 s connect timeout: no waiting for a leaked client
    const write = await fetch(`${service.url}/api/v1/certificates?createMissing=true`, { method: 'POST', headers: { 'content-type': 'application/json' }, body: JSON.stringify(certificate({ heatNumber: 'AFTER-CUTS' })) });
    expect(write.status).toBe(201);
    await write.arrayBuffer();
    // Every certificate is stored whole or not at all; each 201 is stored (a 503 that hit the commit itself may or may not be).
    const [row] = rowsOf<{ heats: number; bad: number }>(
      await database.db.execute(sql`select count(*)::int as heats, count(*) filter (where (select count(*) from end_quench_readings r join end_quench_tests t on t.id = r.test_id where t.heat_id = h.id) <> 8)::int as bad from heats h where h.heat_number like 'R%'`),
    );
    expect(row.bad).toBe(0);
    expect(row.heats).toBeGreaterThanOrEqual(statuses.filter((s) => s === 201).length);
    expect(row.heats).toBeLessThanOrEqual(statuses.length);
    console.info(`[faults, postgres] 12 cuts under writes: ${statuses.filter((s) => s === 201).length} stored (201), ${statuses.filter((s) => s === 503).length} answered 503`);
  }, 120_000);

  test('a transaction that meets a dead connection at BEGIN does not leak its pool client', async (ctx) => {
    const url = new URL(database.url!);
    url.searchParams.set('application_name', 'endquench_fault_pool');
    const small = await openDatabase({ url: url.toString(), poolMax: 2, connectTimeoutMs: 2000 });
    try {
      // The race (a client handed out in the moment between the server ending its backend and the
      // client noticing) is hit in roughly one try in ten: keep trying until it was hit a few times.
      let failed = 0;
      let tries = 0;
      for (; tries < 400 && failed < 4; tries++) {
        await small.db.execute(sql`select 1`); // an idle client in the pool
        await admin(`select pg_terminate_backend(pid) from pg_stat_activity where datname = $1 and application_name = 'endquench_fault_pool'`, [dbName]);
        try {
          await small.db.transaction(async (tx) => tx.execute(sql`select 1`));
        } catch (error) {
          expect(isDatabaseUnavailable(error), String(error)).toBe(true);
          failed++;
        }
      }
      if (failed === 0) {
        // Timing decides whether the race is hit at all (on a busy machine it is, about one try in ten).
        console.info(`[faults, postgres] no transaction met a dead connection in ${tries} tries: the leak check did not run`);
        ctx.skip();
      }
      // More failures than the pool holds: had any leaked, this would wait out the 2 s connect timeout and fail.
      const [row] = rowsOf<{ ok: number }>(await small.db.transaction(async (tx) => tx.execute(sql`select 1 as ok`)));
      expect(row.ok).toBe(1);
      console.info(`[faults, postgres] pool of 2: ${failed} of ${tries} transactions met a dead connection; the pool still serves`);
    } finally {
      await small.close();
    }
  }, 60_000);

  test('the database gone for a while: /healthz and the API answer 503, the service recovers when it is back', async () => {
    const away = `${dbName}_away`;
    // Rename needs no connection on the database: cut them (the test's own pool too) until it succeeds.
    for (let i = 0; ; i++) {
      await admin(`select pg_terminate_backend(pid) from pg_stat_activity where datname = $1 and pid <> pg_backend_pid()`, [dbName]);
      try {
        await admin(`alter database ${dbName} rename to ${away}`);
        break;
      } catch (error) {
        if (i > 50) throw error;
      }
    }
    try {
      const health = await fetch(`${service.url}/healthz`);
      expect(health.status).toBe(503);
      expect((await health.json()).error.code).toBe('database_unavailable');
      for (const path of ['/api/v1/heats?limit=5', '/api/v1/mills', '/api/v1/alerts']) {
        const r = await fetch(`${service.url}${path}`);
        expect(r.status, path).toBe(503);
        expect((await r.json()).error.code).toBe('database_unavailable');
        expect(r.headers.get('retry-after')).toBe('5');
      }
      const write = await fetch(`${service.url}/api/v1/certificates?createMissing=true`, { method: 'POST', headers: { 'content-type': 'application/json' }, body: JSON.stringify(certificate({ heatNumber: 'GONE-1' })) });
      expect(write.status).toBe(503);
      await write.arrayBuffer();
      expect(service.alive(), service.output()).toBe(true);
    } finally {
      await admin(`alter database ${away} rename to ${dbName}`);
    }
    // Back: the service answers again without a restart.
    let status = 0;
    for (let i = 0; i < 100 && status !== 200; i++) {
      status = (await fetch(`${service.url}/healthz`)).status;
      if (status !== 200) await new Promise((r) => setTimeout(r, 100));
    }
    expect(status).toBe(200);
    const heats = await fetch(`${service.url}/api/v1/heats?limit=1`);
    expect(heats.status).toBe(200);
    await heats.arrayBuffer();
    const write = await fetch(`${service.url}/api/v1/certificates?createMissing=true`, { method: 'POST', headers: { 'content-type': 'application/json' }, body: JSON.stringify(certificate({ heatNumber: 'BACK-1' })) });
    expect(write.status).toBe(201);
    await write.arrayBuffer();
    expect(service.alive()).toBe(true);
  }, 120_000);
});
if (!onServer) test.skip('database connection loss: needs a PostgreSQL server (set TEST_DATABASE_URL)', () => {});
