// One monitoring scheme for a whole end-quench curve: a location statistic (is the curve as a whole
// harder or softer than its reference?) and a shape statistic (has the curve's form changed?), with
// limits designed for a stated in-control ARL of the pair. Pure.
//
// Sources:
// - Standardised curve: each distance j centred on its reference mean and divided by its reference
//   SD, d_tj = (x_tj − μ_j)/s_j. Location: the mean standardised deviation u_t = (1/p)Σ_j d_tj, the
//   first principal component of a curve whose distances move together (Jackson, A User's Guide to
//   Principal Components, 1991, §1.6, equal-loading component), charted as an EWMA (Roberts 1959;
//   Lowry, Woodall, Champ & Rigdon 1992, Technometrics 34:46–53, for the multivariate EWMA this
//   reduces to on one component) with asymptotic limits ±L·√(λ/(2 − λ)) in units of the reference SD
//   of u (the overall sample SD, which an autocorrelated series does not understate as a moving range
//   would; Montgomery, Introduction to Statistical Quality Control, §10.3).
// - Autocorrelation: the lag-1 autocorrelation r₁ of u over the reference (Box, Jenkins & Reinsel, Time
//   Series Analysis, §2.1.4). When |r₁| reaches the stated threshold the location chart runs on the
//   residuals of an AR(1) fit, e_t = (u_t − φu_{t−1})/(s_u·√(1 − φ²)) with φ = r₁ (Alwan & Roberts
//   1988, J. Business & Economic Statistics 6:87–95; Montgomery §10.3.2). Otherwise e_t = u_t/s_u.
// - Shape: the rest of the standardised curve, r_t = d_t − u_t·1, on its leading k principal components
//   over the reference (covariance eigenvectors; k at most one per four reference heats), T² = Σ_i (v_iᵀ r_t)²/ℓ_i, against the phase II limit
//   for individual observations k(m + 1)(m − 1)/(m(m − k))·F(1 − α; k, m − k) (NIST/SEMATECH
//   e-Handbook §6.5.4.3.4; Tracy, Young & Mason 1992, J. Quality Technology 24:88–95), α = 1/ARL_shape.
// - Reference qualification (phase I): heats with |u − ū| beyond 3.5 s_u or a shape T² above the phase
//   I Beta limit ((m − 1)²/m)·Beta(1 − 0.001; k/2, (m − k − 1)/2) (Tracy, Young & Mason 1992) are set
//   aside and the reference re-estimated, at most five passes (Montgomery §5.4 trial limits).
// - Design: the scheme's in-control ARL target is shared between the two statistics (1/ARL = 1/ARL_loc
//   + 1/ARL_shape; monitoringDesign.ts), and the EWMA limit is widened for the m reference heats
//   (ewmaLimitForEstimated: Gandy & Kvaløy 2013; Jones, Champ & Rigdon 2001). Woodall, Spitzner,
//   Montgomery & Gupta (2004), J. Quality Technology 36:309–320, for monitoring a profile by a few
//   summary statistics of the whole curve rather than one chart per point.
// The EWMA starts at 0 on the first heat after the reference and is not reset after a signal: the
// statistic at a heat depends only on the reference and the heats before it, never on how they arrived.
import { EigenvalueDecomposition, Matrix } from 'ml-matrix';
import { StatsInputError, assertFinite } from './descriptive.ts';
import { betaQuantile, fQuantile } from './distributions.ts';
import { ewmaLimitForEstimated, splitArl, type EstimatedEwmaDesign } from './monitoringDesign.ts';

export interface CurveSchemeDesign {
  /** EWMA weight of the location chart. */
  lambda: number;
  /** In-control ARL of the scheme (heats). */
  targetArl: number;
  /** Share of the false alarms given to the location chart (the rest to shape). */
  locationShare: number;
  /** Share of references whose conditional ARL must reach the target (Gandy & Kvaløy 2013). */
  guarantee: number;
  /** |r₁| at or above which the location chart runs on AR(1) residuals. */
  autocorrelationThreshold: number;
  /** Most principal components of the shape statistic. */
  shapeComponents: number;
}

export interface CurveReferenceFit {
  /** Reference heats used (indices into the rows given) and those set aside by phase I. */
  kept: number[];
  excluded: number[];
  passes: number;
  p: number;
  means: number[];
  sds: number[];
  location: {
    /** Reference mean and SD of u. */
    mean: number;
    sd: number;
    /** Lag-1 autocorrelation of u over the reference (time order of the kept heats). */
    lag1: number;
    /** AR(1) coefficient charted out (0 when untreated). */
    phi: number;
    treated: boolean;
    /** u of the last reference heat (the lag for the first monitored heat). */
    lastU: number;
    design: EstimatedEwmaDesign;
    /** Half-width of the EWMA limits in units of e: L·√(λ/(2 − λ)). */
    limit: number;
  };
  shape: {
    k: number;
    /** Principal directions (k rows of p) and their variances. */
    directions: number[][];
    variances: number[];
    alpha: number;
    ucl: number;
  } | null;
  /** In-control ARL of each statistic. */
  arl: { scheme: number; location: number; shape: number | null };
}

