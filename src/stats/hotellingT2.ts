// Hotelling T² chart for individual multivariate observations (one row per heat: its curve over
// distances), phase I and phase II.
//   T²_i = (x_i − x̄)ᵀ S⁻¹ (x_i − x̄)                         (Hotelling 1947)
//   Phase I UCL  = ((m − 1)²/m) · Beta(1 − α; p/2, (m − p − 1)/2)
//     Tracy, Young & Mason (1992), J. Quality Technology 24:88–95 (observations in the estimate).
//   Phase II UCL = p(m + 1)(m − 1)/(m² − mp) · F(1 − α; p, m − p)
//     NIST/SEMATECH e-Handbook of Statistical Methods §6.5.4.3.4 (new observations, frozen x̄ and S).
// The covariance may be the sample covariance (default), the successive-difference estimator or the
// Ledoit–Wolf shrinkage estimator (see covariance.ts). With the sample covariance m >= p + 2 is required
// (the Beta limit needs m − p − 1 > 0; S is singular when m <= p). With the other estimators the
// Beta/F limits are only approximate, and with m <= p + 1 (Ledoit–Wolf) the limit falls back to the
// χ²(1 − α; p) quantile; the result says so in its flags.
// Contributions to a signal, per variable j (Mason, Tracy & Young 1995, J. Quality Technology 27:99–108,
// the MYT decomposition):
//   unconditional  T²_j = (x_j − x̄_j)² / s_jj
//   conditional    T² − T²_(−j) = ((S⁻¹d)_j)² / (S⁻¹)_jj, d = x − x̄, where T²_(−j) is the T² of the
//   other p − 1 variables: the part of T² only variable j explains, given all the others.
import { CholeskyDecomposition, Matrix } from 'ml-matrix';
import { betaQuantile, chiSquareQuantile, fQuantile } from './distributions.ts';
import { StatsInputError } from './descriptive.ts';
import { checkRows, estimateCovariance, type CovarianceMethod } from './covariance.ts';

export class TooFewObservationsError extends StatsInputError {
  override name = 'TooFewObservationsError';
}

export class SingularCovarianceError extends StatsInputError {
  override name = 'SingularCovarianceError';
}

export interface HotellingOptions {
  /** False-alarm probability per point (default 0.0027, the 3-sigma rate). */
  alpha?: number;
  covariance?: CovarianceMethod;
}

export interface T2Contribution {
  index: number;
  t2: number;
  /** Unconditional MYT terms d_j²/s_jj. */
  unconditional: number[];
  /** T² − T²_(−j) for each variable j. */
  conditional: number[];
}

export type UclMethod = 'beta' | 'f' | 'chi-square-approximate';

export interface HotellingPhaseOne {
  m: number;
  p: number;
  mean: number[];
  covariance: number[][];
  covarianceMethod: CovarianceMethod;
  /** Ledoit–Wolf shrinkage intensity, else null. */
  shrinkage: number | null;
  alpha: number;
  t2: number[];
  ucl: number;
  uclMethod: UclMethod;
  signals: number[];
  contributions: T2Contribution[];
  flags: { shrinkageCovariance: boolean; approximateLimit: boolean };
}

export interface FrozenT2 {
  kind: 'hotelling-t2';
  m: number;
  p: number;
  alpha: number;
  mean: number[];
  covariance: number[][];
  inverse: number[][];
  covarianceMethod: CovarianceMethod;
  ucl: number;
  uclMethod: UclMethod;
  approximateLimit: boolean;
}

export interface HotellingPhaseTwo {
  t2: number[];
  ucl: number;
  signals: number[];
  contributions: T2Contribution[];
}

function invertSpd(cov: number[][]): number[][] {
  const p = cov.length;
  const chol = new CholeskyDecomposition(new Matrix(cov));
  if (!chol.isPositiveDefinite()) {
    throw new SingularCovarianceError('covariance matrix is singular (a variable is constant or a linear combination of others)');
  }
  const Lm = chol.lowerTriangularMatrix;
  let maxDiag = 0;
  let minDiag = Infinity;
  for (let i = 0; i < p; i++) {
    const v = Lm.get(i, i);
    maxDiag = Math.max(maxDiag, v);
    minDiag = Math.min(minDiag, v);
  }
  if (!(minDiag > 1e-7 * maxDiag)) throw new SingularCovarianceError('covariance matrix is numerically singular');
  const inv = chol.solve(Matrix.eye(p)).to2DArray();
  // Symmetrise against rounding.
  for (let i = 0; i < p; i++) for (let j = 0; j < i; j++) inv[i][j] = inv[j][i] = 0.5 * (inv[i][j] + inv[j][i]);
  return inv;
}

function t2Of(inv: number[][], d: number[], w: number[]): number {
  const p = d.length;
  let t = 0;
  for (let a = 0; a < p; a++) {
    let s = 0;
    const row = inv[a];
    for (let b = 0; b < p; b++) s += row[b] * d[b];
    w[a] = s;
    t += d[a] * s;
  }
  return t;
}

