// X-bar/R and X-bar/S control charts for rational subgroups; unequal subgroup sizes allowed.
// Equal sizes: ASTM E2587 §7 and Montgomery, Introduction to Statistical Quality Control, §6.2–6.3
// (x̿ ± A2·R-bar, D3·R-bar..D4·R-bar; x̿ ± A3·s-bar, B3·s-bar..B4·s-bar).
// Unequal sizes (Montgomery §6.3.2 computes limits per subgroup from its own n_i): we estimate σ by the
// average of the unbiased per-subgroup estimates R_i/d2(n_i) (or s_i/c4(n_i)) and give subgroup i the
// limits x̿ ± Lσ̂/√n_i, d2(n_i)σ̂ ± L·d3(n_i)σ̂ for R, c4(n_i)σ̂ ± L·√(1 − c4(n_i)²)σ̂ for s (floored at 0).
// With equal sizes and L = 3 these are exactly the tabled A2/D3/D4 and A3/B3/B4 limits.
// x̿ is the mean of all observations (subgroup means weighted by n_i). Beyond a limit is strict.
import { shewhartConstants } from './shewhartConstants.ts';
import { StatsInputError, assertFinite } from './descriptive.ts';

export type SubgroupChartKind = 'xbar-r' | 'xbar-s';

export interface SubgroupChartOptions {
  /** Known grand mean; default the mean of all observations. */
  center?: number;
  /** Known process sigma; default estimated from the within-subgroup dispersion. */
  sigma?: number;
  /** Width of the limits in sigmas (default 3). */
  L?: number;
}

export interface SubgroupChart {
  kind: SubgroupChartKind;
  L: number;
  /** Number of subgroups. */
  k: number;
  sizes: number[];
  equalSizes: boolean;
  center: number;
  sigma: number;
  sigmaSource: 'within-subgroup' | 'given';
  /** Mean dispersion: R-bar (X-bar/R) or s-bar (X-bar/S). */
  dispersionBar: number;
  means: number[];
  /** Subgroup ranges (X-bar/R) or standard deviations (X-bar/S). */
  dispersions: number[];
  ucl: number[];
  lcl: number[];
  dispersionCenter: number[];
  dispersionUcl: number[];
  dispersionLcl: number[];
  /** Subgroups whose mean is beyond its limits. */
  outOfControl: number[];
  /** Subgroups whose range or SD is beyond its limits. */
  dispersionOutOfControl: number[];
}

function subgroupChart(kind: SubgroupChartKind, subgroups: readonly (readonly number[])[], options: SubgroupChartOptions): SubgroupChart {
  const k = subgroups.length;
  if (k < 2) throw new StatsInputError('a subgroup chart needs at least 2 subgroups');
  const L = options.L ?? 3;
  if (!(L > 0)) throw new StatsInputError('L must be positive');
  const sizes = subgroups.map((g) => g.length);
  const means = new Array<number>(k);
  const dispersions = new Array<number>(k);
  let total = 0;
  let count = 0;
  let sigmaSum = 0;
  let dispersionSum = 0;
  for (let i = 0; i < k; i++) {
    const g = subgroups[i];
    const ni = g.length;
    if (ni < 2) throw new StatsInputError(`subgroup ${i} has ${ni} value(s); each subgroup needs at least 2`);
    assertFinite(g, `subgroup ${i}`);
    let s = 0;
    let lo = Infinity;
    let hi = -Infinity;
    for (const x of g) {
      s += x;
      if (x < lo) lo = x;
      if (x > hi) hi = x;
    }
    const m = s / ni;
    means[i] = m;
    total += s;
    count += ni;
    const c = shewhartConstants(ni);
    let d: number;
    if (kind === 'xbar-r') {
      d = hi - lo;
      sigmaSum += d / c.d2;
    } else {
      let ss = 0;
      for (const x of g) ss += (x - m) ** 2;
      d = Math.sqrt(ss / (ni - 1));
      sigmaSum += d / c.c4;
    }
    dispersions[i] = d;
    dispersionSum += d;
  }
  const center = options.center ?? total / count;
  let sigma: number;
  let sigmaSource: SubgroupChart['sigmaSource'];
  if (options.sigma !== undefined) {
    if (!(options.sigma > 0)) throw new StatsInputError('sigma must be positive');
    sigma = options.sigma;
    sigmaSource = 'given';
  } else {
    sigma = sigmaSum / k;
    sigmaSource = 'within-subgroup';
  }
  const ucl = new Array<number>(k);
  const lcl = new Array<number>(k);
  const dispersionCenter = new Array<number>(k);
  const dispersionUcl = new Array<number>(k);
  const dispersionLcl = new Array<number>(k);
  const outOfControl: number[] = [];
  const dispersionOutOfControl: number[] = [];
  for (let i = 0; i < k; i++) {
    const c = shewhartConstants(sizes[i]);
    const half = (L * sigma) / Math.sqrt(sizes[i]);
    ucl[i] = center + half;
    lcl[i] = center - half;
    const [mid, spread] = kind === 'xbar-r' ? [c.d2, c.d3] : [c.c4, Math.sqrt(1 - c.c4 * c.c4)];
    dispersionCenter[i] = mid * sigma;
    dispersionUcl[i] = (mid + L * spread) * sigma;
    dispersionLcl[i] = Math.max(0, (mid - L * spread) * sigma);
    if (means[i] > ucl[i] || means[i] < lcl[i]) outOfControl.push(i);
    if (dispersions[i] > dispersionUcl[i] || dispersions[i] < dispersionLcl[i]) dispersionOutOfControl.push(i);
  }
  return {
    kind,
    L,
    k,
    sizes,
    equalSizes: sizes.every((s) => s === sizes[0]),
    center,
    sigma,
    sigmaSource,
    dispersionBar: dispersionSum / k,
    means,
    dispersions,
    ucl,
    lcl,
    dispersionCenter,
    dispersionUcl,
    dispersionLcl,
    outOfControl,
    dispersionOutOfControl,
  };
}

/** X-bar and R chart (ASTM E2587 §7; Montgomery §6.2); σ̂ = mean of R_i/d2(n_i). */
export function xbarRChart(subgroups: readonly (readonly number[])[], options: SubgroupChartOptions = {}): SubgroupChart {
  return subgroupChart('xbar-r', subgroups, options);
}

/** X-bar and S chart (ASTM E2587 §7; Montgomery §6.3); σ̂ = mean of s_i/c4(n_i). */
export function xbarSChart(subgroups: readonly (readonly number[])[], options: SubgroupChartOptions = {}): SubgroupChart {
  return subgroupChart('xbar-s', subgroups, options);
}
