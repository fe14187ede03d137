// Versioned monitoring configuration per grade: each save is a new version (who, when, why); the newest
// is in force. The settings are stored as overrides of the deployment's alert settings.
import { sql } from 'drizzle-orm';
import { rowsOf, type Db, type Executor } from './connection.ts';

export interface MonitoringConfigRecord {
  id: number;
  grade: string;
  version: number;
  settings: Record<string, unknown>;
  reason: string;
  createdBy: string | null;
  createdAt: string;
}

export class MonitoringConfigGradeError extends Error {
  override name = 'MonitoringConfigGradeError';
}

const select = sql`
  select c.id, g.code as grade, c.version, c.settings, c.reason, c.created_by, c.created_at
  from monitoring_configs c join grades g on g.id = c.grade_id`;

function toRecord(r: Record<string, unknown>): MonitoringConfigRecord {
  return {
    id: Number(r.id),
    grade: String(r.grade),
    version: Number(r.version),
    settings: (typeof r.settings === 'string' ? JSON.parse(r.settings) : r.settings) as Record<string, unknown>,
    reason: String(r.reason),
    createdBy: (r.created_by as string | null) ?? null,
    createdAt: new Date(r.created_at as string).toISOString(),
  };
}

/** Stores a new version for the grade (versions of one grade are numbered in turn under a lock). */
export async function saveMonitoringConfig(db: Db, input: { grade: string; settings: Record<string, unknown>; reason: string; createdBy: string | null }): Promise<MonitoringConfigRecord> {
  const id = await db.transaction(async (tx) => {
    const [g] = rowsOf<{ id: number }>(await tx.execute(sql`select id from grades where code = ${input.grade}`));
    if (!g) throw new MonitoringConfigGradeError(`grade ${input.grade} is not on file`);
    await tx.execute(sql`select pg_advisory_xact_lock(hashtext(${`monitoring-config:${g.id}`}))`);
    const [row] = rowsOf<{ id: number }>(
      await tx.execute(sql`
        insert into monitoring_configs (grade_id, version, settings, reason, created_by)
        select ${g.id}, coalesce(max(version), 0) + 1, ${JSON.stringify(input.settings)}::jsonb, ${input.reason}, ${input.createdBy}
        from monitoring_configs where grade_id = ${g.id}
        returning id`),
    );
    return Number(row.id);
  });
  return toRecord(rowsOf<Record<string, unknown>>(await db.execute(sql`${select} where c.id = ${id}`))[0]);
}

/** Every version of a grade's configuration, newest first. */
export async function listMonitoringConfigs(db: Db | Executor, grade: string): Promise<MonitoringConfigRecord[]> {
  return rowsOf<Record<string, unknown>>(await db.execute(sql`${select} where g.code = ${grade} order by c.version desc`)).map(toRecord);
}

/** The version in force for a grade, or null. */
export async function currentMonitoringConfig(db: Db | Executor, grade: string): Promise<MonitoringConfigRecord | null> {
  return rowsOf<Record<string, unknown>>(await db.execute(sql`${select} where g.code = ${grade} order by c.version desc limit 1`)).map(toRecord)[0] ?? null;
}
