// Capability of a grade's series against the band in force, per band distance; for one mill, or for the
// supply from several mills. The indices, intervals, PPM, normality and flags come from
// src/stats/capability.ts (ISO 22514-2; Bissell 1990; D'Agostino & Stephens 1986); this module only
// chooses the data and the limits. The band is the version in force on the window's end (`to`, else
// today), reported as band and bandInForceOn.
// Several mills: no Cp/Cpk/Pp/Ppk is worked out over the mixture. An index needs one process (rational
// subgrouping, Montgomery, Introduction to SQC §6.2.4; AIAG SPC manual): over two mills with different
// means a pooled index can read better than either mill, and its normal-model PPM misstates the
// mixture's tails. Instead each distance carries `supply`: every mill's own indices side by side
// (each on its own heats in cast order) and the supply-level share outside the band, the heat-weighted
// sum of the mills' shares with a generalized interval (src/stats/supplyNonconforming.ts).
import type { Db } from '../db/connection.ts';
import { capability, type CapabilityResult, type Interval, type IntervalDfChoice } from '../stats/capability.ts';
import { supplyNonconforming } from '../stats/supplyNonconforming.ts';
import type { Band } from '../hardenability/bands.ts';
import { bandSummary, requireBand, type BandSummary } from './bandOf.ts';
import { curvesOfMill, loadSeriesCurves, millsOf, pointsAt, todayIso, type HeatCurve, type SeriesPoint, type SeriesQuery, type SeriesSource } from './seriesData.ts';

export interface DistanceCapability {
  distanceMm: number;
  label: string | null;
  lsl: number | null;
  usl: number | null;
  n: number;
  /** Null when the series is too short or has no spread, or mixes several mills (see supply); see note. */
  result: CapabilityResult | null;
  /** Several mills: each mill's indices side by side and the supply-level share outside the band. */
  supply?: SupplyAtDistance | null;
  note: string | null;
}

/** One mill's figures at a distance, side by side with the others. */
export interface SupplyMill {
  mill: string;
  n: number;
  /** The mill's share of the heats tested at this distance (its weight in the supply figure). */
  weight: number;
  cpk: number;
  cpkInterval: Interval;
  ppk: number;
  ppkInterval: Interval;
  /** Expected PPM outside the band, normal model on the mill's own mean and overall SD, with its interval. */
  expectedPpm: number;
  expectedPpmInterval: Interval;
  observedPpm: number;
  flags: CapabilityResult['flags'];
}

export interface SupplyAtDistance {
  mills: SupplyMill[];
  /** Heat-weighted sum of the mills' expected PPM, with its interval (generalized pivotal quantities). */
  expectedPpm: number;
  expectedPpmInterval: Interval;
  /** Share of all heats outside the band, PPM. */
  observedPpm: number;
  confidence: number;
  method: string;
  /** Mills left out at this distance (fewer than 2 heats, or no spread). */
  leftOut: string[];
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
  /** Fitted-distribution (Johnson or Box–Cox) indices when normality is rejected (default 'auto'; 'never' for quick summaries). */
  fitted?: 'auto' | 'never';
}

/** Values at a distance per mill, each mill's in its own (cast) order. */
function valuesByMill(points: readonly SeriesPoint[]): Map<string, number[]> {
  const byMill = new Map<string, number[]>();
  for (const p of points) {
    const own = byMill.get(p.mill);
    if (own) own.push(p.value);
    else byMill.set(p.mill, [p.value]);
  }
  return byMill;
}

/** The mills side by side at one distance and the supply share outside the band (pure). */
export function supplyAt(points: readonly SeriesPoint[], limits: { lsl: number | null; usl: number | null }, options: CapabilityStudyOptions = {}): SupplyAtDistance | null {
  const byMill = valuesByMill(points);
  const mills: SupplyMill[] = [];
  const leftOut: string[] = [];
  const parts: Array<{ name: string; n: number; mean: number; sd: number }> = [];
  for (const mill of [...byMill.keys()].sort()) {
    const values = byMill.get(mill)!;
    let r: CapabilityResult;
    try {
      r = capability({ values }, limits, { confidence: options.confidence, minN: options.minN, intervalDf: options.intervalDf, fitted: options.fitted ?? 'auto' });
    } catch {
      leftOut.push(mill);
      continue;
    }
    parts.push({ name: mill, n: r.n, mean: r.mean, sd: r.sigmaOverall });
    mills.push({
      mill,
      n: r.n,
      weight: 0,
      cpk: r.cpk,
      cpkInterval: r.intervals.cpk,
      ppk: r.ppk,
      ppkInterval: r.intervals.ppk,
      expectedPpm: r.expectedPpm.overall.total,
      expectedPpmInterval: { lower: 0, upper: 0 },
      observedPpm: r.observedPpm.total,
      flags: r.flags,
    });
  }
  if (parts.length === 0) return null;
  const share = supplyNonconforming(parts, limits, { confidence: options.confidence });
  share.parts.forEach((p, i) => {
    mills[i].weight = p.weight;
    mills[i].expectedPpmInterval = { lower: 1e6 * p.lower, upper: 1e6 * p.upper };
  });
  const outside = points.filter((p) => (limits.lsl !== null && p.value < limits.lsl) || (limits.usl !== null && p.value > limits.usl)).length;
  return {
    mills,
    expectedPpm: 1e6 * share.fraction,
    expectedPpmInterval: { lower: 1e6 * share.lower, upper: 1e6 * share.upper },
    observedPpm: (1e6 * outside) / points.length,
    confidence: share.confidence,
    method: leftOut.length ? `${share.method}; over the mills with at least 2 heats and some spread` : share.method,
    leftOut,
  };
}

/**
 * Capability at every point of a band, from already loaded curves (pure). Curves of several mills: no
 * index over the mixture, the mills side by side and the supply share instead (see header).
 */
export function capabilityAtBand(curves: readonly HeatCurve[], band: Band, options: CapabilityStudyOptions = {}): DistanceCapability[] {
  const millCount = millsOf(curves).length;
  return band.points.map((p) => {
    const points = pointsAt(curves, p.mm);
    const values = points.map((s) => s.value);
    const limits = { lsl: p.minHrc ?? null, usl: p.maxHrc ?? null };
    const base = { distanceMm: p.mm, label: p.label ?? null, ...limits, n: values.length, supply: null };
    if (values.length < 2) return { ...base, result: null, note: `${values.length} heat(s) tested at this distance: too few for a capability study` };
    if (millCount > 1) {
      const supply = supplyAt(points, limits, options);
      const why = `${millCount} mills: one index over a mixture of mills would mislead, so each mill's indices stand side by side with the supply share outside the band`;
      return { ...base, supply, result: null, note: supply ? why : `${why}; no mill has two heats with some spread here` };
    }
    try {
      const censored = points.some((s) => s.censored) ? points.map((s) => s.censored ?? null) : undefined;
      const result = capability({ values, censored }, limits, { confidence: options.confidence, minN: options.minN, intervalDf: options.intervalDf, fitted: options.fitted ?? 'auto' });
      const notes = [result.flags.smallSample ? 'small sample: treat the indices as rough' : null, result.censoring?.note ?? null].filter((x) => x !== null);
      return { ...base, result, note: notes.length ? notes.join('; ') : null };
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
