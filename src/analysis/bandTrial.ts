// Band trial: replay history under a proposed band, per mill, beside the band in force. A heat fails when
// its deciding test(s) fail at any band point (src/hardenability/conformance.ts: receiving inspection
// overrides the mill certificate; between readings, monotone cubic interpolation); Ppk and the expected
// nonconforming PPM per distance come from src/stats/capability.ts (normal model).
// Whole-curve expected share outside the band: from the joint distribution of the curve, a multivariate
// normal with the mean vector and sample covariance of the heats measured at every band distance,
// by the seeded Monte Carlo the heat sheet uses (wholeBandProbability in prediction.ts), with
// Clopper–Pearson bounds for the simulation size (src/stats/binomialBounds.ts). Readings reported on a
// grid (e.g. whole HRC) stand for the interval they were rounded from, so a simulated curve counts as
// reported outside only beyond limit ± step/2. The bounds cover the simulation only, not the estimation
// of the mean and covariance.
// Suggestion: the tightest band of the same shape (same distances and sides) from normal tolerance
// limits per distance (ISO 16269-6; Hahn & Meeker 1991; src/stats/toleranceLimits.ts), x̄ ± k·s, with
// Bonferroni over the m distances: content 1 − (1 − share)/m and confidence 1 − (1 − γ)/m each, so that
// with confidence ≥ γ the band holds at least the chosen share of curves (Boole's inequality, whatever
// the correlation). Limits are rounded outwards to 0.1 HRC. Checked out of sample: the same rule on the
// older two thirds of the heats (cast order), counted on the newer third.
import type { Db } from '../db/connection.ts';
import { heatConformance } from '../hardenability/conformance.ts';
import { validateBand, type Band } from '../hardenability/bands.ts';
import { capability } from '../stats/capability.ts';
import { estimateCovariance } from '../stats/covariance.ts';
import { clopperPearson } from '../stats/binomialBounds.ts';
import { readingStep } from '../stats/groupedNormality.ts';
import { oneSidedToleranceFactor, twoSidedToleranceFactor } from '../stats/toleranceLimits.ts';
import { wholeBandProbability } from './prediction.ts';
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
  /** Expected share of curves outside the band from the joint (multivariate normal) distribution; see header. */
  expectedShare: JointShare | null;
}

export interface JointShare {
  /** Expected share of curves outside the band (0..1), with Clopper–Pearson bounds for the simulation size. */
  share: number;
  lower: number;
  upper: number;
  draws: number;
  /** Heats measured at every band distance, on which the mean and covariance were estimated. */
  heats: number;
  /** Reading grid the limits were widened by half of, or null. */
  readingStep: number | null;
  method: string;
}

export interface BandSuggestion {
  targetShare: number;
  /** Confidence γ that the band holds at least targetShare of curves. */
  confidence: number;
  /** Share of the heats (measured at every band distance) inside the suggested band, counted directly (in sample). */
  heldShare: number;
  heatsCounted: number;
  /** The same rule fitted on the older two thirds, counted on the newer third; null below 30 heats. */
  outOfSample: { fittedOn: number; checkedOn: number; heldShare: number; checkedFrom: string } | null;
  /** Share of curves inside under the fitted multivariate normal (point estimate, Monte Carlo). */
  simulatedShare: number | null;
  method: string;
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
  return {
    heats: groups.length,
    failing,
    failingCount: failing.length,
    failingShare: groups.length ? failing.length / groups.length : 0,
    incomplete,
    perDistance,
    expectedShare: jointExpectedShare(curves, band),
  };
}

/** Heats measured at every band distance, in cast order, with their values per band point. */
function completeCurves(curves: readonly HeatCurve[], band: Band) {
  const series = band.points.map((p) => pointsAt(curves, p.mm));
  const columns = series.map((pts) => new Map(pts.map((s) => [s.heatId, s.value])));
  const castDate = new Map(series[0].map((s) => [s.heatId, s.castDate]));
  const heatIds = series[0].map((s) => s.heatId).filter((id) => columns.every((c) => c.has(id)));
  return { heatIds, castDate, rows: heatIds.map((id) => columns.map((c) => c.get(id)!)) };
}

const DRAWS = 20000;
const SEED = 20261204;

/** Share of simulated curves inside limits under the fitted multivariate normal of the rows; null if degenerate. */
function simulatedInside(rows: number[][], limits: Array<{ min: number | null; max: number | null }>): { inside: number; step: number | null } | null {
  const est = estimateCovariance(rows, 'sample');
  const sd = est.covariance.map((r, j) => Math.sqrt(r[j]));
  if (!sd.every((v) => v > 0)) return null;
  const R = est.covariance.map((r, a) => r.map((v, b) => v / (sd[a] * sd[b])));
  const step = readingStep(rows.flat());
  const half = step === null ? 0 : step / 2;
  const widened = limits.map((l) => ({ min: l.min === null ? null : l.min - half, max: l.max === null ? null : l.max + half }));
  return { inside: wholeBandProbability(est.mean, sd, R, widened, { draws: DRAWS, seed: SEED }).probability, step };
}

/** Expected share of curves outside the band from the joint distribution (pure; see header). */
export function jointExpectedShare(curves: readonly HeatCurve[], band: Band): JointShare | null {
  const { rows } = completeCurves(curves, band);
  if (rows.length < Math.max(10, band.points.length + 2)) return null;
  const sim = simulatedInside(rows, band.points.map((p) => ({ min: p.minHrc ?? null, max: p.maxHrc ?? null })));
  if (!sim) return null;
  const outside = Math.round((1 - sim.inside) * DRAWS);
  const b = clopperPearson(outside, DRAWS);
  return {
    share: b.estimate,
    lower: b.lower,
    upper: b.upper,
    draws: DRAWS,
    heats: rows.length,
    readingStep: sim.step,
    method: 'multivariate normal (mean vector and sample covariance of the complete curves), seeded Monte Carlo; Clopper–Pearson bounds for the simulation size',
  };
}