/** Per-variable contributions for one observation (MYT terms; see the module header). */
export function t2Contributions(mean: readonly number[], covariance: readonly (readonly number[])[], inverse: readonly (readonly number[])[], x: readonly number[]): Omit<T2Contribution, 'index'> {
  const p = mean.length;
  if (x.length !== p) throw new StatsInputError(`observation has ${x.length} values, expected ${p}`);
  const d = x.map((v, j) => v - mean[j]);
  const w = new Array<number>(p);
  const t2 = t2Of(inverse as number[][], d, w);
  const unconditional = d.map((dj, j) => (dj * dj) / covariance[j][j]);
  const conditional = w.map((wj, j) => (wj * wj) / inverse[j][j]);
  return { t2, unconditional, conditional };
}

function checkAlpha(alpha: number): void {
  if (!(alpha > 0 && alpha < 1)) throw new StatsInputError('alpha must be in (0, 1)');
}

/** Phase I Hotelling T² on individual observations with the Beta UCL (Tracy, Young & Mason 1992). */
export function hotellingT2PhaseOne(rows: readonly (readonly number[])[], options: HotellingOptions = {}): HotellingPhaseOne {
  const alpha = options.alpha ?? 0.0027;
  checkAlpha(alpha);
  const method = options.covariance ?? 'sample';
  const { m, p } = checkRows(rows);
  const shrunk = method === 'ledoit-wolf';
  if (!shrunk && m < p + 2) {
    throw new TooFewObservationsError(
      `Hotelling T² with ${p} variables needs at least ${p + 2} observations (got ${m}); use fewer distances or the ledoit-wolf covariance`,
    );
  }
  if (m < 2) throw new TooFewObservationsError('Hotelling T² needs at least 2 observations');
  const est = estimateCovariance(rows, method);
  const inv = invertSpd(est.covariance);
  let ucl: number;
  let uclMethod: UclMethod;
  if (m >= p + 2) {
    ucl = (((m - 1) * (m - 1)) / m) * betaQuantile(1 - alpha, p / 2, (m - p - 1) / 2);
    uclMethod = 'beta';
  } else {
    ucl = chiSquareQuantile(1 - alpha, p);
    uclMethod = 'chi-square-approximate';
  }
  const t2 = new Array<number>(m);
  const d = new Array<number>(p);
  const w = new Array<number>(p);
  const signals: number[] = [];
  for (let i = 0; i < m; i++) {
    for (let j = 0; j < p; j++) d[j] = rows[i][j] - est.mean[j];
    t2[i] = t2Of(inv, d, w);
    if (t2[i] > ucl) signals.push(i);
  }
  const contributions = signals.map((index) => ({ index, ...t2Contributions(est.mean, est.covariance, inv, rows[index]) }));
  return {
    m,
    p,
    mean: est.mean,
    covariance: est.covariance,
    covarianceMethod: method,
    shrinkage: est.shrinkage,
    alpha,
    t2,
    ucl,
    uclMethod,
    signals,
    contributions,
    flags: { shrinkageCovariance: shrunk, approximateLimit: method !== 'sample' },
  };
}

/** Freeze a phase I estimate for phase II, with the F-based UCL (NIST e-Handbook §6.5.4.3.4). */
export function freezeT2(phaseOne: HotellingPhaseOne, alpha: number = phaseOne.alpha): FrozenT2 {
  checkAlpha(alpha);
  const { m, p } = phaseOne;
  let ucl: number;
  let uclMethod: UclMethod;
  if (m > p) {
    ucl = ((p * (m + 1) * (m - 1)) / (m * m - m * p)) * fQuantile(1 - alpha, p, m - p);
    uclMethod = 'f';
  } else {
    ucl = chiSquareQuantile(1 - alpha, p);
    uclMethod = 'chi-square-approximate';
  }
  return {
    kind: 'hotelling-t2',
    m,
    p,
    alpha,
    mean: phaseOne.mean.slice(),
    covariance: phaseOne.covariance.map((r) => r.slice()),
    inverse: invertSpd(phaseOne.covariance),
    covarianceMethod: phaseOne.covarianceMethod,
    ucl,
    uclMethod,
    approximateLimit: phaseOne.covarianceMethod !== 'sample' || uclMethod !== 'f',
  };
}

/** Phase II: T² of new observations against frozen mean and covariance. */
export function applyT2(frozen: FrozenT2, rows: readonly (readonly number[])[]): HotellingPhaseTwo {
  if (frozen.kind !== 'hotelling-t2') throw new StatsInputError(`unsupported frozen limits kind ${String(frozen.kind)}`);
  const p = frozen.p;
  const t2 = new Array<number>(rows.length);
  const signals: number[] = [];
  if (rows.length) {
    const { p: q } = checkRows(rows);
    if (q !== p) throw new StatsInputError(`observations have ${q} variables, the frozen chart ${p}`);
  }
  const d = new Array<number>(p);
  const w = new Array<number>(p);
  for (let i = 0; i < rows.length; i++) {
    for (let j = 0; j < p; j++) d[j] = rows[i][j] - frozen.mean[j];
    t2[i] = t2Of(frozen.inverse, d, w);
    if (t2[i] > frozen.ucl) signals.push(i);
  }
  const contributions = signals.map((index) => ({ index, ...t2Contributions(frozen.mean, frozen.covariance, frozen.inverse, rows[index]) }));
  return { t2, ucl: frozen.ucl, signals, contributions };
}
