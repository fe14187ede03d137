// Anderson–Darling test of normality with mean and variance estimated from the sample.
// Statistic: Anderson & Darling (1954, JASA 49:765–769) with w_i = (x_(i) − x̄)/s, s the n − 1 SD;
// A*² = A²(1 + 0.75/n + 2.25/n²) and the piecewise p-value formula of D'Agostino & Stephens (1986),
// Goodness-of-Fit Techniques, Table 4.9 (the same formulas as statsmodels' normal_ad).
import { normalCdf } from './distributions.ts';
import { StatsInputError, assertFinite } from './descriptive.ts';

export interface AndersonDarlingResult {
  n: number;
  /** A² with estimated mean and SD. */
  a2: number;
  /** A*², the small-sample adjusted statistic. */
  a2Adjusted: number;
  /** p-value from D'Agostino & Stephens (1986) Table 4.9 (0 when A*² > 13). */
  pValue: number;
}

/** p-value for the adjusted statistic A*² (D'Agostino & Stephens 1986, Table 4.9). */
export function andersonDarlingPValue(a2Adjusted: number): number {
  const a = a2Adjusted;
  const a2 = a * a;
  if (a < 0.2) return 1 - Math.exp(-13.436 + 101.14 * a - 223.73 * a2);
  if (a < 0.34) return 1 - Math.exp(-8.318 + 42.796 * a - 59.938 * a2);
  if (a < 0.6) return Math.exp(0.9177 - 4.279 * a - 1.38 * a2);
  if (a <= 13) return Math.exp(1.2937 - 5.709 * a + 0.0186 * a2);
  return 0;
}

/** Anderson–Darling normality test, parameters estimated (needs n >= 3 and a non-constant sample). */
export function andersonDarling(values: readonly number[]): AndersonDarlingResult {
  const n = values.length;
  if (n < 3) throw new StatsInputError('Anderson–Darling test needs at least 3 values');
  assertFinite(values);
  const sorted = Float64Array.from(values).sort();
  let sum = 0;
  for (let i = 0; i < n; i++) sum += sorted[i];
  const xbar = sum / n;
  let ss = 0;
  for (let i = 0; i < n; i++) ss += (sorted[i] - xbar) ** 2;
  const s = Math.sqrt(ss / (n - 1));
  if (!(s > 0)) throw new StatsInputError('Anderson–Darling test needs a non-constant sample');
  // ln Φ(w_i) and ln(1 − Φ(w_{n+1−i})) = ln Φ(−w_{n+1−i}), each from the tail that keeps precision.
  let S = 0;
  for (let i = 0; i < n; i++) {
    const wi = (sorted[i] - xbar) / s;
    const wj = (sorted[n - 1 - i] - xbar) / s;
    S += (2 * i + 1) * (Math.log(normalCdf(wi)) + Math.log(normalCdf(-wj)));
  }
  const a2 = -n - S / n;
  const a2Adjusted = a2 * (1 + 0.75 / n + 2.25 / (n * n));
  return { n, a2, a2Adjusted, pValue: andersonDarlingPValue(a2Adjusted) };
}
