// Designing monitoring limits for a stated false-alarm rate: from a target in-control average run length
// (ARL, in heats) to EWMA and CUSUM limits, and the widening that keeps that target when the centre and
// sigma are estimated from a finite reference.
//
// Sources:
// - Target ARL from a false-alarm budget: one false alarm per `years` at `heatsPerYear` heats a year is an
//   in-control ARL of heatsPerYear × years heats (the ARL is the mean heats between false alarms;
//   Montgomery, Introduction to Statistical Quality Control, §5.3.3 and §9.1–9.2).
// - Several statistics in one scheme: 1/ARL ≈ Σ 1/ARL_i (a union of nearly independent signals; the
//   same reciprocal addition Lucas & Crosier 1982, Technometrics 24:199–205, use for the two sides of a
//   CUSUM). splitArl gives each statistic its share.
// - EWMA limit for an ARL: the Markov chain of Lucas & Saccucci (1990), Technometrics 32:1–12 (ewmaArl in
//   runLength.ts), solved for L by bisection (the ARL rises with L). Check value: λ = 0.1, ARL0 500 at
//   L = 2.814 (their Table 3).
// - CUSUM decision interval for an ARL: the Brook & Evans (1972), Biometrika 59:539–549, chain (cusumArl),
//   solved for h by bisection. Check value: k = 0.5, h = 5, two-sided ARL0 465 (Montgomery §9.1).
// - Estimated parameters: with the centre and sigma estimated from m reference heats the in-control ARL of
//   the chart is itself random (Jones, Champ & Rigdon 2001, Technometrics 43:156–167). Following the
//   guaranteed-conditional-performance idea of Gandy & Kvaløy (2013), Scandinavian J. Statistics
//   40:647–668, the limit is chosen so that the conditional in-control ARL reaches the target for a
//   stated share (`guarantee`, default 90 %) of references. Here the sampling distribution is parametric:
//   a reference of m independent normal heats gives μ̂ = μ + σ·Z/√m and σ̂ = σ·√(χ²_{m−1}/(m−1)); a chart
//   on (x − μ̂)/σ̂ with limit L then behaves as a chart on N(a, 1) data with limit L·b, a = Z/√m,
//   b = √(χ²/(m−1)). For every |a| on a grid the limit L′(|a|) meeting the target is solved once; a
//   reference drawn (a, b) needs L = L′(|a|)/b, and the chosen L is the `guarantee` quantile of those
//   (the ARL rises with L for every reference, so P(ARL ≥ target) = P(L_needed ≤ L)). Draws are seeded.
//   For autocorrelated data the effective m is smaller (m(1 − φ)/(1 + φ) for the mean of an AR(1)
//   series; Box, Jenkins & Reinsel, Time Series Analysis, §2.1); pass that as m.
import { StatsInputError } from './descriptive.ts';
import { createRng } from './random.ts';
import { cusumArl, ewmaArl } from './runLength.ts';

/** In-control ARL (heats) for one false alarm per `yearsPerFalseAlarm` at `heatsPerYear` heats a year. */
export function targetArlHeats(options: { heatsPerYear: number; yearsPerFalseAlarm: number }): number {
  const { heatsPerYear, yearsPerFalseAlarm } = options;
  if (!(heatsPerYear > 0) || !Number.isFinite(heatsPerYear)) throw new StatsInputError(`heatsPerYear must be positive, got ${heatsPerYear}`);
  if (!(yearsPerFalseAlarm > 0) || !Number.isFinite(yearsPerFalseAlarm)) throw new StatsInputError(`yearsPerFalseAlarm must be positive, got ${yearsPerFalseAlarm}`);
  return heatsPerYear * yearsPerFalseAlarm;
}

/** Each statistic's ARL when a scheme's false alarms are shared out: 1/ARL_i = share_i/ARL (shares sum to 1). */
export function splitArl(targetArl: number, shares: readonly number[]): number[] {
  if (!(targetArl > 1)) throw new StatsInputError(`targetArl must exceed 1, got ${targetArl}`);
  const total = shares.reduce((s, x) => s + x, 0);
  if (shares.length === 0 || shares.some((s) => !(s > 0)) || Math.abs(total - 1) > 1e-9) throw new StatsInputError('shares must be positive and sum to 1');
  return shares.map((s) => targetArl / s);
}

function bisect(f: (x: number) => number, lo: number, hi: number, target: number, tol: number): number {
  // f increasing; find x with f(x) = target.
  let a = lo;
  let b = hi;
  if (f(b) < target) throw new StatsInputError(`the target ARL ${target} is beyond reach (ARL ${f(b).toFixed(0)} at the widest limit ${hi})`);
  if (f(a) > target) return a;
  while (b - a > tol) {
    const m = (a + b) / 2;
    if (f(m) < target) a = m;
    else b = m;
  }
  return (a + b) / 2;
}

export interface EwmaDesign {
  lambda: number;
  L: number;
  /** In-control ARL at L (Markov chain). */
  arl: number;
}

