// Ridge regression with a chosen penalty or one selected by generalised cross-validation.
//
// Sources:
// - Ridge estimator b(λ) = (ZᵀZ + λI)⁻¹Zᵀy on standardised predictors, intercept not penalised:
//   A. E. Hoerl & R. W. Kennard, "Ridge regression: biased estimation for nonorthogonal problems",
//   Technometrics 12(1), 55–67, 1970.
// - Generalised cross-validation GCV(λ) = n·RSS(λ) / (n − tr H(λ))², effective degrees of freedom tr H(λ):
//   G. H. Golub, M. Heath & G. Wahba, "Generalized cross-validation as a method for choosing a good ridge
//   parameter", Technometrics 21(2), 215–223, 1979.
// - Computation through the SVD Z = U·diag(d)·Vᵀ, so every λ costs O(p): b = V·diag(d/(d²+λ))·Uᵀy,
//   tr H = Σ d²/(d²+λ) (Golub, Heath & Wahba 1979, §2; Hastie, Tibshirani & Friedman, The Elements of
//   Statistical Learning, 2nd ed., §3.4.1). Here Z = Q·M by Householder QR first, and only the small M is
//   passed to ml-matrix's SVD.
//
// Standardisation (a convention that fixes the scale of λ): with an intercept, each predictor is centred and
// divided by its population SD (divisor n) and y is centred; without one, predictors are divided by their
// root mean square and nothing is centred. tr H counts the intercept as one degree of freedom.

import { SingularValueDecomposition, Matrix } from 'ml-matrix';
import { householderQr, qtMultiply, rEntry, toColumns, type MatrixInput } from './householderQr.ts';
import { INTERCEPT_NAME, RegressionInputError } from './ols.ts';

export interface RidgeOptions {
  /** Predictor names, one per column of X. */
  names: readonly string[];
  /** Add an unpenalised intercept (default true). */
  intercept?: boolean;
  /** Penalty on the standardised coefficients, or 'gcv' to choose it (default 'gcv'). */
  lambda?: number | 'gcv';
  /** Search range for GCV (default [1e-6·n, 1e3·n]). */
  lambdaRange?: [number, number];
  /** Points of the log-spaced GCV grid before refinement (default 61). */
  gridSize?: number;
}

export interface RidgeFit {
  /** Term names, intercept first when present. */
  terms: string[];
  /** Coefficients in the original units of the predictors (intercept first when present). */
  coefficients: { name: string; estimate: number }[];
  /** Coefficients on the standardised predictors (no intercept). */
  standardizedCoefficients: { name: string; estimate: number }[];
  lambda: number;
  /** tr H(λ), counting the intercept. */
  effectiveDf: number;
  rss: number;
  /** n·RSS / (n − tr H)² */
  gcv: number;
  /** sqrt(rss / (n − effectiveDf)) */
  sigma: number;
  /** Centre and scale used for each predictor. */
  center: number[];
  scale: number[];
  /** GCV over the search grid (only when λ was selected). */
  gcvPath?: { lambda: number; gcv: number }[];
  /** True when the selected λ sits at an end of the search range (widen it). */
  lambdaAtBoundary?: boolean;
  /** Fitted values for new rows of predictors (without an intercept column). */
  predict(rows: MatrixInput): number[];
}

/** Spectral pieces that make ridge quantities cheap for any λ. */
interface RidgeSpectrum {
  n: number;
  d2: Float64Array; // squared singular values of Z
  c: Float64Array; // Uᵀ y (projected response)
  v: Matrix; // right singular vectors (p × q)
  rssFloor: number; // part of ‖y‖² outside the column space of Z
  interceptDf: number;
}

function quantities(s: RidgeSpectrum, lambda: number): { rss: number; df: number; gcv: number } {
  let rss = s.rssFloor;
  let df = s.interceptDf;
  for (let k = 0; k < s.d2.length; k++) {
    const denom = s.d2[k] + lambda;
    const shrink = denom > 0 ? lambda / denom : 1; // a null direction with λ = 0 explains nothing
    rss += shrink * shrink * s.c[k] * s.c[k];
    df += denom > 0 ? s.d2[k] / denom : 0;
  }
  const gcv = (s.n * rss) / (s.n - df) ** 2;
  return { rss, df, gcv };
}

