// Series helpers over the one loader (src/db/series.ts): the query every analysis takes, matching a
// requested distance to the stored exact ones, the distances present, and curves as end-quench tests.
import { loadCurves, seriesAt, type CurveQuery, type HeatCurve, type SeriesSource } from '../db/series.ts';
import type { Db, Executor } from '../db/connection.ts';
import type { EndQuenchTest } from '../hardenability/types.ts';

export type { HeatCurve, SeriesSource };

/** What every analysis is asked about: a grade, optionally one mill, a cast-date window and a test source. */
export interface SeriesQuery {
  grade: string;
  mill?: string;
  from?: string;
  to?: string;
  source?: SeriesSource;
  /** Measured curves only unless asked (src/db/series.ts CurveQuery.basis). */
  basis?: CurveQuery['basis'];
}

export interface SeriesPoint {
  heatId: number;
  heatNumber: string;
  mill: string;
  castDate: string;
  /** For a reading off the scale, the bound ("<20" holds 20). */
  value: number;
  censored?: 'below' | 'above';
}

/** Distances (mm) are matched within this tolerance; a distance from sixteenths is not a short decimal. */
export const DISTANCE_MATCH_MM = 1e-6;

export async function loadSeriesCurves(db: Db | Executor, query: SeriesQuery): Promise<HeatCurve[]> {
  const q: CurveQuery = { grade: query.grade, mill: query.mill, from: query.from, to: query.to, source: query.source ?? 'mill_certificate', basis: query.basis };
  return loadCurves(db as Db, q);
}

/** The stored distance equal (within tolerance) to the requested one, or null. */
export function matchDistance(available: Iterable<number>, requestedMm: number): number | null {
  for (const d of available) if (Math.abs(d - requestedMm) <= DISTANCE_MATCH_MM) return d;
  return null;
}

/** Distances (mm) measured in any of the curves, ascending. */
export function distancesOf(curves: readonly HeatCurve[]): number[] {
  const set = new Set<number>();
  for (const c of curves) for (const d of c.readings.keys()) set.add(d);
  return [...set].sort((a, b) => a - b);
}

/** One value per heat at a distance (tolerant match), in time order; the loader's rule picks the test. */
export function pointsAt(curves: readonly HeatCurve[], distanceMm: number): SeriesPoint[] {
  const d = matchDistance(distancesOf(curves), distanceMm);
  if (d === null) return [];
  return seriesAt(curves as HeatCurve[], d);
}

/** The curves of one mill. */
export const curvesOfMill = (curves: readonly HeatCurve[], mill: string) => curves.filter((c) => c.mill === mill);

/** Mills present, sorted. */
export const millsOf = (curves: readonly HeatCurve[]) => [...new Set(curves.map((c) => c.mill))].sort();

/** A stored curve as an end-quench test for the conformance functions. */
export function asTest(c: HeatCurve): EndQuenchTest {
  return {
    id: String(c.testId),
    source: c.source,
    testDate: c.castDate,
    readings: [...c.readings].map(([mm, hrc]) => {
      const side = c.censored?.get(mm);
      return side ? { mm, hrc, censored: side } : { mm, hrc };
    }),
  };
}

/** Curves grouped by heat, in time order of the heats. */
export function groupByHeat(curves: readonly HeatCurve[]): HeatCurve[][] {
  const byHeat = new Map<number, HeatCurve[]>();
  for (const c of curves) {
    const list = byHeat.get(c.heatId);
    if (list) list.push(c);
    else byHeat.set(c.heatId, [c]);
  }
  return [...byHeat.values()];
}

export const todayIso = () => new Date().toISOString().slice(0, 10);
