// Regression diagnostics computed from a QR fit.
//
// Sources:
// - Leverage h_i = diagonal of the hat matrix H = Q₁Q₁ᵀ: D. A. Belsley, E. Kuh & R. E. Welsch,
//   Regression Diagnostics (Wiley, 1980), ch. 2; computing it from Q: Golub & Van Loan, Matrix
//   Computations, 4th ed., §5.3.
// - Cook's distance D_i = e_i² h_i / (p s² (1 − h_i)²): R. D. Cook, "Detection of influential observation
//   in linear regression", Technometrics 19(1), 1977.
// - Externally studentised (deleted) residual t_i = e_i / (s_(i) √(1 − h_i)), with
//   s_(i)² = (RSS − e_i²/(1 − h_i)) / (n − p − 1): Belsley, Kuh & Welsch (1980), ch. 2 ("RSTUDENT");
//   R. D. Cook & S. Weisberg, Residuals and Influence in Regression (Chapman & Hall, 1982).
// - Variance inflation factor VIF_j = 1/(1 − R_j²), R_j² from regressing predictor j on the others (with the
//   intercept if the model has one); equal to SS_j·[(XᵀX)⁻¹]_jj with SS_j the sum of squares of x_j about
//   its mean (about zero without an intercept): D. W. Marquardt, Technometrics 12(3), 1970; Montgomery,
//   Peck & Vining, Introduction to Linear Regression Analysis, 5th ed., §9.4.

/** Leverages from the first p columns of Q: h_i = Σ_k Q_ik². */
export function leverageFromQ(q: readonly Float64Array[]): number[] {
  const n = q.length > 0 ? q[0].length : 0;
  const h = new Array<number>(n).fill(0);
  for (const col of q) for (let i = 0; i < n; i++) h[i] += col[i] * col[i];
  return h;
}

// 1 − h below this is treated as 0 (the point fits itself exactly; deletion statistics undefined).
const LEVERAGE_ONE = 1e-12;

/** Cook's distance per observation; NaN where h_i is 1 (to rounding). */
export function cooksDistance(
  residuals: readonly number[],
  leverage: readonly number[],
  sigma2: number,
  p: number,
): number[] {
  return residuals.map((e, i) => {
    const h = leverage[i];
    const oneMinus = 1 - h;
    if (oneMinus < LEVERAGE_ONE) return NaN;
    return (e * e * h) / (p * sigma2 * oneMinus * oneMinus);
  });
}

/** Externally studentised residuals; NaN where h_i is 1 or no residual degrees of freedom remain. */
export function externallyStudentizedResiduals(
  residuals: readonly number[],
  leverage: readonly number[],
  rss: number,
  dfResidual: number,
): number[] {
  const df = dfResidual - 1;
  return residuals.map((e, i) => {
    const oneMinus = 1 - leverage[i];
    if (oneMinus < LEVERAGE_ONE || df <= 0) return NaN;
    const s2 = (rss - (e * e) / oneMinus) / df;
    if (!(s2 > 0)) return NaN;
    return e / Math.sqrt(s2 * oneMinus);
  });
}

/**
 * VIF for each predictor column from the diagonal of (XᵀX)⁻¹ belonging to it.
 * @param predictors predictor columns (no intercept column)
 * @param xtxInverseDiagonal [(XᵀX)⁻¹]_jj for each predictor, in the same order
 * @param centred true when the model has an intercept (sums of squares about the mean)
 */
export function varianceInflationFactors(
  predictors: readonly Float64Array[],
  xtxInverseDiagonal: readonly number[],
  centred: boolean,
): number[] {
  return predictors.map((x, j) => {
    const n = x.length;
    let mean = 0;
    if (centred) {
      for (let i = 0; i < n; i++) mean += x[i];
      mean /= n;
    }
    let ss = 0;
    for (let i = 0; i < n; i++) ss += (x[i] - mean) ** 2;
    return ss * xtxInverseDiagonal[j];
  });
}
