// One database module: a PostgreSQL server through a node-postgres pool when a URL is given, otherwise
// an embedded PGlite database kept in a data directory. Both expose the same drizzle API, so every
// query in src/db runs unchanged on either.
import { mkdirSync } from 'node:fs';
import { dirname, join } from 'node:path';
import { fileURLToPath } from 'node:url';
import type { PgDatabase, PgQueryResultHKT } from 'drizzle-orm/pg-core';
import { sql } from 'drizzle-orm';
import * as schema from './schema.ts';

export type Schema = typeof schema;
export type Db = PgDatabase<PgQueryResultHKT, Schema>;
/** A transaction or the database itself: queries accept either. */
export type Executor = Parameters<Parameters<Db['transaction']>[0]>[0] | Db;

export interface Database {
  db: Db;
  kind: 'postgres' | 'pglite';
  /** Runs the committed SQL migrations (idempotent). */
  migrate(): Promise<void>;
  close(): Promise<void>;
}

const migrationsFolder = join(dirname(fileURLToPath(import.meta.url)), '..', '..', 'drizzle');

export interface OpenOptions {
  /** postgres:// URL of a server; when absent, PGlite in dataDir (or in memory when dataDir is null). */
  url?: string;
  dataDir?: string | null;
  /** Pool size for a server connection. */
  poolMax?: number;
  /** How long a request waits for a server connection before it fails (and the API answers 503); default 5 s. */
  connectTimeoutMs?: number;
  /** Told about connections the server dropped (pg_terminate_backend, restart, network). */
  onConnectionError?: (error: Error) => void;
}

export async function openDatabase(options: OpenOptions): Promise<Database> {
  if (options.url) return openPostgres(options.url, options.poolMax ?? 10, options.connectTimeoutMs ?? 5_000, options.onConnectionError);
  return openPglite(options.dataDir ?? null);
}

async function openPostgres(url: string, max: number, connectTimeoutMs: number, onConnectionError?: (error: Error) => void): Promise<Database> {
  const { default: pg } = await import('pg');
  const { drizzle } = await import('drizzle-orm/node-postgres');
  const { migrate } = await import('drizzle-orm/node-postgres/migrator');
  // keepAlive: a connection whose server vanished is noticed by TCP rather than held open.
  const pool = new pg.Pool({ connectionString: url, max, connectionTimeoutMillis: connectTimeoutMs, keepAlive: true });
  const report = (error: Error) => onConnectionError?.(error);
  // A dropped idle connection must not crash the process (the pool removes it).
  pool.on('error', report);
  // Nor a dropped connection that is checked out (inside a transaction, between two statements):
  // node-postgres emits 'error' on that client, and an 'error' event nobody listens to ends the
  // process. The statement in flight fails (the API answers 503); the broken client is not queryable
  // any more, so the pool discards it on release and opens a fresh one for the next request.
  pool.on('connect', (client) => client.on('error', report));
  // A transaction's client whose connection died goes back to the pool at once, to be discarded: the
  // caller may never release it (drizzle's transaction() sends BEGIN before its try block, so a dead
  // connection there leaks the client), and ten leaked clients would leave every request waiting.
  const connect = pool.connect.bind(pool) as (callback?: unknown) => unknown;
  (pool as unknown as { connect: (callback?: unknown) => unknown }).connect = (callback?: unknown) =>
    typeof callback === 'function' ? connect(callback) : (connect() as Promise<import('pg').PoolClient>).then(releaseWhenBroken);
  const db = drizzle(pool, { schema }) as unknown as Db;
  return {
    db,
    kind: 'postgres',
    migrate: () => migrate(db as never, { migrationsFolder }),
    close: () => pool.end(),
  };
}

/** Makes a checked-out client's release() idempotent and calls it (with the error) when its connection dies. */
function releaseWhenBroken(client: import('pg').PoolClient): import('pg').PoolClient {
  const release = client.release.bind(client);
  let released = false;
  const onError = (error: Error) => {
    if (released) return;
    released = true;
    release(error);
  };
  client.on('error', onError);
  client.release = (error?: Error | boolean) => {
    client.removeListener('error', onError);
    if (released) return;
    released = true;
    release(error);
  };
  return client;
}

async function openPglite(dataDir: string | null): Promise<Database> {
  const { PGlite } = await import('@electric-sql/pglite');
  const { drizzle } = await import('drizzle-orm/pglite');
  const { migrate } = await import('drizzle-orm/pglite/migrator');
  if (dataDir) mkdirSync(dataDir, { recursive: true });
  const client = dataDir ? await PGlite.create(join(dataDir, 'pglite')) : await PGlite.create();
  const db = drizzle(client, { schema }) as unknown as Db;
  return {
    db,
    kind: 'pglite',
    migrate: () => migrate(db as never, { migrationsFolder }),
    close: () => client.close(),
  };
}

/** Cheap liveness check used by /healthz. */
export async function ping(db: Db): Promise<void> {
  await db.execute(sql`select 1`);
}

/** Rows of a raw query, whichever driver answered. */
export function rowsOf<T>(result: unknown): T[] {
  return (result as { rows: T[] }).rows;
}

/**
 * JSON text for a jsonb parameter. PostgreSQL's jsonb cannot hold the escape \u0000 nor an unpaired
 * surrogate escape (manual §8.14, "JSON Types"), so such characters that came in with a document (and
 * are echoed in its report) are stored as U+FFFD, the replacement character, instead of failing the statement.
 */
export function jsonbText(value: unknown): string {
  const text = JSON.stringify(value, (_key, v: unknown) => (typeof v === 'string' ? wellFormed(v) : v));
  // Object keys do not pass through the replacer: catch an escaped NUL left in one.
  return text.replace(/(?<!\\)((?:\\\\)*)\\u0000/g, '$1\\ufffd');
}

/** NUL and unpaired surrogates (which jsonb refuses too) become U+FFFD. */
function wellFormed(text: string): string {
  return text.replace(/\u0000/g, '\ufffd').replace(/[\uD800-\uDBFF](?![\uDC00-\uDFFF])|(?<![\uD800-\uDBFF])[\uDC00-\uDFFF]/g, '\ufffd');
}