/** EWMA limit width L (asymptotic limits ±L·√(λ/(2 − λ))) giving the target in-control ARL. */
export function ewmaLimitForArl(options: { lambda: number; targetArl: number; states?: number }): EwmaDesign {
  const { lambda, targetArl } = options;
  if (!(lambda > 0 && lambda <= 1)) throw new StatsInputError(`lambda must be in (0, 1], got ${lambda}`);
  if (!(targetArl > 1)) throw new StatsInputError(`targetArl must exceed 1, got ${targetArl}`);
  const f = (L: number) => ewmaArl({ lambda, L, shift: 0, states: options.states });
  const L = bisect(f, 0.5, 6, targetArl, 1e-4);
  return { lambda, L, arl: f(L) };
}

export interface CusumDesign {
  k: number;
  h: number;
  headStart: number;
  /** Two-sided in-control ARL at h (Markov chain). */
  arl: number;
}

/** Two-sided tabular CUSUM decision interval h (σ units) giving the target in-control ARL. */
export function cusumLimitForArl(options: { k: number; targetArl: number; headStart?: number }): CusumDesign {
  const { k, targetArl } = options;
  const headStart = options.headStart ?? 0;
  if (!(k >= 0)) throw new StatsInputError(`k must be >= 0, got ${k}`);
  if (!(targetArl > 1)) throw new StatsInputError(`targetArl must exceed 1, got ${targetArl}`);
  const f = (h: number) => cusumArl({ k, h, shift: 0, headStart: Math.min(headStart, h * 0.999) }).twoSided;
  const h = bisect(f, Math.max(0.5, headStart + 0.01), 30, targetArl, 1e-3);
  return { k, h, headStart, arl: f(h) };
}

export interface EstimatedEwmaDesign extends EwmaDesign {
  /** L for known parameters (the same target). */
  knownL: number;
  m: number;
  guarantee: number;
  targetArl: number;
  /** Share of references (parametric draws) whose conditional in-control ARL is below the target at L. */
  shortfallShare: number;
  /** Median conditional in-control ARL over the draws, at L. */
  medianConditionalArl: number;
  /** Mean false alarms per heat over the draws, at L (E[1/ARL]); times heats a year is false alarms a year. */
  meanFalseAlarmsPerHeat: number;
}

const designCache = new Map<string, EstimatedEwmaDesign>();

/**
 * EWMA limit that meets the target in-control ARL for `guarantee` of the references of m heats (see the
 * header: Gandy & Kvaløy 2013 with a parametric normal model of the reference). Memoised per inputs.
 */
export function ewmaLimitForEstimated(options: { lambda: number; targetArl: number; m: number; guarantee?: number; draws?: number; seed?: number }): EstimatedEwmaDesign {
  const { lambda, targetArl, m } = options;
  const guarantee = options.guarantee ?? 0.9;
  const draws = options.draws ?? 400;
  const seed = options.seed ?? 20130607;
  if (!(m >= 5)) throw new StatsInputError(`a reference of ${m} heats is too small to design limits (at least 5)`);
  if (!(guarantee > 0 && guarantee < 1)) throw new StatsInputError(`guarantee must be in (0, 1), got ${guarantee}`);
  const key = JSON.stringify([lambda, Math.round(targetArl), Math.round(m * 10) / 10, guarantee, draws, seed]);
  const cached = designCache.get(key);
  if (cached) return cached;
  const states = 101;
  const arlAt = (L: number, a: number) => ewmaArl({ lambda, L, shift: a, states });
  const known = ewmaLimitForArl({ lambda, targetArl, states });
  // L′(|a|) on a grid of |a| up to 4 standard errors of the mean, interpolated linearly.
  const se = 1 / Math.sqrt(m);
  const grid = Array.from({ length: 17 }, (_, i) => (i / 16) * 4 * se);
  const needed = grid.map((a) => bisect((L) => arlAt(L, a), 0.5, 8, targetArl, 1e-3));
  const lPrime = (a: number) => {
    const x = Math.min(Math.abs(a), grid[grid.length - 1]) / (grid[1] - grid[0]);
    const i = Math.min(Math.floor(x), grid.length - 2);
    const f = x - i;
    return (1 - f) * needed[i] + f * needed[i + 1];
  };
  const rng = createRng(seed);
  const sample: Array<{ a: number; b: number; L: number }> = [];
  const df = m - 1;
  for (let d = 0; d < draws; d++) {
    const a = rng.normal() * se;
    let chi = 0;
    for (let j = 0; j < df; j++) chi += rng.normal() ** 2;
    const b = Math.sqrt(chi / df);
    sample.push({ a, b, L: lPrime(a) / b });
  }
  const sorted = sample.map((s) => s.L).sort((x, y) => x - y);
  const L = sorted[Math.min(draws - 1, Math.ceil(guarantee * draws) - 1)];
  // Conditional in-control ARLs at the chosen L, on a subsample (each is a chain solve).
  const check = sample.filter((_, i) => i % 4 === 0);
  const conditional = check.map((s) => arlAt(L * s.b, s.a)).sort((x, y) => x - y);
  const design: EstimatedEwmaDesign = {
    lambda,
    L,
    arl: arlAt(L, 0),
    knownL: known.L,
    m,
    guarantee,
    targetArl,
    shortfallShare: sample.filter((s) => s.L > L).length / draws,
    medianConditionalArl: conditional[Math.floor(conditional.length / 2)],
    meanFalseAlarmsPerHeat: conditional.reduce((s, x) => s + 1 / x, 0) / conditional.length,
  };
  designCache.set(key, design);
  return design;
}
