// The one way to load the curves of a grade for analysis: every caller (API, web, alerts, reports)
// uses loadCurves. Time order is cast date, then heat number. Only current data: for mill-certificate
// curves, those of each heat's newest certificate revision; re-tests always.
import { sql } from 'drizzle-orm';
import { rowsOf, type Db, type Executor } from './connection.ts';
import { ELEMENTS } from '../ingest/certificateSchema.ts';
import type { ChemistryView } from './heats.ts';

export type SeriesSource = 'mill_certificate' | 'receiving_inspection' | 'both';

export interface CurveQuery {
  grade: string;
  mill?: string;
  /** Cast-date window, inclusive. */
  from?: string;
  to?: string;
  source?: SeriesSource;
  /**
   * Curves measured on a bar (default), calculated from chemistry (ASTM A255 §1.2; ISO 642 allows them by
   * agreement), or both. A calculated curve is not a measurement of the heat, so process statistics,
   * model training and the certificate forensics keep to measured curves unless asked.
   */
  basis?: 'measured' | 'calculated' | 'both';
}

export interface HeatCurve {
  heatId: number;
  heatNumber: string;
  mill: string;
  castDate: string;
  grainSize: number | null;
  chemistry: ChemistryView;
  testId: number;
  source: 'mill_certificate' | 'receiving_inspection' | 'outside_lab';
  lotNumber: string | null;
  /** Readings by distance in mm (a reading off the scale holds its bound, e.g. 20 for "<20"). */
  readings: Map<number, number>;
  /** The readings off the scale, by distance: 'below' ("<20": under the value held) or 'above'. Absent: none. */
  censored?: Map<number, 'below' | 'above'>;
}

const chemistryColumns = ELEMENTS.map((e) => e.toLowerCase());

export async function loadCurves(db: Db | Executor, query: CurveQuery): Promise<HeatCurve[]> {
  const source = query.source ?? 'mill_certificate';
  const basis = query.basis ?? 'measured';
  const sources =
    source === 'both' ? ['mill_certificate', 'receiving_inspection', 'outside_lab'] : source === 'receiving_inspection' ? ['receiving_inspection', 'outside_lab'] : ['mill_certificate'];
  const rows = rowsOf<Record<string, unknown>>(
    await db.execute(sql`
      with current_cert as (
        select distinct on (c.heat_id) c.* from certificates c
        join heats h on h.id = c.heat_id join grades g on g.id = h.grade_id
        ${query.mill ? sql`join mills cm on cm.id = h.mill_id` : sql``}
        where g.code = ${query.grade}
          ${query.mill ? sql`and cm.code = ${query.mill}` : sql``}
          ${query.from ? sql`and h.cast_date >= ${query.from}` : sql``}
          ${query.to ? sql`and h.cast_date <= ${query.to}` : sql``}
        order by c.heat_id, c.revision desc
      )
      select h.id as heat_id, h.heat_number, m.code as mill, h.cast_date::text as cast_date, cc.grain_size, cc.other_elements,
        ${sql.raw(chemistryColumns.map((e) => `cc.${e}`).join(', '))},
        t.id as test_id, t.source, l.lot_number,
        array_agg(r.distance_mm order by r.distance_mm) as distances, array_agg(r.hrc order by r.distance_mm) as hrcs,
        array_agg(r.censored order by r.distance_mm) filter (where r.censored is not null) as censored_sides,
        array_agg(r.distance_mm order by r.distance_mm) filter (where r.censored is not null) as censored_at
      from heats h
      join grades g on g.id = h.grade_id
      join mills m on m.id = h.mill_id
      join current_cert cc on cc.heat_id = h.id
      join end_quench_tests t on t.heat_id = h.id and (t.certificate_id is null or t.certificate_id = cc.id)
      left join lots l on l.id = t.lot_id
      join end_quench_readings r on r.test_id = t.id
      where g.code = ${query.grade}
        and t.source = any(${sql.param(sources)}::text[])
        ${basis === 'both' ? sql`` : sql`and t.basis = ${basis}`}
        ${query.mill ? sql`and m.code = ${query.mill}` : sql``}
        ${query.from ? sql`and h.cast_date >= ${query.from}` : sql``}
        ${query.to ? sql`and h.cast_date <= ${query.to}` : sql``}
      group by h.id, m.code, cc.id, cc.grain_size, cc.other_elements, ${sql.raw(chemistryColumns.map((e) => `cc.${e}`).join(', '))}, t.id, l.lot_number
      order by h.cast_date, h.heat_number, t.id`),
  );
  return rows.map((r) => {
    const chemistry: ChemistryView = {};
    for (const e of ELEMENTS) {
      const v = r[e.toLowerCase()];
      if (v !== null && v !== undefined) chemistry[e] = Number(v);
    }
    const distances = r.distances as number[];
    const hrcs = r.hrcs as number[];
    return {
      heatId: Number(r.heat_id),
      heatNumber: String(r.heat_number),
      mill: String(r.mill),
      castDate: String(r.cast_date),
      grainSize: (r.grain_size as number | null) ?? null,
      chemistry,
      testId: Number(r.test_id),
      source: r.source as HeatCurve['source'],
      lotNumber: (r.lot_number as string | null) ?? null,
      readings: new Map(distances.map((d, i) => [Number(d), Number(hrcs[i])])),
      ...(r.censored_at ? { censored: new Map((r.censored_at as number[]).map((d, i) => [Number(d), (r.censored_sides as string[])[i] as 'below' | 'above'])) } : {}),
    };
  });
}

/**
 * One value per heat at a distance: the time series a control chart or capability study uses. When a
 * heat has several tests (source = both), a receiving or outside-lab re-test overrides the mill
 * certificate (common practice: the buyer's own test decides), and the latest re-test wins.
 */
export function seriesAt(curves: HeatCurve[], distanceMm: number): Array<{ heatId: number; heatNumber: string; mill: string; castDate: string; value: number; censored?: 'below' | 'above' }> {
  const chosen = new Map<number, HeatCurve>();
  for (const c of curves) {
    if (!c.readings.has(distanceMm)) continue;
    const held = chosen.get(c.heatId);
    if (!held || held.source === 'mill_certificate' || (c.source !== 'mill_certificate' && c.testId > held.testId)) chosen.set(c.heatId, c);
  }
  return [...chosen.values()].map((c) => {
    const point = { heatId: c.heatId, heatNumber: c.heatNumber, mill: c.mill, castDate: c.castDate, value: c.readings.get(distanceMm)! };
    const side = c.censored?.get(distanceMm);
    return side ? { ...point, censored: side } : point;
  });
}
