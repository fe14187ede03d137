// Descriptive statistics used by the charts and capability modules.
// Mean and sample variance from simple-statistics (compensated summation); moving ranges as in
// ASTM E2587 (individuals chart); quantiles by Hyndman & Fan (1996, Am. Statistician 50:361–365)
// definition 7 — linear interpolation between order statistics, the default of R and numpy.
import { mean as ssMean, sampleVariance as ssSampleVariance } from 'simple-statistics';

export class StatsInputError extends Error {
  override name = 'StatsInputError';
}

/** Throws StatsInputError naming the first non-finite entry. */
export function assertFinite(values: ArrayLike<number>, what = 'values'): void {
  for (let i = 0; i < values.length; i++) {
    if (!Number.isFinite(values[i])) throw new StatsInputError(`${what}[${i}] is not a finite number`);
  }
}

/** Arithmetic mean (simple-statistics). Throws on an empty series. */
export function mean(values: readonly number[]): number {
  if (values.length === 0) throw new StatsInputError('mean of an empty series');
  return ssMean(values);
}

/** Sample variance with n − 1 denominator (simple-statistics). Needs n >= 2. */
export function sampleVariance(values: readonly number[]): number {
  if (values.length < 2) throw new StatsInputError('sample variance needs at least 2 values');
  return ssSampleVariance(values);
}

/** Sample standard deviation, n − 1 denominator. Needs n >= 2. */
export function sampleSd(values: readonly number[]): number {
  return Math.sqrt(sampleVariance(values));
}

/** Moving ranges of span 2: |x_i − x_{i−1}|, i = 1..n−1 (ASTM E2587 individuals chart). */
export function movingRanges(values: ArrayLike<number>): Float64Array {
  const n = values.length;
  const out = new Float64Array(Math.max(0, n - 1));
  for (let i = 1; i < n; i++) out[i - 1] = Math.abs(values[i] - values[i - 1]);
  return out;
}

/** Average moving range MR-bar (span 2). Needs n >= 2. */
export function averageMovingRange(values: ArrayLike<number>): number {
  const n = values.length;
  if (n < 2) throw new StatsInputError('moving range needs at least 2 values');
  let s = 0;
  for (let i = 1; i < n; i++) s += Math.abs(values[i] - values[i - 1]);
  return s / (n - 1);
}

/** Quantile of an ascending-sorted array, Hyndman & Fan definition 7 (R type 7, numpy 'linear'). */
export function quantileSorted(sorted: ArrayLike<number>, p: number): number {
  const n = sorted.length;
  if (n === 0) throw new StatsInputError('quantile of an empty series');
  if (!(p >= 0 && p <= 1)) throw new StatsInputError(`quantile probability must be in [0, 1], got ${p}`);
  const h = (n - 1) * p;
  const lo = Math.floor(h);
  const hi = Math.min(lo + 1, n - 1);
  return sorted[lo] + (h - lo) * (sorted[hi] - sorted[lo]);
}

/** Quantile of an unsorted series (copies and sorts). */
export function quantile(values: readonly number[], p: number): number {
  return quantileSorted(Float64Array.from(values).sort(), p);
}