const floor1 = (v: number) => Math.floor(v * 10 + 1e-9) / 10;
const ceil1 = (v: number) => Math.ceil(v * 10 - 1e-9) / 10;

type Limits = Array<{ min: number | null; max: number | null }>;

/** Tolerance limits of the band's shape from the rows (Bonferroni over the distances; see header). */
function toleranceBand(rows: number[][], shape: Band, share: number, confidence: number): Limits {
  const m = shape.points.length;
  const content = 1 - (1 - share) / m;
  const each = 1 - (1 - confidence) / m;
  const n = rows.length;
  return shape.points.map((p, j) => {
    const col = rows.map((r) => r[j]);
    const mean = col.reduce((a, b) => a + b, 0) / n;
    const sd = Math.sqrt(col.reduce((a, b) => a + (b - mean) ** 2, 0) / (n - 1));
    const two = p.minHrc !== undefined && p.maxHrc !== undefined;
    const k = two ? twoSidedToleranceFactor(n, content, each) : oneSidedToleranceFactor(n, content, each);
    return { min: p.minHrc === undefined ? null : floor1(mean - k * sd), max: p.maxHrc === undefined ? null : ceil1(mean + k * sd) };
  });
}

function shareInside(rows: number[][], lims: Limits): number {
  if (rows.length === 0) return 0;
  return rows.filter((r) => lims.every((l, j) => (l.min === null || r[j] >= l.min) && (l.max === null || r[j] <= l.max))).length / rows.length;
}

/** Fewest complete curves for a suggestion, and for the out-of-sample check. */
export const SUGGESTION_MIN_HEATS = 10;
export const OUT_OF_SAMPLE_MIN_HEATS = 30;

/**
 * The tightest band of the same shape that holds the target share of curves with the given confidence,
 * from normal tolerance limits (pure; see header); null when too few heats or no spread.
 */
export function suggestBand(curves: readonly HeatCurve[], shape: Band, targetShare: number, confidence = 0.95): BandSuggestion | null {
  if (!(targetShare > 0 && targetShare < 1)) throw invalidInput('the share of heats must be in (0, 1)');
  if (!(confidence > 0 && confidence < 1)) throw invalidInput('the confidence must be in (0, 1)');
  const { heatIds, castDate, rows } = completeCurves(curves, shape);
  if (rows.length < SUGGESTION_MIN_HEATS) return null;
  let lims: Limits;
  try {
    lims = toleranceBand(rows, shape, targetShare, confidence);
  } catch {
    return null;
  }
  let outOfSample: BandSuggestion['outOfSample'] = null;
  if (rows.length >= OUT_OF_SAMPLE_MIN_HEATS) {
    const cut = Math.ceil((2 * rows.length) / 3);
    try {
      const older = toleranceBand(rows.slice(0, cut), shape, targetShare, confidence);
      outOfSample = { fittedOn: cut, checkedOn: rows.length - cut, heldShare: shareInside(rows.slice(cut), older), checkedFrom: castDate.get(heatIds[cut]) ?? '' };
    } catch {
      outOfSample = null;
    }
  }
  let simulatedShare: number | null = null;
  try {
    simulatedShare = rows.length >= shape.points.length + 2 ? (simulatedInside(rows, lims)?.inside ?? null) : null;
  } catch {
    simulatedShare = null;
  }
  return {
    targetShare,
    confidence,
    heldShare: shareInside(rows, lims),
    heatsCounted: rows.length,
    outOfSample,
    simulatedShare,
    method: `normal tolerance limits per distance (ISO 16269-6; Howe 1969 two-sided, Natrella 1963 one-sided), content ${(1 - (1 - targetShare) / shape.points.length).toFixed(4)} and confidence ${(1 - (1 - confidence) / shape.points.length).toFixed(4)} each (Bonferroni over ${shape.points.length} distances), rounded outwards to 0.1 HRC`,
    points: shape.points.map((p, j) => ({ distanceMm: p.mm, label: p.label ?? null, minHrc: lims[j].min, maxHrc: lims[j].max })),
  };
}

/** The trial on loaded curves (pure). */
export function runBandTrial(curves: readonly HeatCurve[], proposed: Band, current: Band | null, options: { share?: number; confidence?: number; mills?: string[] } = {}): Omit<BandTrialResult, 'grade' | 'window' | 'source'> {
  const band = validateBand(proposed);
  const share = options.share ?? 0.95;
  const confidence = options.confidence ?? 0.95;
  const chosen = options.mills?.length ? curves.filter((c) => options.mills!.includes(c.mill)) : curves;
  const mills = millsOf(chosen).map((mill) => {
    const own = curvesOfMill(chosen, mill);
    return { mill, proposed: bandOutcome(own, band), current: current ? bandOutcome(own, current) : null, suggestion: suggestBand(own, band, share, confidence) };
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
  /** Confidence that the suggested band holds the share (default 0.95). */
  confidence?: number;
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
  return { grade: request.grade, window: { from: request.from ?? null, to: request.to ?? null }, source, ...runBandTrial(curves, proposed, current, { share: request.share, confidence: request.confidence, mills: request.mills }) };
}
