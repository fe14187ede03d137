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
}

export async function openDatabase(options: OpenOptions): Promise<Database> {
  if (options.url) return openPostgres(options.url, options.poolMax ?? 10);
  return openPglite(options.dataDir ?? null);
}

async function openPostgres(url: string, max: number): Promise<Database> {
  const { default: pg } = await import('pg');
  const { drizzle } = await import('drizzle-orm/node-postgres');
  const { migrate } = await import('drizzle-orm/node-postgres/migrator');
  const pool = new pg.Pool({ connectionString: url, max });
  // A dropped idle connection must not crash the process.
  pool.on('error', () => {});
  const db = drizzle(pool, { schema }) as unknown as Db;
  return {
    db,
    kind: 'postgres',
    migrate: () => migrate(db as never, { migrationsFolder }),
    close: () => pool.end(),
  };
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
