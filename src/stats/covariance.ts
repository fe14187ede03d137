// Covariance estimators for multivariate individual observations (rows = observations).
//  - sample: S = Σ (x_i − x̄)(x_i − x̄)ᵀ / (m − 1).
//  - successive-difference: S₂ = Σ v_i v_iᵀ / (2(m − 1)), v_i = x_{i+1} − x_i (Holmes & Mergen 1993,
//    Quality Engineering 5:619–625; Sullivan & Woodall 1996, J. Quality Technology 28:398–408); robust
//    to a sustained shift in the baseline.
//  - ledoit-wolf: shrinkage towards μI, Ledoit & Wolf (2004), J. Multivariate Analysis 88:365–411,
//    Lemmas 3.2–3.4 (the same estimator as scikit-learn's ledoit_wolf): with S_n the 1/m sample
//    covariance, μ = tr(S_n)/p, d² = ‖S_n − μI‖², b̄² = m⁻² Σ_k ‖x_k x_kᵀ − S_n‖², b² = min(b̄², d²),
//    Σ* = (b²/d²) μI + (1 − b²/d²) S_n, where ‖A‖² = tr(AAᵀ)/p.
import { StatsInputError } from './descriptive.ts';

export type CovarianceMethod = 'sample' | 'successive-difference' | 'ledoit-wolf';

export interface CovarianceEstimate {
  method: CovarianceMethod;
  mean: number[];
  covariance: number[][];
  /** Ledoit–Wolf shrinkage intensity b²/d² in [0, 1]; null for the other methods. */
  shrinkage: number | null;
}

/** Validates a rectangular, finite m × p table of observations; returns its shape. */
export function checkRows(rows: readonly (readonly number[])[]): { m: number; p: number } {
  const m = rows.length;
  if (m === 0) throw new StatsInputError('no observations');
  const p = rows[0].length;
  if (p < 1) throw new StatsInputError('observations have no variables');
  for (let i = 0; i < m; i++) {
    const r = rows[i];
    if (r.length !== p) throw new StatsInputError(`observation ${i} has ${r.length} values, expected ${p}`);
    for (let j = 0; j < p; j++) if (!Number.isFinite(r[j])) throw new StatsInputError(`observation ${i}, variable ${j} is not finite`);
  }
  return { m, p };
}

/** Column means x̄ of the observations. */
export function meanVector(rows: readonly (readonly number[])[]): number[] {
  const { m, p } = checkRows(rows);
  const mu = new Array<number>(p).fill(0);
  for (const r of rows) for (let j = 0; j < p; j++) mu[j] += r[j];
  for (let j = 0; j < p; j++) mu[j] /= m;
  return mu;
}

function symmetricFromUpper(a: number[][]): number[][] {
  const p = a.length;
  for (let i = 0; i < p; i++) for (let j = 0; j < i; j++) a[i][j] = a[j][i];
  return a;
}

function zeros(p: number): number[][] {
  return Array.from({ length: p }, () => new Array<number>(p).fill(0));
}

/** Covariance matrix of the rows by the chosen estimator (see the module header). */
export function estimateCovariance(rows: readonly (readonly number[])[], method: CovarianceMethod = 'sample'): CovarianceEstimate {
  const { m, p } = checkRows(rows);
  if (m < 2) throw new StatsInputError('a covariance needs at least 2 observations');
  const mean = meanVector(rows);
  const c = zeros(p);
  if (method === 'successive-difference') {
    const v = new Array<number>(p);
    for (let i = 1; i < m; i++) {
      for (let j = 0; j < p; j++) v[j] = rows[i][j] - rows[i - 1][j];
      for (let a = 0; a < p; a++) for (let b = a; b < p; b++) c[a][b] += v[a] * v[b];
    }
    const f = 1 / (2 * (m - 1));
    for (let a = 0; a < p; a++) for (let b = a; b < p; b++) c[a][b] *= f;
    return { method, mean, covariance: symmetricFromUpper(c), shrinkage: null };
  }
  const d = new Array<number>(p);
  for (const r of rows) {
    for (let j = 0; j < p; j++) d[j] = r[j] - mean[j];
    for (let a = 0; a < p; a++) for (let b = a; b < p; b++) c[a][b] += d[a] * d[b];
  }
  if (method === 'sample') {
    for (let a = 0; a < p; a++) for (let b = a; b < p; b++) c[a][b] /= m - 1;
    return { method, mean, covariance: symmetricFromUpper(c), shrinkage: null };
  }
  if (method !== 'ledoit-wolf') throw new StatsInputError(`unknown covariance method ${String(method)}`);
  for (let a = 0; a < p; a++) for (let b = a; b < p; b++) c[a][b] /= m;
  const s = symmetricFromUpper(c);
  let trace = 0;
  let frob2 = 0; // Σ_ij S_ij²
  for (let a = 0; a < p; a++) {
    trace += s[a][a];
    for (let b = 0; b < p; b++) frob2 += s[a][b] * s[a][b];
  }
  const mu = trace / p;
  // d² = ‖S − μI‖² = (Σ S_ij² − 2μ tr S + pμ²)/p
  const d2 = (frob2 - 2 * mu * trace + p * mu * mu) / p;
  // ‖x xᵀ − S‖² = ((xᵀx)² − 2 xᵀSx + Σ S_ij²)/p for each centred row x.
  let bsum = 0;
  for (const r of rows) {
    for (let j = 0; j < p; j++) d[j] = r[j] - mean[j];
    let xx = 0;
    let xsx = 0;
    for (let a = 0; a < p; a++) {
      xx += d[a] * d[a];
      let row = 0;
      for (let b = 0; b < p; b++) row += s[a][b] * d[b];
      xsx += d[a] * row;
    }
    bsum += (xx * xx - 2 * xsx + frob2) / p;
  }
  const bbar2 = bsum / (m * m);
  const b2 = Math.min(bbar2, d2);
  const shrinkage = d2 > 0 ? b2 / d2 : 1;
  const out = zeros(p);
  for (let a = 0; a < p; a++) for (let b = 0; b < p; b++) out[a][b] = (1 - shrinkage) * s[a][b] + (a === b ? shrinkage * mu : 0);
  return { method, mean, covariance: out, shrinkage };
}
