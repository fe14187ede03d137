// Stored chemistry-to-hardness models: versioned per grade and optional mill, so every prediction can be
// traced to the model (and its training window) that made it.
import { sql } from 'drizzle-orm';
import { rowsOf, type Db, type Executor } from './connection.ts';

export interface ModelInput {
  grade: string;
  mill: string | null;
  trainedFrom: string | null;
  trainedTo: string | null;
  source: string;
  predictors: string[];
  /** Per distance fit (plain JSON). */
  fits: unknown;
  residualCorrelation: unknown;
  heatCount: number;
  createdBy: string | null;
}

export interface ModelRecord<F = unknown, R = unknown> {
  id: number;
  grade: string;
  mill: string | null;
  version: number;
  trainedFrom: string | null;
  trainedTo: string | null;
  source: string;
  predictors: string[];
  fits: F;
  residualCorrelation: R | null;
  heatCount: number;
  createdBy: string | null;
  createdAt: string;
}

export class ModelReferenceError extends Error {}

const parse = (v: unknown) => (typeof v === 'string' ? JSON.parse(v) : v);

const selectModels = sql`
  select md.id, g.code as grade, m.code as mill, md.version, md.trained_from::text as trained_from, md.trained_to::text as trained_to,
    md.source, md.predictors, md.fits, md.residual_correlation, md.heat_count, md.created_by, md.created_at
  from models md join grades g on g.id = md.grade_id left join mills m on m.id = md.mill_id`;

function toRecord(r: Record<string, unknown>): ModelRecord {
  return {
    id: Number(r.id),
    grade: String(r.grade),
    mill: (r.mill as string | null) ?? null,
    version: Number(r.version),
    trainedFrom: (r.trained_from as string | null) ?? null,
    trainedTo: (r.trained_to as string | null) ?? null,
    source: String(r.source),
    predictors: parse(r.predictors) as string[],
    fits: parse(r.fits),
    residualCorrelation: parse(r.residual_correlation) ?? null,
    heatCount: Number(r.heat_count),
    createdBy: (r.created_by as string | null) ?? null,
    createdAt: new Date(r.created_at as string).toISOString(),
  };
}

/** Stores a model as the next version for its grade and mill (the grade row is locked meanwhile). */
export async function insertModel(db: Db, input: ModelInput): Promise<ModelRecord> {
  const id = await db.transaction(async (tx) => {
    const [grade] = rowsOf<{ id: number }>(await tx.execute(sql`select id from grades where code = ${input.grade} for update`));
    if (!grade) throw new ModelReferenceError(`grade ${input.grade} is not on file`);
    let millId: number | null = null;
    if (input.mill) {
      const [mill] = rowsOf<{ id: number }>(await tx.execute(sql`select id from mills where code = ${input.mill}`));
      if (!mill) throw new ModelReferenceError(`mill ${input.mill} is not on file`);
      millId = mill.id;
    }
    const [{ next }] = rowsOf<{ next: number }>(
      await tx.execute(sql`select coalesce(max(version), 0) + 1 as next from models where grade_id = ${grade.id}
        and ${millId === null ? sql`mill_id is null` : sql`mill_id = ${millId}`}`),
    );
    const [row] = rowsOf<{ id: number }>(
      await tx.execute(sql`
        insert into models (grade_id, mill_id, version, trained_from, trained_to, source, predictors, fits, residual_correlation, heat_count, created_by)
        values (${grade.id}, ${millId}, ${next}, ${input.trainedFrom}, ${input.trainedTo}, ${input.source},
          ${JSON.stringify(input.predictors)}::jsonb, ${JSON.stringify(input.fits)}::jsonb,
          ${input.residualCorrelation === null ? null : JSON.stringify(input.residualCorrelation)}::jsonb, ${input.heatCount}, ${input.createdBy})
        returning id`),
    );
    return Number(row.id);
  });
  return (await getModel(db, id))!;
}

export async function getModel(db: Db | Executor, id: number): Promise<ModelRecord | null> {
  const [row] = rowsOf<Record<string, unknown>>(await db.execute(sql`${selectModels} where md.id = ${id}`));
  return row ? toRecord(row) : null;
}

/** The newest model of a grade for a mill (mill null: the grade-wide model). */
export async function latestModel(db: Db | Executor, grade: string, mill: string | null): Promise<ModelRecord | null> {
  const [row] = rowsOf<Record<string, unknown>>(
    await db.execute(sql`${selectModels} where g.code = ${grade} and ${mill === null ? sql`md.mill_id is null` : sql`m.code = ${mill}`}
      order by md.version desc limit 1`),
  );
  return row ? toRecord(row) : null;
}

/** Model headers (no fits) of a grade, newest first. */
export async function listModels(db: Db | Executor, grade?: string): Promise<Array<Omit<ModelRecord, 'fits' | 'residualCorrelation'>>> {
  const rows = rowsOf<Record<string, unknown>>(
    await db.execute(sql`${selectModels} where true ${grade ? sql`and g.code = ${grade}` : sql``} order by g.code, m.code nulls first, md.version desc`),
  );
  return rows.map((r) => {
    const { fits: _f, residualCorrelation: _r, ...rest } = toRecord(r);
    return rest;
  });
}

/** Grade and mill pairs with enough current mill-certificate curves to be worth a model (for refits). */
export async function seriesWithHistory(db: Db | Executor, minHeats: number): Promise<Array<{ grade: string; mill: string; heats: number }>> {
  const rows = rowsOf<{ grade: string; mill: string; heats: number }>(
    await db.execute(sql`
      select g.code as grade, m.code as mill, count(distinct h.id)::int as heats
      from heats h join grades g on g.id = h.grade_id join mills m on m.id = h.mill_id
      where exists (select 1 from end_quench_tests t where t.heat_id = h.id and t.source = 'mill_certificate')
      group by g.code, m.code having count(distinct h.id) >= ${minHeats}
      order by g.code, m.code`),
  );
  return rows.map((r) => ({ grade: r.grade, mill: r.mill, heats: Number(r.heats) }));
}