/** Golden-section search for the minimum of f on [a, b] (J. Kiefer, Proc. AMS 4, 1953; Press et al., Numerical Recipes). */
function goldenMin(f: (t: number) => number, a: number, b: number, tol: number): number {
  const g = (Math.sqrt(5) - 1) / 2;
  let x1 = b - g * (b - a);
  let x2 = a + g * (b - a);
  let f1 = f(x1);
  let f2 = f(x2);
  while (b - a > tol) {
    if (f1 <= f2) {
      b = x2;
      x2 = x1;
      f2 = f1;
      x1 = b - g * (b - a);
      f1 = f(x1);
    } else {
      a = x1;
      x1 = x2;
      f1 = f2;
      x2 = a + g * (b - a);
      f2 = f(x2);
    }
  }
  return (a + b) / 2;
}

export function fitRidge(x: MatrixInput, y: readonly number[], options: RidgeOptions): RidgeFit {
  const withIntercept = options.intercept ?? true;
  const names = [...options.names];
  const { rows: n, cols: p, columns } = toColumns(x);
  if (n > 0 && p !== names.length) throw new RegressionInputError(`X has ${p} columns but ${names.length} names were given`);
  if (y.length !== n) throw new RegressionInputError(`y has ${y.length} values but X has ${n} rows`);
  if (names.length === 0) throw new RegressionInputError('ridge needs at least one predictor');
  if (n < 3) throw new RegressionInputError(`ridge needs at least 3 observations, got ${n}`);
  for (let i = 0; i < n; i++) if (!Number.isFinite(y[i])) throw new RegressionInputError(`y has a non-finite value at index ${i}`);

  // Standardise.
  const center = new Array<number>(p).fill(0);
  const scale = new Array<number>(p).fill(0);
  const z = columns.map((col, j) => {
    let mean = 0;
    if (withIntercept) {
      for (let i = 0; i < n; i++) mean += col[i];
      mean /= n;
    }
    let ss = 0;
    for (let i = 0; i < n; i++) {
      if (!Number.isFinite(col[i])) throw new RegressionInputError(`predictor ${names[j]} has a non-finite value at index ${i}`);
      ss += (col[i] - mean) ** 2;
    }
    const sd = Math.sqrt(ss / n);
    if (!(sd > 0)) throw new RegressionInputError(`predictor ${names[j]} is constant and cannot be standardised`);
    center[j] = mean;
    scale[j] = sd;
    const out = new Float64Array(n);
    for (let i = 0; i < n; i++) out[i] = (col[i] - mean) / sd;
    return out;
  });
  let yMean = 0;
  if (withIntercept) {
    for (let i = 0; i < n; i++) yMean += y[i];
    yMean /= n;
  }
  const yc = Float64Array.from(y, (v) => v - yMean);

  // Z·P = Q·R; M = R·Pᵀ (q × p, q = min(n, p)) so that Z = Q₁·M.
  const qr = householderQr(z, { tolerance: 0 });
  const q = Math.min(n, p);
  const m = new Matrix(q, p);
  for (let i = 0; i < q; i++) for (let k = i; k < p; k++) m.set(i, qr.pivot[k], rEntry(qr, i, k));
  const qty = qtMultiply(qr, yc);
  let rssFloor = 0;
  for (let i = q; i < n; i++) rssFloor += qty[i] * qty[i];

  const svd = new SingularValueDecomposition(m, { autoTranspose: true });
  const d = svd.diagonal;
  const u = svd.leftSingularVectors; // q × r
  const v = svd.rightSingularVectors; // p × r
  const r = d.length;
  const d2 = Float64Array.from(d, (s) => s * s);
  const c = new Float64Array(r);
  for (let k = 0; k < r; k++) {
    let s = 0;
    for (let i = 0; i < q; i++) s += u.get(i, k) * qty[i];
    c[k] = s;
  }
  // Any part of Q₁ᵀy not reached by U (only if U has fewer than q columns) is unexplained at every λ.
  let cc = 0;
  for (const ck of c) cc += ck * ck;
  let top = 0;
  for (let i = 0; i < q; i++) top += qty[i] * qty[i];
  rssFloor += Math.max(0, top - cc);
  const spectrum: RidgeSpectrum = { n, d2, c, v, rssFloor, interceptDf: withIntercept ? 1 : 0 };

  let lambda: number;
  let gcvPath: { lambda: number; gcv: number }[] | undefined;
  let lambdaAtBoundary: boolean | undefined;
  const choice = options.lambda ?? 'gcv';
  if (choice === 'gcv') {
    const [lo, hi] = options.lambdaRange ?? [1e-6 * n, 1e3 * n];
    if (!(lo > 0 && hi > lo)) throw new RangeError(`lambdaRange must satisfy 0 < min < max, got [${lo}, ${hi}]`);
    const size = options.gridSize ?? 61;
    if (!(Number.isInteger(size) && size >= 3)) throw new RangeError(`gridSize must be an integer ≥ 3, got ${size}`);
    const logLo = Math.log(lo);
    const step = (Math.log(hi) - logLo) / (size - 1);
    gcvPath = [];
    let best = 0;
    for (let g = 0; g < size; g++) {
      const lam = Math.exp(logLo + g * step);
      const score = quantities(spectrum, lam).gcv;
      gcvPath.push({ lambda: lam, gcv: score });
      if (score < gcvPath[best].gcv) best = g;
    }
    // Refine between the neighbours of the best grid point, on log λ.
    const a = logLo + Math.max(0, best - 1) * step;
    const b = logLo + Math.min(size - 1, best + 1) * step;
    const t = goldenMin((s) => quantities(spectrum, Math.exp(s)).gcv, a, b, 1e-10);
    lambda = Math.exp(t);
    if (quantities(spectrum, lambda).gcv > gcvPath[best].gcv) lambda = gcvPath[best].lambda;
    lambdaAtBoundary = best === 0 || best === size - 1;
  } else {
    if (!(Number.isFinite(choice) && choice >= 0)) throw new RangeError(`lambda must be a finite number ≥ 0, got ${choice}`);
    lambda = choice;
  }

  const { rss, df, gcv } = quantities(spectrum, lambda);
  // b = V·diag(d/(d²+λ))·c
  const b = new Array<number>(p).fill(0);
  for (let k = 0; k < r; k++) {
    if (d[k] === 0) continue;
    const w = (d[k] / (d2[k] + lambda)) * c[k];
    for (let j = 0; j < p; j++) b[j] += v.get(j, k) * w;
  }
  const slopes = b.map((bj, j) => bj / scale[j]);
  let interceptValue = yMean;
  for (let j = 0; j < p; j++) interceptValue -= slopes[j] * center[j];

  const terms = withIntercept ? [INTERCEPT_NAME, ...names] : names;
  const coefficients = withIntercept
    ? [{ name: INTERCEPT_NAME, estimate: interceptValue }, ...names.map((name, j) => ({ name, estimate: slopes[j] }))]
    : names.map((name, j) => ({ name, estimate: slopes[j] }));

  const predict = (rowsInput: MatrixInput): number[] => {
    const { rows: k, cols, columns: newCols } = toColumns(rowsInput);
    if (k > 0 && cols !== p) throw new RegressionInputError(`new rows have ${cols} columns, the model has ${p} predictors`);
    const out = new Array<number>(k).fill(withIntercept ? interceptValue : 0);
    for (let j = 0; j < p; j++) for (let i = 0; i < k; i++) out[i] += slopes[j] * newCols[j][i];
    return out;
  };

  return {
    terms,
    coefficients,
    standardizedCoefficients: names.map((name, j) => ({ name, estimate: b[j] })),
    lambda,
    effectiveDf: df,
    rss,
    gcv,
    sigma: Math.sqrt(rss / (n - df)),
    center,
    scale,
    gcvPath,
    lambdaAtBoundary,
    predict,
  };
}
