// Ordinary least squares by Householder QR, with the usual inference.
//
// Sources:
// - Least squares via QR, never the normal equations: Golub & Van Loan, Matrix Computations, 4th ed., §5.3;
//   (XᵀX)⁻¹ = R⁻¹R⁻ᵀ (same section). Accuracy benchmark: NIST StRD linear
//   regression data sets (Longley 1967, Norris), certified to 15 digits.
// - t tests, overall F test, R², adjusted R², confidence and prediction intervals for a new row:
//   D. C. Montgomery, E. A. Peck & G. G. Vining, Introduction to Linear Regression Analysis, 5th ed.,
//   §§3.3–3.5. Without an intercept, R² and F are taken about zero (uncentred), as R's lm and statsmodels do.
// - Diagnostics (VIF, leverage, Cook's distance, externally studentised residuals): see
//   regressionDiagnostics.ts.

import {
  columnDependencies,
  householderQr,
  qtMultiply,
  solveUpper,
  thinQ,
  toColumns,
  upperInverse,
  type MatrixInput,
} from './householderQr.ts';
import { betaCdf, tCdf, tQuantile } from './distributions.ts';
import {
  cooksDistance,
  externallyStudentizedResiduals,
  leverageFromQ,
  varianceInflationFactors,
} from './regressionDiagnostics.ts';

export type { MatrixInput } from './householderQr.ts';

/** Name given to the intercept term. */
export const INTERCEPT_NAME = '(Intercept)';

export class RegressionInputError extends Error {
  override name = 'RegressionInputError';
}

/** One term found to be (numerically) a linear combination of earlier terms. */
export interface CollinearTerm {
  /** The term that was found redundant. */
  name: string;
  /** name ≈ Σ coefficient · with.name, over the data given (the terms involved in the dependency). */
  with: { name: string; coefficient: number }[];
}

/**
 * Thrown when the design matrix is rank deficient: some predictors are (to the QR tolerance) linear
 * combinations of others, so their coefficients are not identifiable. `names` lists every term involved;
 * `collinear` says which terms are redundant and of which others they are a combination.
 */
export class RankDeficientError extends Error {
  override name = 'RankDeficientError';
  readonly names: string[];
  readonly collinear: CollinearTerm[];
  readonly rank: number;
  constructor(collinear: CollinearTerm[], rank: number) {
    const describe = (c: CollinearTerm) =>
      `${c.name} = ${c.with.length ? c.with.map((w) => `${fmt(w.coefficient)}·${w.name}`).join(' + ') : '0'}`;
    super(`collinear predictors (rank ${rank}): ${collinear.map(describe).join('; ')}`);
    this.collinear = collinear;
    this.rank = rank;
    const names = new Set<string>();
    for (const c of collinear) {
      names.add(c.name);
      for (const w of c.with) names.add(w.name);
    }
    this.names = [...names];
  }
}

const fmt = (x: number) => Number(x.toPrecision(6)).toString();

export interface OlsOptions {
  /** Predictor names, one per column of X (the intercept is added and named "(Intercept)"). */
  names: readonly string[];
  /** Add an intercept column (default true). */
  intercept?: boolean;
  /** Compute VIF, leverage, Cook's distance and studentised residuals (default false). */
  diagnostics?: boolean;
  /** Relative tolerance of the QR rank decision (default 1e-7). */
  tolerance?: number;
}

export interface OlsCoefficient {
  name: string;
  estimate: number;
  standardError: number;
  /** estimate / standardError */
  t: number;
  /** Two-sided p-value from the t distribution with dfResidual degrees of freedom. */
  p: number;
}

export interface OlsDiagnostics {
  /** Variance inflation factor per predictor (not the intercept), in predictor order. */
  vif: { name: string; vif: number }[];
  /** Diagonal of the hat matrix. */
  leverage: number[];
  cooksDistance: number[];
  /** Externally studentised (deleted) residuals; NaN where leverage is 1. */
  studentizedResiduals: number[];
}

export interface OlsPredictOptions {
  /** Two-sided interval level (default 0.95). */
  level?: number;
}

export interface OlsPrediction {
  fit: number;
  /** Standard error of the fitted mean at this row. */
  seFit: number;
  /** Interval for the mean response. */
  confidence: { lower: number; upper: number };
  /** Interval for a single new observation. */
  prediction: { lower: number; upper: number };
}

