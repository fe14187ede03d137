// Box–Cox fit for skewed positive data and capability from the fitted distribution.
// Transform (Box, G. E. P. & Cox, D. R. 1964, "An analysis of transformations", JRSS B 26:211–252):
//   y = (x^λ − 1)/λ (λ ≠ 0), y = ln x (λ = 0).
// λ by maximum likelihood: the profile log-likelihood ℓ(λ) = −(n/2)·ln σ̂²(λ) + (λ − 1)·Σ ln x, σ̂² the
// variance of y with divisor n (as scipy.stats.boxcox_llf), maximised by Brent's method on [−5, 5]
// (a λ on a bound is reported as such: near-symmetric data with a small coefficient of variation give a
// flat likelihood in λ).
// Capability from the fitted distribution (ISO 22514-2, distribution-identification methods; the
// quantile form of the indices): with μ_y, σ_y the mean and n − 1 SD of y and T⁻¹ the inverse transform,
//   X(p) = T⁻¹(μ_y + z_p σ_y),  Pp = (USL − LSL)/(X(0.99865) − X(0.00135)),
//   Ppu = (USL − X(0.5))/(X(0.99865) − X(0.5)),  Ppl = (X(0.5) − LSL)/(X(0.5) − X(0.00135)),
//   Ppk = min(Ppu, Ppl); expected share outside = Φ((T(LSL) − μ_y)/σ_y) + Φ((μ_y − T(USL))/σ_y).
// A limit at or below 0 cannot be transformed: nothing of the fitted distribution lies below it.
import { normalCdf, normalQuantile } from './distributions.ts';
import { StatsInputError } from './descriptive.ts';
import { brentMinimize } from './optimize.ts';

export const BOX_COX_LAMBDA_RANGE = [-5, 5] as const;

export function boxCoxTransform(x: number, lambda: number): number {
  return Math.abs(lambda) < 1e-12 ? Math.log(x) : (Math.pow(x, lambda) - 1) / lambda;
}

export function boxCoxInverse(y: number, lambda: number): number {
  if (Math.abs(lambda) < 1e-12) return Math.exp(y);
  const base = lambda * y + 1;
  // Outside the range of the transform: the quantile lies at 0 (λ > 0) or beyond every value (λ < 0).
  if (base <= 0) return lambda > 0 ? 0 : Infinity;
  return Math.pow(base, 1 / lambda);
}

/** Profile log-likelihood of λ (up to a constant), as scipy.stats.boxcox_llf. */
export function boxCoxLogLikelihood(values: readonly number[], lambda: number): number {
  const logs = Float64Array.from(values, Math.log);
  return logLikelihoodOfLogs(logs, logs.reduce((a, b) => a + b, 0), lambda);
}

/** ℓ(λ) from the logs of the values: y = expm1(λ·ln x)/λ, one pass for the mean, one for the variance. */
function logLikelihoodOfLogs(logs: Float64Array, logSum: number, lambda: number): number {
  const n = logs.length;
  const y = new Float64Array(n);
  let s = 0;
  const zero = Math.abs(lambda) < 1e-12;
  for (let i = 0; i < n; i++) {
    y[i] = zero ? logs[i] : Math.expm1(lambda * logs[i]) / lambda;
    s += y[i];
  }
  const m = s / n;
  let ss = 0;
  for (let i = 0; i < n; i++) ss += (y[i] - m) ** 2;
  return -(n / 2) * Math.log(ss / n) + (lambda - 1) * logSum;
}

export interface BoxCoxFit {
  lambda: number;
  /** True when λ is at a bound of BOX_COX_LAMBDA_RANGE. */
  atBound: boolean;
  /** Mean and n − 1 SD of the transformed values. */
  mean: number;
  sd: number;
}

/** Maximum-likelihood Box–Cox fit (see header). */
export function boxCoxFit(values: readonly number[]): BoxCoxFit {
  if (values.length < 3) throw new StatsInputError('a Box–Cox fit needs at least 3 values');
  if (!values.every((x) => Number.isFinite(x) && x > 0)) throw new StatsInputError('a Box–Cox fit needs positive values');
  const [a, b] = BOX_COX_LAMBDA_RANGE;
  const logs = Float64Array.from(values, Math.log);
  const logSum = logs.reduce((acc, v) => acc + v, 0);
  const { x: lambda } = brentMinimize((l) => -logLikelihoodOfLogs(logs, logSum, l), a, b, 1e-6);
  const y = values.map((x) => boxCoxTransform(x, lambda));
  const mean = y.reduce((s, v) => s + v, 0) / y.length;
  const sd = Math.sqrt(y.reduce((s, v) => s + (v - mean) ** 2, 0) / (y.length - 1));
  if (!(sd > 0)) throw new StatsInputError('a Box–Cox fit needs values with some spread');
  return { lambda, atBound: Math.abs(lambda - a) < 1e-3 || Math.abs(lambda - b) < 1e-3, mean, sd };
}

export interface FittedIndices {
  x00135: number;
  x50: number;
  x99865: number;
  pp: number | null;
  ppu: number | null;
  ppl: number | null;
  ppk: number;
  /** Expected share outside the band under the fitted distribution, PPM. */
  expectedPpm: number;
}

/** Capability indices from a Box–Cox fit (see header). */
export function boxCoxIndices(fit: BoxCoxFit, lsl: number | null, usl: number | null): FittedIndices {
  if (lsl === null && usl === null) throw new StatsInputError('a specification band needs an LSL, a USL or both');
  const q = (p: number) => boxCoxInverse(fit.mean + normalQuantile(p) * fit.sd, fit.lambda);
  const x00135 = q(0.00135);
  const x50 = q(0.5);
  const x99865 = q(0.99865);
  const pp = lsl !== null && usl !== null ? (usl - lsl) / (x99865 - x00135) : null;
  const ppu = usl === null ? null : (usl - x50) / (x99865 - x50);
  const ppl = lsl === null ? null : (x50 - lsl) / (x50 - x00135);
  const ppk = ppu === null ? (ppl as number) : ppl === null ? ppu : Math.min(ppu, ppl);
  const tail = (limit: number) => (fit.mean - boxCoxTransform(limit, fit.lambda)) / fit.sd;
  const below = lsl === null || lsl <= 0 ? 0 : normalCdf(-tail(lsl));
  const above = usl === null ? 0 : usl <= 0 ? 1 : normalCdf(tail(usl));
  return { x00135, x50, x99865, pp, ppu, ppl, ppk, expectedPpm: 1e6 * (below + above) };
}
