// The band of a grade as the hardenability library wants it, from the stored band version.
import { bandInForce, type BandView } from '../db/referenceData.ts';
import type { Db } from '../db/connection.ts';
import type { Band } from '../hardenability/bands.ts';
import { AnalysisError } from './errors.ts';

export function toBand(view: BandView): Band {
  return {
    grade: view.grade,
    version: view.version,
    effectiveFrom: view.effectiveFrom,
    status: view.status as Band['status'],
    kind: view.kind as Band['kind'],
    rounding: view.rounding as Band['rounding'],
    reason: view.reason ?? undefined,
    points: view.points.map((p) => ({
      mm: p.distanceMm,
      label: p.label,
      ...(p.minHrc === null ? {} : { minHrc: p.minHrc }),
      ...(p.maxHrc === null ? {} : { maxHrc: p.maxHrc }),
    })),
  };
}

export interface BandSummary {
  version: number;
  effectiveFrom: string;
  kind: string;
  /** How readings meet the limits ('astm_e29': rounded to the limit's places first). */
  rounding: string;
  points: Array<{ distanceMm: number; label: string | null; minHrc: number | null; maxHrc: number | null }>;
}

export function bandSummary(band: Band): BandSummary {
  return {
    version: band.version,
    effectiveFrom: band.effectiveFrom,
    kind: band.kind,
    rounding: band.rounding ?? 'astm_e29',
    points: band.points.map((p) => ({ distanceMm: p.mm, label: p.label ?? null, minHrc: p.minHrc ?? null, maxHrc: p.maxHrc ?? null })),
  };
}

/** The active band of a grade on a date, or null. */
export async function bandOn(db: Db, grade: string, date: string): Promise<Band | null> {
  const view = await bandInForce(db, grade, date);
  return view ? toBand(view) : null;
}

/** The active band of a grade on a date; an AnalysisError (no_band) when there is none. */
export async function requireBand(db: Db, grade: string, date: string): Promise<Band> {
  const band = await bandOn(db, grade, date);
  if (!band) throw new AnalysisError('no_band', `grade ${grade} has no active band in force on ${date}`);
  return band;
}

/** Label of a distance: the band's own label when the band has the point, else "<mm> mm". */
export function labelFor(band: Band | null, mm: number): string {
  const p = band?.points.find((x) => Math.abs(x.mm - mm) <= 1e-6);
  return p?.label ?? `${Number(mm.toFixed(4))} mm`;
}
