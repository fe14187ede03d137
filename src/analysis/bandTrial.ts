// Band trial: replay history under a proposed band, per mill, beside the band in force. A heat fails when
// its deciding test(s) fail at any band point (src/hardenability/conformance.ts: receiving inspection
// overrides the mill certificate; between readings, monotone cubic interpolation); Ppk and the expected
// nonconforming PPM per distance come from src/stats/capability.ts (normal model). The whole-curve
// expected PPM is bounded above by the sum over distances (Boole's inequality), and is labelled so.
// Suggestion: the tightest band of the same shape (same distances and sides) each mill held for a chosen
// share of heats: at each distance the empirical quantiles (Hyndman & Fan type 7) at a common tail
// probability a, the largest a for which the share of heats inside at every distance is still at least
// the chosen share (found by bisection; the share is then recounted directly). Limits are rounded
// outwards to 0.1 HRC.
import type { Db } from '../db/connection.ts';
import { heatConformance } from '../hardenability/conformance.ts';
import { validateBand, type Band } from '../hardenability/bands.ts';
import { capability } from '../stats/capability.ts';
import { quantileSorted } from '../stats/descriptive.ts';
import { bandOn, bandSummary, type BandSummary } from './bandOf.ts';
import { invalidInput } from './errors.ts';
import { asTest, curvesOfMill, groupByHeat, loadSeriesCurves, millsOf, pointsAt, todayIso, type HeatCurve, type SeriesSource } from './seriesData.ts';

export interface FailedHeat {
  heatId: number;
  heatNumber: string;
  castDate: string;
  /** Band points missed: distance, hardness used, and by how much (negative margin). */
  missed: Array<{ distanceMm: number; hrc: number; margin: number }>;
}

export interface DistanceOutcome {
  distanceMm: number;
  label: string | null;
  minHrc: number | null;
  maxHrc: number | null;
  n: number;
  ppk: number | null;
  expectedPpm: number | null;
  observedFailures: number;
}

export interface BandOutcome {
  heats: number;
  failing: FailedHeat[];
  failingCount: number;
  failingShare: number;
  /** Heats with a band point not tested (neither pass nor fail). */
  incomplete: number;
  perDistance: DistanceOutcome[];
  /** Sum over distances of the expected PPM: an upper bound for the whole curve. */
  expectedPpmUpperBound: number | null;
}

export interface BandSuggestion {
  targetShare: number;
  /** Share of heats (measured at every band distance) inside the suggested band, counted directly. */
  heldShare: number;
  heatsCounted: number;
  points: Array<{ distanceMm: number; label: string | null; minHrc: number | null; maxHrc: number | null }>;
}

export interface MillTrial {
  mill: string;
  proposed: BandOutcome;
  current: BandOutcome | null;
  suggestion: BandSuggestion | null;
}

export interface BandTrialResult {
  grade: string;
  window: { from: string | null; to: string | null };
  source: SeriesSource;
  proposed: BandSummary;
  current: BandSummary | null;
  mills: MillTrial[];
  total: { proposed: BandOutcome; current: BandOutcome | null };
}

/** Outcome of a band on a set of curves (pure). */
export function bandOutcome(curves: readonly HeatCurve[], band: Band): BandOutcome {
  const failing: FailedHeat[] = [];
  let incomplete = 0;
  const groups = groupByHeat(curves);
  for (const group of groups) {
    const verdict = heatConformance(group.map(asTest), band);
    if (verdict.verdict === 'fail') {
      const missed = verdict.deciding.flatMap((t) => t.points.filter((p) => p.verdict === 'fail').map((p) => ({ distanceMm: p.mm, hrc: p.hrc!, margin: p.margin! })));
      failing.push({ heatId: group[0].heatId, heatNumber: group[0].heatNumber, castDate: group[0].castDate, missed });
    } else if (verdict.verdict === 'incomplete') incomplete++;
  }
  const perDistance = band.points.map((p): DistanceOutcome => {
    const values = pointsAt(curves, p.mm).map((s) => s.value);
    let ppk: number | null = null;
    let expectedPpm: number | null = null;
    if (values.length >= 2) {
      try {
        const r = capability({ values }, { lsl: p.minHrc, usl: p.maxHrc });
        ppk = r.ppk;
        expectedPpm = r.expectedPpm.overall.total;
      } catch {
        /* no spread: indices undefined */
      }
    }
    const observedFailures = values.filter((v) => (p.minHrc !== undefined && v < p.minHrc) || (p.maxHrc !== undefined && v > p.maxHrc)).length;
    return { distanceMm: p.mm, label: p.label ?? null, minHrc: p.minHrc ?? null, maxHrc: p.maxHrc ?? null, n: values.length, ppk, expectedPpm, observedFailures };
  });
  const ppms = perDistance.map((d) => d.expectedPpm);
  return {
    heats: groups.length,
    failing,
    failingCount: failing.length,
    failingShare: groups.length ? failing.length / groups.length : 0,
    incomplete,
    perDistance,
    expectedPpmUpperBound: ppms.every((v) => v !== null) ? Math.min(1e6, ppms.reduce((a, b) => a! + b!, 0)!) : null,
  };
}

