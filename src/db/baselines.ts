// Frozen phase I control limits (baselines): store, retire, and look up the one in force for a series.
// A new baseline for the same series (mill, grade, distance, source) retires the previous one in the same
// transaction, so at most one is active per series.
import { sql } from 'drizzle-orm';
import { rowsOf, type Db, type Executor } from './connection.ts';

export type BaselineSource = 'mill_certificate' | 'receiving_inspection' | 'both';

export interface BaselineInput {
  mill: string;
  grade: string;
  distanceMm: number;
  source: BaselineSource;
  windowFrom: string;
  windowTo: string;
  /** The frozen limits (a plain JSON object from src/stats/phaseOne.ts). */
  limits: unknown;
  reason: string | null;
  createdBy: string | null;
}

export interface BaselineRecord extends BaselineInput {
  id: number;
  createdAt: string;
  retiredAt: string | null;
}

/** Distances are compared within this tolerance (mm): a distance converted from sixteenths is not a short decimal. */
export const DISTANCE_TOLERANCE_MM = 1e-6;

const selectBaselines = sql`
  select b.id, m.code as mill, g.code as grade, b.distance_mm, b.source, b.window_from::text as window_from,
    b.window_to::text as window_to, b.limits, b.reason, b.created_by, b.created_at, b.retired_at
  from baselines b join mills m on m.id = b.mill_id join grades g on g.id = b.grade_id`;

function toRecord(r: Record<string, unknown>): BaselineRecord {
  return {
    id: Number(r.id),
    mill: String(r.mill),
    grade: String(r.grade),
    distanceMm: Number(r.distance_mm),
    source: r.source as BaselineSource,
    windowFrom: String(r.window_from),
    windowTo: String(r.window_to),
    limits: typeof r.limits === 'string' ? JSON.parse(r.limits) : r.limits,
    reason: (r.reason as string | null) ?? null,
    createdBy: (r.created_by as string | null) ?? null,
    createdAt: new Date(r.created_at as string).toISOString(),
    retiredAt: r.retired_at ? new Date(r.retired_at as string).toISOString() : null,
  };
}

export class BaselineReferenceError extends Error {}

/** Stores baselines (one per distance), retiring the active one of each series first. One transaction. */
export async function insertBaselines(db: Db, inputs: readonly BaselineInput[]): Promise<BaselineRecord[]> {
  const ids = await db.transaction(async (tx) => {
    const out: number[] = [];
    for (const b of inputs) {
      const [ref] = rowsOf<{ mill_id: number; grade_id: number }>(
        await tx.execute(sql`select m.id as mill_id, g.id as grade_id from mills m, grades g where m.code = ${b.mill} and g.code = ${b.grade}`),
      );
      if (!ref) throw new BaselineReferenceError(`mill ${b.mill} or grade ${b.grade} is not on file`);
      // Two freezes of one series take turns, so exactly one baseline stays in force.
      await tx.execute(sql`select pg_advisory_xact_lock(hashtext(${`baseline:${ref.mill_id}:${ref.grade_id}:${b.source}`}))`);
      await tx.execute(sql`
        update baselines set retired_at = now()
        where mill_id = ${ref.mill_id} and grade_id = ${ref.grade_id} and source = ${b.source}
          and abs(distance_mm - ${b.distanceMm}) <= ${DISTANCE_TOLERANCE_MM} and retired_at is null`);
      const [row] = rowsOf<{ id: number }>(
        await tx.execute(sql`
          insert into baselines (mill_id, grade_id, distance_mm, source, window_from, window_to, limits, reason, created_by)
          values (${ref.mill_id}, ${ref.grade_id}, ${b.distanceMm}, ${b.source}, ${b.windowFrom}, ${b.windowTo},
            ${JSON.stringify(b.limits)}::jsonb, ${b.reason}, ${b.createdBy})
          returning id`),
      );
      out.push(Number(row.id));
    }
    return out;
  });
  if (ids.length === 0) return [];
  return rowsOf<Record<string, unknown>>(
    await db.execute(sql`${selectBaselines} where b.id = any(${sql.param(ids)}::int[]) order by b.distance_mm`),
  ).map(toRecord);
}

export interface BaselineFilter {
  grade?: string;
  mill?: string;
  source?: BaselineSource;
  /** Include retired baselines (default false). */
  includeRetired?: boolean;
}

export async function listBaselines(db: Db | Executor, filter: BaselineFilter = {}): Promise<BaselineRecord[]> {
  const rows = rowsOf<Record<string, unknown>>(
    await db.execute(sql`${selectBaselines}
      where true
        ${filter.grade ? sql`and g.code = ${filter.grade}` : sql``}
        ${filter.mill ? sql`and m.code = ${filter.mill}` : sql``}
        ${filter.source ? sql`and b.source = ${filter.source}` : sql``}
        ${filter.includeRetired ? sql`` : sql`and b.retired_at is null`}
      order by g.code, m.code, b.distance_mm, b.id desc`),
  );
  return rows.map(toRecord);
}

/** The active baseline of one series at one distance, or null. */
export async function activeBaseline(
  db: Db | Executor,
  series: { grade: string; mill: string; source: BaselineSource; distanceMm: number },
): Promise<BaselineRecord | null> {
  const all = await listBaselines(db, { grade: series.grade, mill: series.mill, source: series.source });
  return all.find((b) => Math.abs(b.distanceMm - series.distanceMm) <= DISTANCE_TOLERANCE_MM) ?? null;
}
