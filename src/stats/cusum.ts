// Tabular (decision-interval) CUSUM for the mean, in sigma units, with optional fast initial response.
// Page (1954), Biometrika 41:100–115; Montgomery, Introduction to Statistical Quality Control, §9.1;
// NIST/SEMATECH e-Handbook §6.3.2.3. With z_i = (x_i − target)/σ:
//   C⁺_i = max(0, C⁺_{i−1} + z_i − k),  C⁻_i = max(0, C⁻_{i−1} − z_i − k),
// a signal when C⁺_i > h or C⁻_i > h. Head start (FIR): C⁺_0 = C⁻_0 = headStart (Lucas & Crosier 1982,
// Technometrics 24:199–205, recommend h/2). The sums are not reset after a signal; every point with a
// sum beyond h is reported.
import { StatsInputError, assertFinite } from './descriptive.ts';

export interface CusumOptions {
  target: number;
  sigma: number;
  /** Reference value in sigma units (default 0.5). */
  k?: number;
  /** Decision interval in sigma units (default 5). */
  h?: number;
  /** Head start for both sums, in sigma units, 0 <= headStart < h (default 0). */
  headStart?: number;
}

export interface CusumChart {
  n: number;
  target: number;
  sigma: number;
  k: number;
  h: number;
  headStart: number;
  /** Upper sums C⁺ in sigma units. */
  upper: number[];
  /** Lower sums C⁻ in sigma units. */
  lower: number[];
  upperSignals: number[];
  lowerSignals: number[];
  /** First signal (lowest index; 'both' if both sums cross there), or null. */
  firstSignal: { index: number; side: 'upper' | 'lower' | 'both' } | null;
  /** Run length to the first signal (index + 1), or null. */
  runLength: number | null;
}

/** Two one-sided tabular CUSUMs (Page 1954; Montgomery §9.1) with optional FIR (Lucas & Crosier 1982). */
export function cusumChart(values: readonly number[], options: CusumOptions): CusumChart {
  const { target, sigma } = options;
  const k = options.k ?? 0.5;
  const h = options.h ?? 5;
  const headStart = options.headStart ?? 0;
  if (!Number.isFinite(target)) throw new StatsInputError('target must be finite');
  if (!(sigma > 0) || !Number.isFinite(sigma)) throw new StatsInputError('sigma must be positive and finite');
  if (!(k >= 0)) throw new StatsInputError('k must be non-negative');
  if (!(h > 0)) throw new StatsInputError('h must be positive');
  if (!(headStart >= 0 && headStart < h)) throw new StatsInputError('headStart must be in [0, h)');
  assertFinite(values);
  const n = values.length;
  const upper = new Array<number>(n);
  const lower = new Array<number>(n);
  const upperSignals: number[] = [];
  const lowerSignals: number[] = [];
  let cp = headStart;
  let cm = headStart;
  for (let i = 0; i < n; i++) {
    const z = (values[i] - target) / sigma;
    cp = Math.max(0, cp + z - k);
    cm = Math.max(0, cm - z - k);
    upper[i] = cp;
    lower[i] = cm;
    if (cp > h) upperSignals.push(i);
    if (cm > h) lowerSignals.push(i);
  }
  const u = upperSignals.length ? upperSignals[0] : Infinity;
  const l = lowerSignals.length ? lowerSignals[0] : Infinity;
  const index = Math.min(u, l);
  const firstSignal = Number.isFinite(index) ? { index, side: (u === l ? 'both' : u < l ? 'upper' : 'lower') as 'upper' | 'lower' | 'both' } : null;
  return {
    n,
    target,
    sigma,
    k,
    h,
    headStart,
    upper,
    lower,
    upperSignals,
    lowerSignals,
    firstSignal,
    runLength: firstSignal ? firstSignal.index + 1 : null,
  };
}
