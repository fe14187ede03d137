// The database a test file runs against, chosen in this order:
//  1. TEST_DATABASE_URL: a PostgreSQL server; each test file gets a fresh database of its own, created
//     here and dropped at the end (a whole database rather than a schema, because the committed
//     migrations qualify foreign keys with "public");
//  2. a Docker engine answering: a throw-away PostgreSQL 15 container (testcontainers);
//  3. otherwise an in-memory PGlite.
import { existsSync } from 'node:fs';
import { randomBytes } from 'node:crypto';
import { openDatabase, type Database } from '../../src/db/connection.ts';

export interface TestDatabase extends Database {
  /** Where it runs, for test names and logs. */
  label: string;
  /** A URL other processes can connect to (null for in-memory PGlite). */
  url: string | null;
}

export async function createTestDatabase(): Promise<TestDatabase> {
  const serverUrl = process.env.TEST_DATABASE_URL;
  if (serverUrl) return onServer(serverUrl);
  // TEST_DATABASE=pglite skips the Docker probe (CI's first pass runs on the embedded database on purpose).
  if (process.env.TEST_DATABASE !== 'pglite' && dockerMayAnswer()) {
    const viaDocker = await inContainer().catch(() => null);
    if (viaDocker) return viaDocker;
  }
  const database = await openDatabase({ dataDir: null });
  await database.migrate();
  return { ...database, label: 'pglite', url: null };
}

async function onServer(serverUrl: string): Promise<TestDatabase> {
  const { default: pg } = await import('pg');
  const name = `endquench_test_${process.pid}_${randomBytes(4).toString('hex')}`;
  const admin = new pg.Client({ connectionString: serverUrl });
  await admin.connect();
  await admin.query(`create database ${name}`);
  await admin.end();
  const url = new URL(serverUrl);
  url.pathname = `/${name}`;
  const database = await openDatabase({ url: url.toString(), poolMax: 5 });
  await database.migrate();
  return {
    ...database,
    label: 'postgres',
    url: url.toString(),
    close: async () => {
      await database.close();
      const dropper = new pg.Client({ connectionString: serverUrl });
      await dropper.connect();
      await dropper.query(`drop database if exists ${name} with (force)`);
      await dropper.end();
    },
  };
}

function dockerMayAnswer(): boolean {
  return Boolean(process.env.DOCKER_HOST) || existsSync('/var/run/docker.sock');
}

async function inContainer(): Promise<TestDatabase> {
  const { PostgreSqlContainer } = await import('@testcontainers/postgresql');
  const container = await new PostgreSqlContainer('postgres:15-alpine').start();
  const url = container.getConnectionUri();
  const database = await openDatabase({ url, poolMax: 5 });
  await database.migrate();
  return {
    ...database,
    label: 'postgres (container)',
    url,
    close: async () => {
      await database.close();
      await container.stop();
    },
  };
}