export interface OlsFit {
  /** Term names in coefficient order (intercept first when present). */
  terms: string[];
  coefficients: OlsCoefficient[];
  intercept: boolean;
  n: number;
  /** Number of coefficients (including the intercept). */
  p: number;
  dfModel: number;
  dfResidual: number;
  /** Residual sum of squares. */
  rss: number;
  /** Total sum of squares (about the mean with an intercept, about zero without). */
  tss: number;
  rSquared: number;
  adjustedRSquared: number;
  /** Residual standard deviation sqrt(rss / dfResidual) ("RMSE" of the fit). */
  sigma: number;
  fStatistic: number;
  fPValue: number;
  fitted: number[];
  residuals: number[];
  /** (XᵀX)⁻¹, from R⁻¹ (terms order). */
  xtxInverse: number[][];
  /** sigma² (XᵀX)⁻¹ */
  covariance: number[][];
  diagnostics?: OlsDiagnostics;
  /** Fitted values with intervals for new rows of predictors (without the intercept column). */
  predict(rows: MatrixInput, options?: OlsPredictOptions): OlsPrediction[];
}

function checkFinite(values: ArrayLike<number>, what: string): void {
  for (let i = 0; i < values.length; i++) {
    if (!Number.isFinite(values[i])) throw new RegressionInputError(`${what} has a non-finite value at index ${i}`);
  }
}

