// The service itself: without tokens it refuses to serve a non-local address unless told to; over a
// real socket, a loopback caller is the local administrator until a token exists.
import { mkdtempSync, rmSync } from 'node:fs';
import { tmpdir } from 'node:os';
import { join } from 'node:path';
import { afterAll, beforeAll, describe, expect, test } from 'vitest';
import { startService, OpenBindRefused } from '../../src/server.ts';
import { openDatabase } from '../../src/db/connection.ts';
import { createToken } from '../../src/db/tokens.ts';
import { createLogger } from '../../src/logger.ts';
import { createTestDatabase, type TestDatabase } from '../helpers/testDatabase.ts';
import type { Config } from '../../src/config.ts';

// On the server each service opens its own pool on a fresh database; otherwise an on-disk PGlite
// directory, opened by one holder at a time.
let server: TestDatabase | null = null;
let dataDir = '';
beforeAll(async () => {
  dataDir = mkdtempSync(join(tmpdir(), 'endquench-access-'));
  if (process.env.TEST_DATABASE_URL) server = await createTestDatabase();
});
afterAll(async () => {
  await server?.close();
  rmSync(dataDir, { recursive: true, force: true });
});

const config = (host: string, allowOpen = false): Config => ({
  port: 0,
  host,
  databaseUrl: server?.url ?? undefined,
  dataDir,
  logLevel: 'silent',
  allowOpen,
  webhooks: { enabled: true, maxAttempts: 3, intervalMs: 50, timeoutMs: 1000, baseDelayMs: 100 },
});
const logger = createLogger('silent');

describe('binding without tokens', () => {
  test('a non-local HOST is refused with a message saying what to do', async () => {
    const start = startService(config('0.0.0.0'), logger);
    await expect(start).rejects.toBeInstanceOf(OpenBindRefused);
    await expect(start).rejects.toThrow(/ENDQUENCH_ALLOW_OPEN=1/);
  });

  test('a loopback HOST serves the local caller as administrator over a real socket', async () => {
    const service = await startService(config('127.0.0.1'), logger);
    try {
      const r = await fetch(`${service.url}/api/v1/mills`, { method: 'POST', headers: { 'content-type': 'application/json' }, body: JSON.stringify({ code: 'BRENNWALD', name: 'Brennwald (invented)' }) });
      expect(r.status).toBe(200);
    } finally {
      await service.stop();
    }
  });

  test('ENDQUENCH_ALLOW_OPEN (allowOpen) lets it serve a non-local HOST', async () => {
    const service = await startService(config('0.0.0.0', true), logger);
    try {
      const port = new URL(service.url).port;
      expect((await fetch(`http://127.0.0.1:${port}/healthz`)).status).toBe(200);
    } finally {
      await service.stop();
    }
  });
});

describe('binding with a token', () => {
  test('a non-local HOST starts, and callers need the token', async () => {
    const database = server ? await openDatabase({ url: server.url!, poolMax: 1 }) : await openDatabase({ dataDir });
    await database.migrate();
    const { secret } = await createToken(database.db, { name: 'ops', role: 'viewer' });
    await database.close();
    const service = await startService(config('0.0.0.0'), logger);
    try {
      const base = `http://127.0.0.1:${new URL(service.url).port}`;
      expect((await fetch(`${base}/api/v1/mills`)).status).toBe(401);
      const ok = await fetch(`${base}/api/v1/mills`, { headers: { authorization: `Bearer ${secret}` } });
      expect(ok.status).toBe(200);
      expect((await ok.json()).map((m: { code: string }) => m.code)).toEqual(['BRENNWALD']);
    } finally {
      await service.stop();
    }
  });
});
