// Capability of a grade's series against the band in force, per band distance; overall and per mill.
// The indices, intervals, PPM, normality and flags come from src/stats/capability.ts (ISO 22514-2;
// Bissell 1990; D'Agostino & Stephens 1986); this module only chooses the data and the limits.
import type { Db } from '../db/connection.ts';
import { capability, type CapabilityResult } from '../stats/capability.ts';
import type { Band } from '../hardenability/bands.ts';
import { bandSummary, requireBand, type BandSummary } from './bandOf.ts';
import { curvesOfMill, loadSeriesCurves, millsOf, pointsAt, todayIso, type HeatCurve, type SeriesQuery, type SeriesSource } from './seriesData.ts';

export interface DistanceCapability {
  distanceMm: number;
  label: string | null;
  lsl: number | null;
  usl: number | null;
  n: number;
  /** Null when the series is too short or has no spread; see note. */
  result: CapabilityResult | null;
  note: string | null;
}

export interface MillCapability {
  mill: string;
  heats: number;
  distances: DistanceCapability[];
}

export interface CapabilityStudy {
  grade: string;
  /** The mill asked for, or null for all mills together. */
  mill: string | null;
  source: SeriesSource;
  window: { from: string | null; to: string | null };
  band: BandSummary;
  heats: number;
  distances: DistanceCapability[];
  /** Per mill, when no mill was asked for. */
  perMill: MillCapability[] | null;
}

export interface CapabilityStudyOptions {
  confidence?: number;
  minN?: number;
}

/** Capability at every point of a band, from already loaded curves (pure). */
export function capabilityAtBand(curves: readonly HeatCurve[], band: Band, options: CapabilityStudyOptions = {}): DistanceCapability[] {
  return band.points.map((p) => {
    const values = pointsAt(curves, p.mm).map((s) => s.value);
    const base = { distanceMm: p.mm, label: p.label ?? null, lsl: p.minHrc ?? null, usl: p.maxHrc ?? null, n: values.length };
    if (values.length < 2) return { ...base, result: null, note: `${values.length} heat(s) tested at this distance: too few for a capability study` };
    try {
      const result = capability({ values }, { lsl: p.minHrc, usl: p.maxHrc }, { confidence: options.confidence, minN: options.minN });
      return { ...base, result, note: result.flags.smallSample ? 'small sample: treat the indices as rough' : null };
    } catch (error) {
      return { ...base, result: null, note: (error as Error).message };
    }
  });
}

const heatCount = (curves: readonly HeatCurve[]) => new Set(curves.map((c) => c.heatId)).size;

/** Capability study of a grade (one mill, or all mills with a per-mill breakdown). */
export async function capabilityStudy(db: Db, query: SeriesQuery, options: CapabilityStudyOptions = {}): Promise<CapabilityStudy> {
  const source = query.source ?? 'mill_certificate';
  const band = await requireBand(db, query.grade, query.to ?? todayIso());
  const curves = await loadSeriesCurves(db, { ...query, source });
  const perMill = query.mill
    ? null
    : millsOf(curves).map((mill) => {
        const own = curvesOfMill(curves, mill);
        return { mill, heats: heatCount(own), distances: capabilityAtBand(own, band, options) };
      });
  return {
    grade: query.grade,
    mill: query.mill ?? null,
    source,
    window: { from: query.from ?? null, to: query.to ?? null },
    band: bandSummary(band),
    heats: heatCount(curves),
    distances: capabilityAtBand(curves, band, options),
    perMill,
  };
}