/** Fit y = Xβ + ε by least squares. Throws RankDeficientError (with names) if X is collinear. */
export function fitOls(x: MatrixInput, y: readonly number[], options: OlsOptions): OlsFit {
  const withIntercept = options.intercept ?? true;
  const names = [...options.names];
  const { rows: n, cols, columns: predictors } = toColumns(x);
  if (cols !== names.length && n > 0) {
    throw new RegressionInputError(`X has ${cols} columns but ${names.length} names were given`);
  }
  if (new Set(names).size !== names.length) throw new RegressionInputError('predictor names must be unique');
  if (withIntercept && names.includes(INTERCEPT_NAME)) {
    throw new RegressionInputError(`"${INTERCEPT_NAME}" is reserved for the intercept`);
  }
  if (y.length !== n) throw new RegressionInputError(`y has ${y.length} values but X has ${n} rows`);
  predictors.forEach((c, j) => checkFinite(c, `predictor ${names[j]}`));
  checkFinite(y, 'y');

  const terms = withIntercept ? [INTERCEPT_NAME, ...names] : names;
  const design = withIntercept ? [new Float64Array(n).fill(1), ...predictors] : predictors;
  const p = design.length;
  if (p === 0) throw new RegressionInputError('the model has no terms (no predictors and no intercept)');
  if (n <= p) {
    throw new RegressionInputError(`need more observations than coefficients: n = ${n}, coefficients = ${p}`);
  }

  const qr = householderQr(design, { tolerance: options.tolerance });
  if (qr.rank < p) {
    const collinear = columnDependencies(qr).map((d) => ({
      name: terms[d.column],
      with: d.with.map((w) => ({ name: terms[w.column], coefficient: w.coefficient })),
    }));
    throw new RankDeficientError(collinear, qr.rank);
  }

  const qty = qtMultiply(qr, y);
  const bPivoted = solveUpper(qr, qty, p);
  const beta = new Float64Array(p);
  for (let k = 0; k < p; k++) beta[qr.pivot[k]] = bPivoted[k];

  // Sums of squares from Qᵀy: rss = ‖(Qᵀy)[p:]‖²; with the intercept first (it is never moved: it is
  // the first column and non-zero), (Qᵀy)[0]² = n·ȳ², so the centred regression SS is Σ_{k≥1}(Qᵀy)_k².
  let rss = 0;
  for (let i = p; i < n; i++) rss += qty[i] * qty[i];
  let ess = 0;
  for (let k = withIntercept ? 1 : 0; k < p; k++) ess += qty[k] * qty[k];
  const tss = ess + rss;
  const dfResidual = n - p;
  const dfModel = withIntercept ? p - 1 : p;
  const sigma2 = rss / dfResidual;
  const sigma = Math.sqrt(sigma2);
  const rSquared = tss > 0 ? ess / tss : NaN;
  const adjustedRSquared = 1 - ((n - (withIntercept ? 1 : 0)) / dfResidual) * (1 - rSquared);
  const fStatistic = dfModel > 0 ? ess / dfModel / sigma2 : NaN;
  // Upper tail of F(d1, d2) as a regularised incomplete beta, exact in the far tail:
  // P(F > f) = I_{d2/(d2 + d1 f)}(d2/2, d1/2).
  const fPValue =
    dfModel > 0
      ? Number.isFinite(fStatistic)
        ? betaCdf(dfResidual / (dfResidual + dfModel * fStatistic), dfResidual / 2, dfModel / 2)
        : 0
      : NaN;

  // (XᵀX)⁻¹ = P R⁻¹ R⁻ᵀ Pᵀ.
  const rInv = upperInverse(qr, p);
  const xtxInverse = Array.from({ length: p }, () => new Array<number>(p).fill(0));
  for (let a = 0; a < p; a++) {
    for (let b = a; b < p; b++) {
      let s = 0;
      for (let k = b; k < p; k++) s += rInv[a][k] * rInv[b][k];
      const ia = qr.pivot[a];
      const ib = qr.pivot[b];
      xtxInverse[ia][ib] = s;
      xtxInverse[ib][ia] = s;
    }
  }
  const covariance = xtxInverse.map((row) => row.map((v) => v * sigma2));

  const coefficients: OlsCoefficient[] = terms.map((name, j) => {
    const estimate = beta[j];
    const standardError = Math.sqrt(covariance[j][j]);
    const t = estimate / standardError;
    return { name, estimate, standardError, t, p: 2 * tCdf(-Math.abs(t), dfResidual) };
  });

  const fitted = new Array<number>(n).fill(0);
  for (let j = 0; j < p; j++) {
    const c = design[j];
    const bj = beta[j];
    for (let i = 0; i < n; i++) fitted[i] += bj * c[i];
  }
  const residuals = fitted.map((f, i) => y[i] - f);

  let diagnostics: OlsDiagnostics | undefined;
  if (options.diagnostics) {
    const leverage = leverageFromQ(thinQ(qr, p));
    const firstPredictor = withIntercept ? 1 : 0;
    const vif = varianceInflationFactors(
      predictors,
      names.map((_, j) => xtxInverse[j + firstPredictor][j + firstPredictor]),
      withIntercept,
    );
    diagnostics = {
      vif: names.map((name, j) => ({ name, vif: vif[j] })),
      leverage,
      cooksDistance: cooksDistance(residuals, leverage, sigma2, p),
      studentizedResiduals: externallyStudentizedResiduals(residuals, leverage, rss, dfResidual),
    };
  }

  const predict = (rowsInput: MatrixInput, predictOptions: OlsPredictOptions = {}): OlsPrediction[] => {
    const level = predictOptions.level ?? 0.95;
    if (!(level > 0 && level < 1)) throw new RangeError(`level must be in (0, 1), got ${level}`);
    const { rows: m, cols: c, columns: newCols } = toColumns(rowsInput);
    if (m > 0 && c !== names.length) {
      throw new RegressionInputError(`new rows have ${c} columns, the model has ${names.length} predictors`);
    }
    newCols.forEach((col, j) => checkFinite(col, `new predictor ${names[j]}`));
    const tq = tQuantile(1 - (1 - level) / 2, dfResidual);
    const out: OlsPrediction[] = [];
    const xRow = new Float64Array(p);
    for (let i = 0; i < m; i++) {
      // Row in pivoted order: xRow[k] = x0[pivot[k]].
      for (let k = 0; k < p; k++) {
        const term = qr.pivot[k];
        xRow[k] = withIntercept ? (term === 0 ? 1 : newCols[term - 1][i]) : newCols[term][i];
      }
      let fit = 0;
      for (let k = 0; k < p; k++) fit += xRow[k] * bPivoted[k];
      // Var(fit)/σ² = x0ᵀ(XᵀX)⁻¹x0 = ‖R⁻ᵀ x0‖², with (R⁻ᵀ x0)_b = Σ_{a≤b} R⁻¹[a][b]·x0_a.
      let q = 0;
      for (let b = 0; b < p; b++) {
        let s = 0;
        for (let a = 0; a <= b; a++) s += rInv[a][b] * xRow[a];
        q += s * s;
      }
      const seFit = sigma * Math.sqrt(q);
      const sePred = sigma * Math.sqrt(1 + q);
      out.push({
        fit,
        seFit,
        confidence: { lower: fit - tq * seFit, upper: fit + tq * seFit },
        prediction: { lower: fit - tq * sePred, upper: fit + tq * sePred },
      });
    }
    return out;
  };

  return {
    terms,
    coefficients,
    intercept: withIntercept,
    n,
    p,
    dfModel,
    dfResidual,
    rss,
    tss,
    rSquared,
    adjustedRSquared,
    sigma,
    fStatistic,
    fPValue,
    fitted,
    residuals,
    xtxInverse,
    covariance,
    diagnostics,
    predict,
  };
}