const floor1 = (v: number) => Math.floor(v * 10 + 1e-9) / 10;
const ceil1 = (v: number) => Math.ceil(v * 10 - 1e-9) / 10;

/** The tightest band of the same shape that held the target share of heats (pure); null when too few heats. */
export function suggestBand(curves: readonly HeatCurve[], shape: Band, targetShare: number): BandSuggestion | null {
  if (!(targetShare > 0 && targetShare <= 1)) throw invalidInput('the share of heats must be in (0, 1]');
  const columns = shape.points.map((p) => new Map(pointsAt(curves, p.mm).map((s) => [s.heatId, s.value])));
  const heatIds = [...columns[0].keys()].filter((id) => columns.every((c) => c.has(id)));
  if (heatIds.length < 10) return null;
  const sorted = columns.map((c) => Float64Array.from(heatIds.map((id) => c.get(id)!)).sort());
  const limitsAt = (a: number) =>
    shape.points.map((p, j) => {
      const two = p.minHrc !== undefined && p.maxHrc !== undefined;
      const tail = two ? a / 2 : a;
      return {
        min: p.minHrc === undefined ? null : floor1(quantileSorted(sorted[j], tail)),
        max: p.maxHrc === undefined ? null : ceil1(quantileSorted(sorted[j], 1 - tail)),
      };
    });
  const share = (lims: ReturnType<typeof limitsAt>) =>
    heatIds.filter((id) => lims.every((l, j) => {
      const v = columns[j].get(id)!;
      return (l.min === null || v >= l.min) && (l.max === null || v <= l.max);
    })).length / heatIds.length;
  let lo = 0;
  let hi = 1;
  for (let i = 0; i < 40; i++) {
    const mid = (lo + hi) / 2;
    if (share(limitsAt(mid)) >= targetShare) lo = mid;
    else hi = mid;
  }
  const lims = limitsAt(lo);
  return {
    targetShare,
    heldShare: share(lims),
    heatsCounted: heatIds.length,
    points: shape.points.map((p, j) => ({ distanceMm: p.mm, label: p.label ?? null, minHrc: lims[j].min, maxHrc: lims[j].max })),
  };
}

/** The trial on loaded curves (pure). */
export function runBandTrial(curves: readonly HeatCurve[], proposed: Band, current: Band | null, options: { share?: number; mills?: string[] } = {}): Omit<BandTrialResult, 'grade' | 'window' | 'source'> {
  const band = validateBand(proposed);
  const share = options.share ?? 0.95;
  const chosen = options.mills?.length ? curves.filter((c) => options.mills!.includes(c.mill)) : curves;
  const mills = millsOf(chosen).map((mill) => {
    const own = curvesOfMill(chosen, mill);
    return { mill, proposed: bandOutcome(own, band), current: current ? bandOutcome(own, current) : null, suggestion: suggestBand(own, band, share) };
  });
  return {
    proposed: bandSummary(band),
    current: current ? bandSummary(current) : null,
    mills,
    total: { proposed: bandOutcome(chosen, band), current: current ? bandOutcome(chosen, current) : null },
  };
}

export interface BandTrialRequest {
  grade: string;
  points: Array<{ distanceMm: number; label: string; minHrc: number | null; maxHrc: number | null }>;
  mills?: string[];
  from?: string;
  to?: string;
  source?: SeriesSource;
  share?: number;
}

export async function bandTrial(db: Db, request: BandTrialRequest): Promise<BandTrialResult> {
  const source = request.source ?? 'mill_certificate';
  const proposed: Band = {
    grade: request.grade,
    version: 0,
    effectiveFrom: request.from ?? '1900-01-01',
    status: 'draft',
    kind: 'standard',
    reason: 'band trial',
    points: request.points.map((p) => ({ mm: p.distanceMm, label: p.label, ...(p.minHrc === null ? {} : { minHrc: p.minHrc }), ...(p.maxHrc === null ? {} : { maxHrc: p.maxHrc }) })),
  };
  try {
    validateBand(proposed);
  } catch (error) {
    throw invalidInput((error as Error).message);
  }
  const current = await bandOn(db, request.grade, request.to ?? todayIso());
  const curves = await loadSeriesCurves(db, { grade: request.grade, from: request.from, to: request.to, source });
  return { grade: request.grade, window: { from: request.from ?? null, to: request.to ?? null }, source, ...runBandTrial(curves, proposed, current, { share: request.share, mills: request.mills }) };
}
