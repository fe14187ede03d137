// Reading heats: the list with each heat's current certificate, and one heat with its whole history.
import { sql } from 'drizzle-orm';
import { rowsOf, type Db } from './connection.ts';
import { ELEMENTS } from '../ingest/certificateSchema.ts';

export interface HeatFilter {
  mill?: string;
  grade?: string;
  /** Cast date window, inclusive (YYYY-MM-DD). */
  from?: string;
  to?: string;
  limit?: number;
  offset?: number;
  /** Restrict to one mill's heats (a mill-scoped caller). */
  millScope?: string;
  /** oldest (default): cast date, then heat number; newest: the reverse, so the first page holds the latest heats. */
  order?: 'oldest' | 'newest';
}

export type ChemistryView = Partial<Record<(typeof ELEMENTS)[number], number>> & { other?: Record<string, number> };

export interface HeatSummary {
  id: number;
  mill: string;
  grade: string;
  heatNumber: string;
  castDate: string;
  revision: number;
  certificateNumber: string | null;
  grainSize: number | null;
  chemistry: ChemistryView;
}

const chemistryColumns = ELEMENTS.map((e) => e.toLowerCase());

function chemistryOf(row: Record<string, unknown>): ChemistryView {
  const out: ChemistryView = {};
  for (const e of ELEMENTS) {
    const v = row[e.toLowerCase()];
    if (v !== null && v !== undefined) out[e] = Number(v);
  }
  const other = row.other_elements as Record<string, number> | null;
  if (other && Object.keys(other).length) out.other = other;
  return out;
}

export async function listHeats(db: Db, filter: HeatFilter): Promise<{ total: number; heats: HeatSummary[] }> {
  const where = sql.join(
    [
      sql`true`,
      filter.mill ? sql`m.code = ${filter.mill}` : undefined,
      filter.millScope ? sql`m.code = ${filter.millScope}` : undefined,
      filter.grade ? sql`g.code = ${filter.grade}` : undefined,
      filter.from ? sql`h.cast_date >= ${filter.from}` : undefined,
      filter.to ? sql`h.cast_date <= ${filter.to}` : undefined,
    ].filter((x): x is ReturnType<typeof sql> => x !== undefined),
    sql` and `,
  );
  const [{ total }] = rowsOf<{ total: number }>(
    await db.execute(sql`select count(*)::int as total from heats h join mills m on m.id = h.mill_id join grades g on g.id = h.grade_id where ${where}`),
  );
  const rows = rowsOf<Record<string, unknown>>(
    await db.execute(sql`
      select h.id, m.code as mill, g.code as grade, h.heat_number, h.cast_date::text as cast_date,
        c.revision, c.certificate_number, c.grain_size, c.other_elements, ${sql.raw(chemistryColumns.map((e) => `c.${e}`).join(', '))}
      from heats h
      join mills m on m.id = h.mill_id
      join grades g on g.id = h.grade_id
      join lateral (select * from certificates c where c.heat_id = h.id order by revision desc limit 1) c on true
      where ${where}
      order by ${filter.order === 'newest' ? sql`h.cast_date desc, h.heat_number desc` : sql`h.cast_date, h.heat_number`}
      limit ${filter.limit ?? 500} offset ${filter.offset ?? 0}`),
  );
  return {
    total,
    heats: rows.map((r) => ({
      id: Number(r.id),
      mill: String(r.mill),
      grade: String(r.grade),
      heatNumber: String(r.heat_number),
      castDate: String(r.cast_date),
      revision: Number(r.revision),
      certificateNumber: (r.certificate_number as string | null) ?? null,
      grainSize: (r.grain_size as number | null) ?? null,
      chemistry: chemistryOf(r),
    })),
  };
}

export interface TestView {
  id: number;
  source: string;
  basis: string;
  lotNumber: string | null;
  certificateRevision: number | null;
  /** True for re-tests and for curves of the current certificate revision. */
  current: boolean;
  testDate: string | null;
  austenitizingC: number | null;
  distanceSystem: string;
  laboratory: string | null;
  /** censored: a reading off the scale ('below' for "<20", 'above' for ">65"; hrc holds the bound), else null. */
  readings: Array<{ distanceMm: number; label: string; hrc: number; censored: 'below' | 'above' | null }>;
}

