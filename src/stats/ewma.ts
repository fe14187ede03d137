// Exponentially weighted moving average chart with exact (time-varying) limits.
// Roberts (1959), Technometrics 1:239–250; NIST/SEMATECH e-Handbook of Statistical Methods §6.3.2.4;
// Montgomery, Introduction to Statistical Quality Control, §9.2:
//   z_i = λ x_i + (1 − λ) z_{i−1},  z_0 = target,
//   limits_i = target ± L σ √(λ/(2 − λ) · [1 − (1 − λ)^{2i}])   (i = 1, 2, ...),
// steady state target ± L σ √(λ/(2 − λ)). A signal is a z_i strictly beyond its limit.
import { StatsInputError, assertFinite } from './descriptive.ts';

export interface EwmaOptions {
  /** In-control mean (centre line). */
  target: number;
  /** In-control standard deviation of one observation. */
  sigma: number;
  /** Smoothing weight, 0 < λ <= 1 (default 0.2). */
  lambda?: number;
  /** Width of the limits in sigmas of z (default 3). */
  L?: number;
  /** Starting value z_0 (default target). */
  start?: number;
}

export interface EwmaChart {
  n: number;
  target: number;
  sigma: number;
  lambda: number;
  L: number;
  z: number[];
  ucl: number[];
  lcl: number[];
  steadyUcl: number;
  steadyLcl: number;
  /** Indices where z is beyond its limit. */
  signals: number[];
  /** Index of the first signal, or null. */
  firstSignal: number | null;
  /** Run length to the first signal (index + 1), or null when no signal. */
  runLength: number | null;
}

/** EWMA chart with exact time-varying limits (Roberts 1959; NIST e-Handbook §6.3.2.4). */
export function ewmaChart(values: readonly number[], options: EwmaOptions): EwmaChart {
  const { target, sigma } = options;
  const lambda = options.lambda ?? 0.2;
  const L = options.L ?? 3;
  if (!Number.isFinite(target)) throw new StatsInputError('target must be finite');
  if (!(sigma > 0) || !Number.isFinite(sigma)) throw new StatsInputError('sigma must be positive and finite');
  if (!(lambda > 0 && lambda <= 1)) throw new StatsInputError('lambda must be in (0, 1]');
  if (!(L > 0)) throw new StatsInputError('L must be positive');
  assertFinite(values);
  const n = values.length;
  const z = new Array<number>(n);
  const ucl = new Array<number>(n);
  const lcl = new Array<number>(n);
  const signals: number[] = [];
  const ratio = lambda / (2 - lambda);
  const keep = 1 - lambda;
  const keep2 = keep * keep;
  let prev = options.start ?? target;
  let decay = 1; // (1 − λ)^{2i}
  for (let i = 0; i < n; i++) {
    prev = lambda * values[i] + keep * prev;
    decay *= keep2;
    const half = L * sigma * Math.sqrt(ratio * (1 - decay));
    z[i] = prev;
    ucl[i] = target + half;
    lcl[i] = target - half;
    if (prev > ucl[i] || prev < lcl[i]) signals.push(i);
  }
  const steadyHalf = L * sigma * Math.sqrt(ratio);
  const firstSignal = signals.length ? signals[0] : null;
  return {
    n,
    target,
    sigma,
    lambda,
    L,
    z,
    ucl,
    lcl,
    steadyUcl: target + steadyHalf,
    steadyLcl: target - steadyHalf,
    signals,
    firstSignal,
    runLength: firstSignal === null ? null : firstSignal + 1,
  };
}
