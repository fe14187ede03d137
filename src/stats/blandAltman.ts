// Agreement between two methods measuring the same items (here: a mill's laboratory and the plant's own
// receiving laboratory testing the same heat).
// - J. M. Bland & D. G. Altman, "Statistical methods for assessing agreement between two methods of
//   clinical measurement", The Lancet 327 (8476), 1986, 307–310: differences d_i = a_i − b_i; bias d̄ with
//   standard error s/√n and a t interval on n − 1 df; limits of agreement d̄ ± z·s (the paper uses 2,
//   later papers 1.96); the standard error of each limit ≈ √(3s²/n), with a t interval on n − 1 df.
// - J. M. Bland & D. G. Altman, "Measuring agreement in method comparison studies", Statistical Methods
//   in Medical Research 8, 1999, 135–160, §3.2: regress the difference on the mean of the two methods;
//   a slope different from 0 means the disagreement depends on the level.
// - Measurement error of the reference method: Var(d) = σ²_a + σ²_b for independent errors (ISO 5725-2,
//   the variance of a difference of two independent results), so when the repeatability SD σ_b of the
//   reference laboratory is known, the other laboratory's own scatter is √(max(0, s² − σ_b²)).
import { StatsInputError, assertFinite, mean, sampleSd } from './descriptive.ts';
import { tCdf, tQuantile } from './distributions.ts';

export interface BlandAltmanOptions {
  /** Width of the limits of agreement in SDs of the differences (default 1.96; Bland & Altman 1986 used 2). */
  multiplier?: number;
  /** Confidence of the intervals (default 0.95). */
  confidence?: number;
  /** Repeatability SD of method b (the reference), when known from a gauge study. */
  referenceRepeatabilitySd?: number | null;
}

export interface Interval {
  lower: number;
  upper: number;
}

export interface LevelRegression {
  /** Difference = intercept + slope × mean of the two methods. */
  intercept: number;
  slope: number;
  slopeSe: number;
  /** Two-sided p of slope = 0 (t on n − 2 df). */
  slopeP: number;
}

export interface BlandAltmanResult {
  n: number;
  /** Mean difference a − b. */
  bias: number;
  /** Sample SD of the differences (n − 1). */
  sd: number;
  biasSe: number;
  biasInterval: Interval;
  /** Two-sided p of bias = 0 (paired t on n − 1 df). */
  biasP: number;
  multiplier: number;
  confidence: number;
  lowerLimit: number;
  upperLimit: number;
  /** Approximate SE of each limit, √(3s²/n) (Bland & Altman 1986). */
  limitSe: number;
  lowerLimitInterval: Interval;
  upperLimitInterval: Interval;
  /** Regression of the difference on the mean (null with fewer than 3 pairs or no spread of the means). */
  byLevel: LevelRegression | null;
  /** With a known reference repeatability: the SD left for method a's own scatter. */
  ownSd: number | null;
  referenceRepeatabilitySd: number | null;
}

/** Bland–Altman agreement of paired measurements a[i] and b[i] of the same items (at least 3 pairs). */
export function blandAltman(a: readonly number[], b: readonly number[], options: BlandAltmanOptions = {}): BlandAltmanResult {
  if (a.length !== b.length) throw new StatsInputError(`a and b must pair up, got ${a.length} and ${b.length} values`);
  assertFinite(a, 'a');
  assertFinite(b, 'b');
  const n = a.length;
  if (n < 3) throw new StatsInputError(`agreement needs at least 3 pairs, got ${n}`);
  const multiplier = options.multiplier ?? 1.96;
  const confidence = options.confidence ?? 0.95;
  if (!(multiplier > 0)) throw new StatsInputError('multiplier must be positive');
  if (!(confidence > 0 && confidence < 1)) throw new StatsInputError('confidence must be in (0, 1)');
  const ref = options.referenceRepeatabilitySd ?? null;
  if (ref !== null && !(ref >= 0 && Number.isFinite(ref))) throw new StatsInputError('referenceRepeatabilitySd must be a non-negative number');

  const d = a.map((x, i) => x - (b[i] as number));
  const bias = mean(d);
  const sd = sampleSd(d);
  const t = tQuantile(1 - (1 - confidence) / 2, n - 1);
  const biasSe = sd / Math.sqrt(n);
  const lowerLimit = bias - multiplier * sd;
  const upperLimit = bias + multiplier * sd;
  const limitSe = Math.sqrt((3 * sd * sd) / n);
  const biasP = biasSe > 0 ? 2 * (1 - tCdf(Math.abs(bias) / biasSe, n - 1)) : bias === 0 ? 1 : 0;
  return {
    n,
    bias,
    sd,
    biasSe,
    biasInterval: { lower: bias - t * biasSe, upper: bias + t * biasSe },
    biasP,
    multiplier,
    confidence,
    lowerLimit,
    upperLimit,
    limitSe,
    lowerLimitInterval: { lower: lowerLimit - t * limitSe, upper: lowerLimit + t * limitSe },
    upperLimitInterval: { lower: upperLimit - t * limitSe, upper: upperLimit + t * limitSe },
    byLevel: levelRegression(
      a.map((x, i) => (x + (b[i] as number)) / 2),
      d,
    ),
    ownSd: ref === null ? null : Math.sqrt(Math.max(0, sd * sd - ref * ref)),
    referenceRepeatabilitySd: ref,
  };
}

/** Least-squares line of y on x with the slope's SE and p (t on n − 2 df); null when it cannot be fitted. */
export function levelRegression(x: readonly number[], y: readonly number[]): LevelRegression | null {
  const n = x.length;
  if (n < 3) return null;
  const mx = mean(x);
  const my = mean(y);
  let sxx = 0;
  let sxy = 0;
  for (let i = 0; i < n; i++) {
    sxx += ((x[i] as number) - mx) ** 2;
    sxy += ((x[i] as number) - mx) * ((y[i] as number) - my);
  }
  if (!(sxx > 1e-12 * Math.max(1, mx * mx) * n)) return null;
  const slope = sxy / sxx;
  const intercept = my - slope * mx;
  let sse = 0;
  for (let i = 0; i < n; i++) sse += ((y[i] as number) - intercept - slope * (x[i] as number)) ** 2;
  const slopeSe = Math.sqrt(sse / (n - 2) / sxx);
  const slopeP = slopeSe > 0 ? 2 * (1 - tCdf(Math.abs(slope) / slopeSe, n - 2)) : slope === 0 ? 1 : 0;
  return { intercept, slope, slopeSe, slopeP };
}
