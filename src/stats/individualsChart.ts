// Individuals (X) and moving-range (MR, span 2) control chart.
// ASTM E2587 §8 and Montgomery, Introduction to Statistical Quality Control, §6.4: centre x̄,
// σ̂ = MR-bar/d2(2), limits centre ± Lσ̂ (L = 3); MR chart UCL = D4(2)·MR-bar, LCL = D3(2)·MR-bar = 0.
// "Beyond a limit" is strict (a point on a limit is in control) — common practice.
import { shewhartConstants } from './shewhartConstants.ts';
import { StatsInputError, assertFinite, averageMovingRange, mean } from './descriptive.ts';

export interface IndividualsChartOptions {
  /** Known centre line; default the sample mean. */
  center?: number;
  /** Known process sigma; default MR-bar/d2(2). */
  sigma?: number;
  /** Width of the limits in sigmas (default 3). */
  L?: number;
}

export interface IndividualsChart {
  n: number;
  center: number;
  sigma: number;
  sigmaSource: 'moving-range' | 'given';
  L: number;
  ucl: number;
  lcl: number;
  /** Centre line of the MR chart (MR-bar, or d2(2)·σ when sigma is given). */
  mrCenter: number;
  mrUcl: number;
  mrLcl: number;
  /** MR-bar observed on these data. */
  mrBar: number;
  /** Moving ranges; movingRanges[i − 1] = |x_i − x_{i−1}|. */
  movingRanges: number[];
  /** Indices of points beyond the X limits. */
  outOfControl: number[];
  /** Indices i of the second point of each moving range above the MR UCL. */
  mrOutOfControl: number[];
}

/** Individuals and moving-range chart (ASTM E2587; Montgomery §6.4). Needs n >= 2. */
export function individualsChart(values: readonly number[], options: IndividualsChartOptions = {}): IndividualsChart {
  const n = values.length;
  if (n < 2) throw new StatsInputError('an individuals chart needs at least 2 points');
  assertFinite(values);
  const L = options.L ?? 3;
  if (!(L > 0)) throw new StatsInputError('L must be positive');
  const k = shewhartConstants(2);
  const mrBar = averageMovingRange(values);
  const center = options.center ?? mean(values);
  let sigma: number;
  let sigmaSource: IndividualsChart['sigmaSource'];
  if (options.sigma !== undefined) {
    if (!(options.sigma > 0)) throw new StatsInputError('sigma must be positive');
    sigma = options.sigma;
    sigmaSource = 'given';
  } else {
    sigma = mrBar / k.d2;
    sigmaSource = 'moving-range';
  }
  const mrCenter = sigmaSource === 'given' ? k.d2 * sigma : mrBar;
  // MR limits (d2 ± L·d3)σ; for L = 3 these are D4·MR-bar and D3·MR-bar.
  const mrUcl = mrCenter * (1 + (L * k.d3) / k.d2);
  const mrLcl = Math.max(0, mrCenter * (1 - (L * k.d3) / k.d2));
  const ucl = center + L * sigma;
  const lcl = center - L * sigma;
  const movingRanges = new Array<number>(n - 1);
  const outOfControl: number[] = [];
  const mrOutOfControl: number[] = [];
  for (let i = 0; i < n; i++) {
    const x = values[i];
    if (x > ucl || x < lcl) outOfControl.push(i);
    if (i > 0) {
      const mr = Math.abs(x - values[i - 1]);
      movingRanges[i - 1] = mr;
      if (mr > mrUcl || mr < mrLcl) mrOutOfControl.push(i);
    }
  }
  return { n, center, sigma, sigmaSource, L, ucl, lcl, mrCenter, mrUcl, mrLcl, mrBar, movingRanges, outOfControl, mrOutOfControl };
}