export interface CurveSchemePoint {
  /** Mean standardised deviation of the curve, and the value charted (residual when treated), in SDs. */
  u: number;
  e: number;
  ewma: number;
  limit: number;
  level: 'high' | 'low' | null;
  t2: number | null;
  t2Ucl: number | null;
  shape: boolean;
  /** Standardised deviation at each distance (explanation). */
  deviations: number[];
}

const mean = (xs: readonly number[]) => xs.reduce((s, x) => s + x, 0) / xs.length;
const sd = (xs: readonly number[]) => {
  const m = mean(xs);
  return Math.sqrt(xs.reduce((s, x) => s + (x - m) ** 2, 0) / (xs.length - 1));
};

/** Lag-1 autocorrelation (Box, Jenkins & Reinsel §2.1.4): Σ(u_t − ū)(u_{t+1} − ū)/Σ(u_t − ū)². */
export function lag1Autocorrelation(xs: readonly number[]): number {
  if (xs.length < 3) throw new StatsInputError('the lag-1 autocorrelation needs at least 3 values');
  const m = mean(xs);
  let num = 0;
  let den = 0;
  for (let i = 0; i < xs.length; i++) {
    den += (xs[i] - m) ** 2;
    if (i + 1 < xs.length) num += (xs[i] - m) * (xs[i + 1] - m);
  }
  return den > 0 ? num / den : 0;
}

function standardise(row: readonly number[], means: readonly number[], sds: readonly number[]): number[] {
  return row.map((x, j) => (x - means[j]) / sds[j]);
}

interface Estimate {
  means: number[];
  sds: number[];
  us: number[];
  uMean: number;
  uSd: number;
  shape: { k: number; directions: number[][]; variances: number[] } | null;
}

function estimate(rows: readonly (readonly number[])[], maxComponents: number): Estimate {
  const p = rows[0].length;
  // At most one component per four reference heats, so the shape covariance is not close to singular (our floor).
  maxComponents = Math.min(maxComponents, Math.floor((rows.length - 1) / 4));
  const means = Array.from({ length: p }, (_, j) => mean(rows.map((r) => r[j])));
  const sds = Array.from({ length: p }, (_, j) => sd(rows.map((r) => r[j])));
  const zero = sds.findIndex((s) => !(s > 0));
  if (zero >= 0) throw new StatsInputError(`distance ${zero + 1} has no scatter over the reference: the curve cannot be standardised`);
  const ds = rows.map((r) => standardise(r, means, sds));
  const us = ds.map((d) => mean(d));
  const uMean = mean(us);
  const uSd = sd(us);
  if (!(uSd > 0)) throw new StatsInputError('the curve level has no scatter over the reference');
  let shape: Estimate['shape'] = null;
  const k = Math.min(maxComponents, p - 1);
  if (k >= 1) {
    const residuals = ds.map((d, i) => d.map((x) => x - us[i]));
    const m = residuals.length;
    const centred = new Matrix(residuals.map((r) => r.map((x, j) => x - mean(residuals.map((q) => q[j])))));
    const cov = centred.transpose().mmul(centred).div(m - 1);
    const eig = new EigenvalueDecomposition(cov, { assumeSymmetric: true });
    const values = eig.realEigenvalues;
    const vectors = eig.eigenvectorMatrix;
    const order = values.map((v, i) => [v, i] as const).sort((a, b) => b[0] - a[0]);
    const directions: number[][] = [];
    const variances: number[] = [];
    for (const [v, i] of order.slice(0, k)) {
      if (!(v > 1e-9)) break;
      directions.push(vectors.getColumn(i));
      variances.push(v);
    }
    shape = directions.length ? { k: directions.length, directions, variances } : null;
  }
  return { means, sds, us, uMean, uSd, shape };
}

function shapeT2(d: readonly number[], u: number, shape: NonNullable<Estimate['shape']>, residualMeans: readonly number[]): number {
  let t2 = 0;
  for (let i = 0; i < shape.k; i++) {
    let score = 0;
    for (let j = 0; j < d.length; j++) score += shape.directions[i][j] * (d[j] - u - residualMeans[j]);
    t2 += (score * score) / shape.variances[i];
  }
  return t2;
}

function residualMeansOf(rows: readonly (readonly number[])[], e: Estimate): number[] {
  const p = rows[0].length;
  const res = rows.map((r) => {
    const d = standardise(r, e.means, e.sds);
    const u = mean(d);
    return d.map((x) => x - u);
  });
  return Array.from({ length: p }, (_, j) => mean(res.map((r) => r[j])));
}

export interface CurveReference extends CurveReferenceFit {
  residualMeans: number[];
}

/**
 * Fits the reference (phase I with exclusion) and designs the limits. `rows`: complete curves of the
 * reference heats in time order (m × p). Throws StatsInputError when too few heats remain.
 */