export interface HeatDetail extends HeatSummary {
  /** The current certificate's grain size as written when it was not one number ("5-8", "≥5", "fine"). */
  grainSizeStated: string | null;
  revisions: Array<{
    revision: number;
    certificateNumber: string | null;
    certificateDate: string | null;
    grainSize: number | null;
    chemistry: ChemistryView;
    importId: number | null;
    createdAt: string;
  }>;
  lots: Array<{ id: number; lotNumber: string; receivedDate: string | null; massKg: number | null; barDiameterMm: number | null; purchaseOrder: string | null }>;
  tests: TestView[];
}

export async function getHeat(db: Db, id: number): Promise<HeatDetail | null> {
  const [head] = rowsOf<Record<string, unknown>>(
    await db.execute(sql`
      select h.id, m.code as mill, g.code as grade, h.heat_number, h.cast_date::text as cast_date
      from heats h join mills m on m.id = h.mill_id join grades g on g.id = h.grade_id where h.id = ${id}`),
  );
  if (!head) return null;
  const revisions = rowsOf<Record<string, unknown>>(
    await db.execute(sql`
      select id, revision, certificate_number, certificate_date::text as certificate_date, grain_size, grain_size_stated, import_id, created_at,
        other_elements, ${sql.raw(chemistryColumns.join(', '))}
      from certificates where heat_id = ${id} order by revision desc`),
  );
  const lots = rowsOf<Record<string, unknown>>(
    await db.execute(sql`select id, lot_number, received_date::text as received_date, mass_kg, bar_diameter_mm, purchase_order from lots where heat_id = ${id} order by lot_number`),
  );
  const tests = rowsOf<Record<string, unknown>>(
    await db.execute(sql`
      select t.id, t.source, t.basis, l.lot_number, c.revision as certificate_revision, t.test_date::text as test_date,
        t.austenitizing_c, t.distance_system, t.laboratory,
        coalesce(json_agg(json_build_object('distanceMm', r.distance_mm, 'label', r.label, 'hrc', r.hrc, 'censored', r.censored) order by r.distance_mm)
          filter (where r.test_id is not null), '[]') as readings
      from end_quench_tests t
      left join lots l on l.id = t.lot_id
      left join certificates c on c.id = t.certificate_id
      left join end_quench_readings r on r.test_id = t.id
      where t.heat_id = ${id}
      group by t.id, l.lot_number, c.revision
      order by t.id`),
  );
  const current = revisions[0];
  const currentRevision = Number(current.revision);
  return {
    id: Number(head.id),
    mill: String(head.mill),
    grade: String(head.grade),
    heatNumber: String(head.heat_number),
    castDate: String(head.cast_date),
    revision: currentRevision,
    certificateNumber: (current.certificate_number as string | null) ?? null,
    grainSize: (current.grain_size as number | null) ?? null,
    grainSizeStated: (current.grain_size_stated as string | null) ?? null,
    chemistry: chemistryOf(current),
    revisions: revisions.map((r) => ({
      revision: Number(r.revision),
      certificateNumber: (r.certificate_number as string | null) ?? null,
      certificateDate: (r.certificate_date as string | null) ?? null,
      grainSize: (r.grain_size as number | null) ?? null,
      chemistry: chemistryOf(r),
      importId: (r.import_id as number | null) ?? null,
      createdAt: new Date(r.created_at as string).toISOString(),
    })),
    lots: lots.map((l) => ({
      id: Number(l.id),
      lotNumber: String(l.lot_number),
      receivedDate: (l.received_date as string | null) ?? null,
      massKg: (l.mass_kg as number | null) ?? null,
      barDiameterMm: (l.bar_diameter_mm as number | null) ?? null,
      purchaseOrder: (l.purchase_order as string | null) ?? null,
    })),
    tests: tests.map((t) => {
      const revision = t.certificate_revision === null ? null : Number(t.certificate_revision);
      return {
        id: Number(t.id),
        source: String(t.source),
        basis: String(t.basis),
        lotNumber: (t.lot_number as string | null) ?? null,
        certificateRevision: revision,
        current: revision === null || revision === currentRevision,
        testDate: (t.test_date as string | null) ?? null,
        austenitizingC: (t.austenitizing_c as number | null) ?? null,
        distanceSystem: String(t.distance_system),
        laboratory: (t.laboratory as string | null) ?? null,
        readings: (typeof t.readings === 'string' ? JSON.parse(t.readings) : t.readings) as TestView['readings'],
      };
    }),
  };
}
