// Monotone piecewise cubic Hermite interpolation.
// Source: F. N. Fritsch & R. E. Carlson (1980), "Monotone piecewise cubic interpolation",
// SIAM J. Numer. Anal. 17(2), 238-246. Steps as in the paper:
//   1. secant slopes delta_k = (y_{k+1} - y_k) / h_k;
//   2. initial derivatives by the standard three-point formula (interior: weighted mean of the two
//      adjacent secants; ends: the one-sided three-point formula, set to 0 if its sign disagrees
//      with the end secant);
//   3. where a secant is 0 both end derivatives of that interval are 0; where adjacent secants
//      change sign (a local extremum of the data) the derivative is 0;
//   4. with alpha = d_k / delta_k, beta = d_{k+1} / delta_k, if alpha^2 + beta^2 > 9 both are
//      scaled by tau = 3 / sqrt(alpha^2 + beta^2) (the paper's circle sufficient condition).
// The result is monotone on every interval where the data are monotone, and C1 overall.
//
// Extrapolation policy: the interpolant NEVER extrapolates. `at(x)` returns null for x outside
// [x_first, x_last] (a relative slack of 1e-12 of the span absorbs floating-point round-off of
// unit conversions at the end knots). Callers must handle null; nothing is silently invented.

export class InterpolationInputError extends Error {
  constructor(message: string) {
    super(message);
    this.name = 'InterpolationInputError';
  }
}

export interface MonotoneCubicInterpolant {
  readonly xMin: number;
  readonly xMax: number;
  /** Knot derivatives after the Fritsch-Carlson adjustment. */
  readonly slopes: readonly number[];
  /** Interpolated value, or null when x lies outside the knot range (never extrapolates). */
  at(x: number): number | null;
  /** True when x lies within the knot range (same slack as `at`). */
  covers(x: number): boolean;
}

const sign = (v: number): number => (v > 0 ? 1 : v < 0 ? -1 : 0);

/** Build a Fritsch-Carlson monotone cubic through (xs[i], ys[i]); xs strictly increasing, n >= 2. */
export function monotoneCubic(xs: readonly number[], ys: readonly number[]): MonotoneCubicInterpolant {
  const n = xs.length;
  if (n !== ys.length) throw new InterpolationInputError(`got ${n} x values but ${ys.length} y values`);
  if (n < 2) throw new InterpolationInputError('monotone interpolation needs at least two points');
  for (let i = 0; i < n; i++) {
    if (!Number.isFinite(xs[i]) || !Number.isFinite(ys[i])) {
      throw new InterpolationInputError(`point ${i} is not a pair of finite numbers`);
    }
    if (i > 0 && !(xs[i] > xs[i - 1])) {
      throw new InterpolationInputError(`x values must be strictly increasing (index ${i}: ${xs[i - 1]} then ${xs[i]})`);
    }
  }
  const x = [...xs];
  const y = [...ys];
  const h: number[] = [];
  const delta: number[] = [];
  for (let k = 0; k < n - 1; k++) {
    h.push(x[k + 1] - x[k]);
    delta.push((y[k + 1] - y[k]) / h[k]);
  }

  // Step 2: three-point initial derivatives.
  const d = new Array<number>(n);
  if (n === 2) {
    d[0] = delta[0];
    d[1] = delta[0];
  } else {
    for (let k = 1; k < n - 1; k++) {
      d[k] = (h[k] * delta[k - 1] + h[k - 1] * delta[k]) / (h[k - 1] + h[k]);
    }
    d[0] = ((2 * h[0] + h[1]) * delta[0] - h[0] * delta[1]) / (h[0] + h[1]);
    if (sign(d[0]) !== sign(delta[0])) d[0] = 0;
    const m = n - 1;
    d[m] = ((2 * h[m - 1] + h[m - 2]) * delta[m - 1] - h[m - 1] * delta[m - 2]) / (h[m - 1] + h[m - 2]);
    if (sign(d[m]) !== sign(delta[m - 1])) d[m] = 0;
  }

  // Step 3: flat intervals and local extrema.
  for (let k = 1; k < n - 1; k++) {
    if (delta[k - 1] * delta[k] < 0) d[k] = 0;
  }
  for (let k = 0; k < n - 1; k++) {
    if (delta[k] === 0) {
      d[k] = 0;
      d[k + 1] = 0;
    }
  }

  // Step 4: restrict (alpha, beta) to the circle of radius 3.
  for (let k = 0; k < n - 1; k++) {
    if (delta[k] === 0) continue;
    const a = d[k] / delta[k];
    const b = d[k + 1] / delta[k];
    const r2 = a * a + b * b;
    if (r2 > 9) {
      const tau = 3 / Math.sqrt(r2);
      d[k] = tau * a * delta[k];
      d[k + 1] = tau * b * delta[k];
    }
  }

  const xMin = x[0];
  const xMax = x[n - 1];
  const slack = 1e-12 * (xMax - xMin);
  const covers = (t: number): boolean => Number.isFinite(t) && t >= xMin - slack && t <= xMax + slack;

  const at = (t: number): number | null => {
    if (!covers(t)) return null;
    const tc = Math.min(Math.max(t, xMin), xMax);
    // Binary search for the interval k with x[k] <= tc <= x[k+1].
    let lo = 0;
    let hi = n - 1;
    while (hi - lo > 1) {
      const mid = (lo + hi) >> 1;
      if (x[mid] <= tc) lo = mid;
      else hi = mid;
    }
    const k = lo;
    if (tc === x[k]) return y[k];
    if (tc === x[k + 1]) return y[k + 1];
    const s = (tc - x[k]) / h[k];
    const s2 = s * s;
    const s3 = s2 * s;
    const h00 = 2 * s3 - 3 * s2 + 1;
    const h10 = s3 - 2 * s2 + s;
    const h01 = -2 * s3 + 3 * s2;
    const h11 = s3 - s2;
    return h00 * y[k] + h10 * h[k] * d[k] + h01 * y[k + 1] + h11 * h[k] * d[k + 1];
  };

  return { xMin, xMax, slopes: d, at, covers };
}
