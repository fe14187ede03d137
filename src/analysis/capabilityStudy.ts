// Capability of a grade's series against the band in force, per band distance; overall and per mill.
// The indices, intervals, PPM, normality and flags come from src/stats/capability.ts (ISO 22514-2;
// Bissell 1990; D'Agostino & Stephens 1986); this module only chooses the data and the limits.
// The band is the version in force on the window's end (`to`, else today), reported as band and bandInForceOn.
// Several mills together: moving ranges between heats of different mills would measure the gap between
// the mills, not the within-process spread, so σ within (Cp, Cpk) is pooled from each mill's own
// MR-bar/d2 in its cast order, variances weighted by their effective degrees of freedom (poolWithin in
// src/stats/capability.ts). Pp, Ppk use the SD of all heats together, mill differences included.
import type { Db } from '../db/connection.ts';
import { capability, individualsWithin, poolWithin, type CapabilityResult, type IntervalDfChoice, type WithinSigma } from '../stats/capability.ts';
import type { Band } from '../hardenability/bands.ts';
import { bandSummary, requireBand, type BandSummary } from './bandOf.ts';
import { curvesOfMill, loadSeriesCurves, millsOf, pointsAt, todayIso, type HeatCurve, type SeriesPoint, type SeriesQuery, type SeriesSource } from './seriesData.ts';

export interface DistanceCapability {
  distanceMm: number;
  label: string | null;
  lsl: number | null;
  usl: number | null;
  n: number;
  /** Null when the series is too short or has no spread; see note. */
  result: CapabilityResult | null;
  /** Mills whose own within sigmas were pooled for Cp/Cpk (several mills together), else null. */
  withinPooledOver?: string[] | null;
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
  /** The band applied is the version in force on this date (the window's end, else today). */
  bandInForceOn: string;
  band: BandSummary;
  heats: number;
  distances: DistanceCapability[];
  /** Per mill, when no mill was asked for. */
  perMill: MillCapability[] | null;
}

export interface CapabilityStudyOptions {
  confidence?: number;
  minN?: number;
  /** Degrees of freedom of the within sigma in the Cp/Cpk intervals (src/stats/capability.ts). */
  intervalDf?: IntervalDfChoice;
}

/** σ within pooled over the mills of a series, each mill's MR-bar/d2 in its own order; null if no mill has 2 heats. */
export function pooledWithinOfMills(points: readonly SeriesPoint[]): { within: WithinSigma; mills: string[] } | null {
  const byMill = new Map<string, number[]>();
  for (const p of points) {
    const own = byMill.get(p.mill);
    if (own) own.push(p.value);
    else byMill.set(p.mill, [p.value]);
  }
  const mills = [...byMill.keys()].filter((m) => byMill.get(m)!.length >= 2).sort();
  if (mills.length === 0) return null;
  return { within: poolWithin(mills.map((m) => individualsWithin(byMill.get(m)!))), mills };
}

/**
 * Capability at every point of a band, from already loaded curves (pure). Curves of several mills:
 * σ within pooled over the mills (see header).
 */
export function capabilityAtBand(curves: readonly HeatCurve[], band: Band, options: CapabilityStudyOptions = {}): DistanceCapability[] {
  const severalMills = millsOf(curves).length > 1;
  return band.points.map((p) => {
    const points = pointsAt(curves, p.mm);
    const values = points.map((s) => s.value);
    const base = { distanceMm: p.mm, label: p.label ?? null, lsl: p.minHrc ?? null, usl: p.maxHrc ?? null, n: values.length, withinPooledOver: null };
    if (values.length < 2) return { ...base, result: null, note: `${values.length} heat(s) tested at this distance: too few for a capability study` };
    const pooled = severalMills ? pooledWithinOfMills(points) : null;
    if (severalMills && (pooled === null || !(pooled.within.sigma > 0))) {
      const why = pooled === null ? 'no mill has two heats at this distance' : 'no mill shows any spread at this distance';
      return { ...base, result: null, note: `${why}, so there is no within-mill sigma for Cp and Cpk` };
    }
    try {
      const result = capability({ values }, { lsl: p.minHrc, usl: p.maxHrc }, { confidence: options.confidence, minN: options.minN, within: pooled?.within, intervalDf: options.intervalDf });
      return { ...base, withinPooledOver: pooled?.mills ?? null, result, note: result.flags.smallSample ? 'small sample: treat the indices as rough' : null };
    } catch (error) {
      return { ...base, result: null, note: (error as Error).message };
    }
  });
}

const heatCount = (curves: readonly HeatCurve[]) => new Set(curves.map((c) => c.heatId)).size;

/** Capability study of a grade (one mill, or all mills with a per-mill breakdown). */
export async function capabilityStudy(db: Db, query: SeriesQuery, options: CapabilityStudyOptions = {}): Promise<CapabilityStudy> {
  const source = query.source ?? 'mill_certificate';
  const bandInForceOn = query.to ?? todayIso();
  const band = await requireBand(db, query.grade, bandInForceOn);
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
    bandInForceOn,
    band: bandSummary(band),
    heats: heatCount(curves),
    distances: capabilityAtBand(curves, band, options),
    perMill,
  };
}