export function fitCurveReference(rows: readonly (readonly number[])[], design: CurveSchemeDesign, minHeats = 10): CurveReference {
  if (rows.length < minHeats) throw new StatsInputError(`${rows.length} reference curve(s): the scheme needs at least ${minHeats}`);
  const p = rows[0].length;
  if (p < 1 || rows.some((r) => r.length !== p)) throw new StatsInputError('every reference curve needs the same distances');
  for (const r of rows) assertFinite(r, 'reference readings');
  if (!(design.locationShare > 0 && design.locationShare <= 1)) throw new StatsInputError('locationShare must be in (0, 1]');
  let kept = rows.map((_, i) => i);
  let est = estimate(rows, design.shapeComponents);
  let passes = 1;
  for (; passes <= 5; passes++) {
    const m = kept.length;
    const sub = kept.map((i) => rows[i]);
    const rm = residualMeansOf(sub, est);
    const betaUcl = est.shape && m - est.shape.k - 1 > 0 ? (((m - 1) ** 2) / m) * betaQuantile(1 - 0.001, est.shape.k / 2, (m - est.shape.k - 1) / 2) : Infinity;
    const drop = new Set<number>();
    sub.forEach((r, j) => {
      const d = standardise(r, est.means, est.sds);
      const u = mean(d);
      if (Math.abs(u - est.uMean) > 3.5 * est.uSd) drop.add(kept[j]);
      else if (est.shape && shapeT2(d, u, est.shape, rm) > betaUcl) drop.add(kept[j]);
    });
    if (drop.size === 0 || m - drop.size < minHeats) break;
    kept = kept.filter((i) => !drop.has(i));
    est = estimate(kept.map((i) => rows[i]), design.shapeComponents);
  }
  const keptRows = kept.map((i) => rows[i]);
  const m = keptRows.length;
  const lag1 = lag1Autocorrelation(est.us);
  const treated = Math.abs(lag1) >= design.autocorrelationThreshold;
  const phi = treated ? Math.max(-0.95, Math.min(0.95, lag1)) : 0;
  const shares = est.shape && design.locationShare < 1 ? [design.locationShare, 1 - design.locationShare] : [1];
  const arls = splitArl(design.targetArl, shares);
  const ewma = ewmaLimitForEstimated({ lambda: design.lambda, targetArl: arls[0], m, guarantee: design.guarantee });
  let shape: CurveReferenceFit['shape'] = null;
  if (est.shape && arls.length === 2 && m > est.shape.k) {
    const k = est.shape.k;
    const alpha = 1 / arls[1];
    const ucl = ((k * (m + 1) * (m - 1)) / (m * (m - k))) * fQuantile(1 - alpha, k, m - k);
    shape = { k, directions: est.shape.directions, variances: est.shape.variances, alpha, ucl };
  }
  const keptSet = new Set(kept);
  return {
    kept,
    excluded: rows.map((_, i) => i).filter((i) => !keptSet.has(i)),
    passes,
    p,
    means: est.means,
    sds: est.sds,
    location: {
      mean: est.uMean,
      sd: est.uSd,
      lag1,
      phi,
      treated,
      lastU: est.us[est.us.length - 1] - est.uMean,
      design: ewma,
      limit: ewma.L * Math.sqrt(design.lambda / (2 - design.lambda)),
    },
    shape,
    arl: { scheme: design.targetArl, location: arls[0], shape: shape ? arls[1] : null },
    residualMeans: residualMeansOf(keptRows, est),
  };
}

/** Runs the scheme over the heats after the reference (time order). Pure; the same rows give the same points. */
export function runCurveScheme(reference: CurveReference, rows: readonly (readonly number[])[]): CurveSchemePoint[] {
  const { location: loc, shape } = reference;
  const lambda = loc.design.lambda;
  const scale = loc.treated ? loc.sd * Math.sqrt(1 - loc.phi * loc.phi) : loc.sd;
  let z = 0;
  let previous = loc.lastU;
  return rows.map((row) => {
    if (row.length !== reference.p) throw new StatsInputError('a monitored curve has a different number of distances from its reference');
    assertFinite(row, 'readings');
    const deviations = standardise(row, reference.means, reference.sds);
    const uRaw = mean(deviations);
    const u = uRaw - loc.mean;
    const e = (loc.treated ? u - loc.phi * previous : u) / scale;
    previous = u;
    z = lambda * e + (1 - lambda) * z;
    const level = z > loc.limit ? 'high' : z < -loc.limit ? 'low' : null;
    const t2 = shape ? shapeT2(deviations, uRaw, { k: shape.k, directions: shape.directions, variances: shape.variances }, reference.residualMeans) : null;
    return { u: u / loc.sd, e, ewma: z, limit: loc.limit, level, t2, t2Ucl: shape ? shape.ucl : null, shape: t2 !== null && t2 > (shape as { ucl: number }).ucl, deviations };
  });
}
