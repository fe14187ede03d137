// Process capability and performance against a two-sided or one-sided specification band.
// Indices (ISO 22514-2; AIAG SPC manual 2nd ed.; NIST/SEMATECH e-Handbook §6.1.6; Montgomery §8.2):
//   Cp = (USL − LSL)/6σw, Cpu = (USL − μ)/3σw, Cpl = (μ − LSL)/3σw, Cpk = min(Cpu, Cpl);
//   Pp, Ppu, Ppl, Ppk the same with the overall sample SD (n − 1).
//   σw = MR-bar/d2(2) for individuals, mean of s_i/c4(n_i) (= s-bar/c4 for equal sizes) for subgroups.
//   Cpm = (USL − LSL) / (6√(s² + (x̄ − T)²))   (Chan, Cheng & Spiring 1988, J. Quality Technology 20:162–175;
//   here with the overall n − 1 SD).
// One-sided band: Cp, Pp, Cpm and the index of the missing side are null; Cpk/Ppk equal the one
// defined side (common practice).
// Intervals at confidence 1 − α: Cp, Pp by the chi-square interval Ĉ·√(χ²(α/2, ν)/ν)..Ĉ·√(χ²(1 − α/2, ν)/ν)
// (Montgomery §8.3.5); Cpk, Ppk by Bissell (1990), Applied Statistics 39:313–320:
// Ĉ ± z(1 − α/2)·√(1/(9n) + Ĉ²/(2ν)), whose second term is the variance of ln σ̂ (= 1/(2ν)) times Ĉ².
// ν is the (effective) degrees of freedom of the sigma each index uses, i.e. the ν for which
// ν·σ̂²/σ² is approximately χ²(ν), matched on Var(σ̂)/σ² ≈ 1/(2ν):
//   Pp, Ppk: sample SD, ν = n − 1 (exact for Pp).
//   Cp, Cpk, individuals (MR-bar/d2): ν = 0.62·(n − 1) (Cryer & Ryan 1990, J. Quality Technology 22(3),
//     "The estimation of sigma for an X chart: MR/d2 or S/c4?"; constant from memory). Cross-check: the
//     large-n variance of MR-bar/d2 from the bivariate-normal moment E|XY| (ρ = −1/2 between adjacent
//     differences) is 0.826σ²/(n − 1), i.e. ν ≈ 0.605(n − 1); the simulated coverage test checks 0.62.
//   Cp, Cpk, subgroups (mean of s_i/c4(n_i)): Var(s_i/c4) = σ²(1 − c4²)/c4² (the same moment as the S chart
//     limits, Montgomery §6.3; ASTM E2587), so ν = k² / (2·Σ(1 − c4(n_i)²)/c4(n_i)²); for large subgroups
//     this tends to Σ(n_i − 1) (equal sizes). We use this c4-based form because it is the variance of the
//     estimator actually used.
//   A given within sigma (options.within) carries its own ν.
// Pooling within sigmas of several series (poolWithin): σ² = Σ ν_j σ_j² / Σ ν_j, ν = Σ ν_j (the pooled
// variance weighted by degrees of freedom, as in the two-sample t test; common practice).
// Expected nonconforming (normal model): 10⁶·Φ((LSL − μ)/σ) below and 10⁶·Φ((μ − USL)/σ) above.
// Observed: share of values strictly below LSL / above USL (a value on a limit conforms).
// Normality: judged with the reading resolution taken into account (src/stats/groupedNormality.ts):
// readings on a grid coarse against σ (e.g. whole HRC) by a chi-square test on the grouped readings,
// otherwise Anderson–Darling (D'Agostino & Stephens 1986); `normality` keeps the Anderson–Darling
// result for reference, `normalityJudgement` says which test decided.
// When normality is rejected at normalityAlpha (options.fitted 'auto'; the default is 'never'), a Johnson
// curve is fitted by percentiles (Slifker & Shapiro 1980; src/stats/johnson.ts), or a Box–Cox
// distribution (src/stats/boxCox.ts) when the Johnson percentiles give none, and the indices worked out
// from its quantiles (ISO 22514-2 distribution methods),
// with percentile-bootstrap intervals for its Ppk and expected PPM (Efron & Tibshirani 1993;
// src/stats/bootstrap.ts, seeded). A mixture of mills or a drifting process is not a skewed
// distribution: the stability flag and the supply view speak to those.
// Percentile indices (ISO 22514-2; Clements 1989, Quality Progress 22(9):95–100, where the percentiles
// come from fitted Pearson curves) replace 6σ by X(0.99865) − X(0.00135) and μ by the median; here with
// empirical quantiles (Hyndman & Fan definition 7), which reach the 0.135 % tails only in a large sample:
// with type 7 the 0.135 % quantile lies between the two smallest values while (n − 1)·0.00135 < 1, so
// below n = round(1/0.00135) = 741 the percentile spread is about the sample range, which falls short of
// the 99.73 % spread and biases the index high. So in 'auto' they are given only from 741 values, with a
// bootstrap interval; 'always' computes them at any n (flag percentileFewData, no interval below 741).
// Flags: n < minN (default 25); non-normal; unstable (any point flagged by the chosen Nelson rules,
// default rule 1, on the individuals chart, or on the standardised X-bar of an X-bar/S chart, or an
// S chart point beyond its limits; with a given within sigma, the individuals rules use that sigma
// around the series mean).
import { censoredNormalFit, type Censoring } from './censoredNormal.ts';
import { chiSquareQuantile, normalCdf, normalQuantile } from './distributions.ts';
import { StatsInputError, assertFinite, quantileSorted } from './descriptive.ts';
import { andersonDarling, type AndersonDarlingResult } from './andersonDarling.ts';
import { judgeNormality, type NormalityJudgement } from './groupedNormality.ts';
import { boxCoxFit, boxCoxIndices, type FittedIndices } from './boxCox.ts';
import { johnsonFit, johnsonIndices, type JohnsonFit } from './johnson.ts';
import { bootstrapPercentile, type BootstrapInterval } from './bootstrap.ts';
import { individualsChart } from './individualsChart.ts';
import { c4 } from './shewhartConstants.ts';
import { xbarSChart } from './subgroupCharts.ts';
import { nelsonRules, type NelsonRule } from './nelsonRules.ts';

export interface SpecBand {
  lsl?: number | null;
  usl?: number | null;
  /** Target value, used for Cpm (two-sided bands only). */
  target?: number | null;
}

/**
 * Individual values (with, optionally, which of them are bounds of readings off the scale: 'below' for
 * "<20", 'above' for ">65") or rational subgroups.
 */
export type CapabilityData = { values: readonly number[]; censored?: readonly Censoring[] } | { subgroups: readonly (readonly number[])[] };

export interface CapabilityOptions {
  /** Confidence level of the intervals (default 0.95). */
  confidence?: number;
  /** Level at which Anderson–Darling rejects normality (default 0.05). */
  normalityAlpha?: number;
  /** Sample size below which the smallSample flag is raised (default 25). */
  minN?: number;
  /** Nelson rules used for the stability flag (default [1]). */
  stabilityRules?: readonly NelsonRule[];
  /**
   * Percentile indices: 'auto' (when normality is rejected and n ≥ PERCENTILE_MIN_N), 'always' (any n)
   * or 'never' (default 'auto').
   */
  percentile?: 'auto' | 'always' | 'never';
  /**
   * Box–Cox fitted indices: 'auto' (when normality is rejected), 'always' or 'never' (default 'never':
   * the fit and its bootstrap cost a few hundred refits, so callers that want it ask, as the capability
   * study does).
   */
  fitted?: 'auto' | 'always' | 'never';
  /** Bootstrap replicates for the fitted and percentile intervals (default 400) and their seed. */
  bootstrap?: { replicates?: number; seed?: number };
  /**
   * A within sigma estimated elsewhere (e.g. pooled over mills with poolWithin), used instead of the
   * sigma of the series itself; individuals data only.
   */
  within?: WithinSigma;
  /**
   * Degrees of freedom of the within sigma in the Cp/Cpk intervals: 'effective' (default; see header)
   * or 'n-1' (textbook form). Pp/Ppk always use n − 1.
   */
  intervalDf?: IntervalDfChoice;
}

export type IntervalDfChoice = 'effective' | 'n-1';

export const INTERVAL_DF_CHOICES: readonly IntervalDfChoice[] = ['effective', 'n-1'];

/** How the intervals were worked out, in words an answer can carry. */
export interface IntervalMethod {
  cp: string;
  cpk: string;
  pp: string;
  ppk: string;
  withinDf: IntervalDfChoice;
  withinDfRule: string;
}

/** A within-process sigma and the effective degrees of freedom of its estimator. */
export interface WithinSigma {
  sigma: number;
  df: number;
}

/** Effective degrees of freedom of MR-bar/d2 on n individuals: 0.62·(n − 1) (Cryer & Ryan 1990; see header). */
export const MOVING_RANGE_DF_FACTOR = 0.62;

/** Fewest distinct readings for a fitted distribution (a shape needs more than a few lattice points; our rule). */
export const MIN_DISTINCT_FOR_FIT = 8;

/** Sample size from which the 0.135 % / 99.865 % empirical quantiles leave the extreme values: round(1/0.00135). */
export const PERCENTILE_MIN_N = Math.round(1 / 0.00135);

/** Effective degrees of freedom of MR-bar/d2 for n individuals (see header). */
export function movingRangeDf(n: number): number {
  return MOVING_RANGE_DF_FACTOR * (n - 1);
}

/** Effective degrees of freedom of the mean of s_i/c4(n_i) over subgroups of the given sizes (see header). */
export function subgroupSDf(sizes: readonly number[]): number {
  let v = 0;
  for (const m of sizes) {
    const c = c4(m);
    v += (1 - c * c) / (c * c);
  }
  return (sizes.length * sizes.length) / (2 * v);
}

/** MR-bar/d2 of one series in its own order, with its effective degrees of freedom. */
export function individualsWithin(values: readonly number[]): WithinSigma {
  if (values.length < 2) throw new StatsInputError('a within sigma needs at least 2 values');
  return { sigma: individualsChart(values).sigma, df: movingRangeDf(values.length) };
}

/** Pooled within sigma: variances weighted by their degrees of freedom (see header). */
export function poolWithin(parts: readonly WithinSigma[]): WithinSigma {
  let df = 0;
  let ss = 0;
  for (const p of parts) {
    if (!(p.df > 0) || !(p.sigma >= 0) || !Number.isFinite(p.sigma)) throw new StatsInputError('each pooled part needs sigma >= 0 and df > 0');
    df += p.df;
    ss += p.df * p.sigma * p.sigma;
  }
  if (!(df > 0)) throw new StatsInputError('pooling needs at least one part');
  return { sigma: Math.sqrt(ss / df), df };
}

export interface Interval {
  lower: number;
  upper: number;
}

export interface PpmSplit {
  below: number;
  above: number;
  total: number;
}

export interface PercentileIndices {
  p00135: number;
  p50: number;
  p99865: number;
  pp: number | null;
  ppu: number | null;
  ppl: number | null;
  ppk: number;
  /** Bootstrap percentile interval of the percentile Ppk; null below PERCENTILE_MIN_N values. */
  interval: BootstrapInterval | null;
}

/** Indices from a fitted (Box–Cox) distribution, with bootstrap intervals. */
export interface FittedCapability extends FittedIndices {
  /** Johnson (Slifker & Shapiro percentiles), or Box–Cox (ML λ) when the Johnson percentiles give no fit. */
  method: 'box-cox' | 'johnson';
  /** Box–Cox λ; null for Johnson. */
  lambda: number | null;
  /** Johnson parameters (family SU/SB/SL, γ, η, ε, λ); null for Box–Cox. */
  johnson: JohnsonFit | null;
  /** Which distribution and, for Box–Cox, why Johnson did not fit. */
  choice: string;
  intervals: { ppk: BootstrapInterval | null; expectedPpm: BootstrapInterval | null };
}

export interface CapabilityResult {
  n: number;
  mean: number;
  median: number;
  sigmaOverall: number;
  sigmaWithin: number;
  withinMethod: 'moving-range' | 'subgroup-s-over-c4' | 'given';
  lsl: number | null;
  usl: number | null;
  target: number | null;
  cp: number | null;
  cpu: number | null;
  cpl: number | null;
  cpk: number;
  pp: number | null;
  ppu: number | null;
  ppl: number | null;
  ppk: number;
  cpm: number | null;
  confidence: number;
  /**
   * Intervals, with the degrees of freedom used: df.within (Cp, Cpk; effective, of the within-sigma
   * estimator) and df.overall (Pp, Ppk; n − 1).
   */
  intervals: { cp: Interval | null; pp: Interval | null; cpk: Interval; ppk: Interval; df: { within: number; overall: number }; method: IntervalMethod };
  expectedPpm: { within: PpmSplit; overall: PpmSplit };
  observedPpm: PpmSplit;
  normality: AndersonDarlingResult | null;
  /** Which normality test decided the nonNormal flag, and why (reading resolution; see header). */
  normalityJudgement: NormalityJudgement | null;
  /** Box–Cox or Johnson fitted indices (when normality is rejected, or asked for); null when not fitted or not possible. */
  fitted: FittedCapability | null;
  /** Why no distribution was fitted when one was called for, else null. */
  fitProblem: string | null;
  percentile: PercentileIndices | null;
  /** Indices flagged by the stability rules (observations for individuals, subgroups otherwise). */
  unstablePoints: number[];
  /**
   * percentileFewData: the percentile indices were computed from fewer than PERCENTILE_MIN_N (741) values,
   * so their 0.135 % and 99.865 % points are about the minimum and maximum and the index reads high.
   */
  flags: { smallSample: boolean; nonNormal: boolean; unstable: boolean; percentileFewData: boolean };
  /**
   * Readings off the scale among the values: the overall mean and σ (so Pp, Ppk and the overall expected
   * PPM) are then the censored-normal MLE (Cohen 1959; censoredNormal.ts), a "<v" reading counts as
   * observed nonconforming where the minimum is v or more (">v" where the maximum is v or less), and the
   * within σ takes each bound as the value (an approximation, said in `note`). Null: none.
   */
  censoring: { below: number; above: number; method: string; note: string } | null;
}

const NO_SPREAD = 'capability is undefined for a series with no spread (sigma = 0)';

function finiteOrNull(x: number | null | undefined, what: string): number | null {
  if (x === null || x === undefined) return null;
  if (!Number.isFinite(x)) throw new StatsInputError(`${what} must be a finite number`);
  return x;
}

function chiSquareInterval(est: number, nu: number, confidence: number): Interval {
  const a = 1 - confidence;
  return {
    lower: est * Math.sqrt(chiSquareQuantile(a / 2, nu) / nu),
    upper: est * Math.sqrt(chiSquareQuantile(1 - a / 2, nu) / nu),
  };
}

function bissellInterval(est: number, n: number, nu: number, confidence: number): Interval {
  const z = normalQuantile(1 - (1 - confidence) / 2);
  const half = z * Math.sqrt(1 / (9 * n) + (est * est) / (2 * nu));
  return { lower: est - half, upper: est + half };
}

function expectedPpm(mu: number, sigma: number, lsl: number | null, usl: number | null): PpmSplit {
  const below = lsl === null ? 0 : 1e6 * normalCdf((lsl - mu) / sigma);
  const above = usl === null ? 0 : 1e6 * normalCdf((mu - usl) / sigma);
  return { below, above, total: below + above };
}

interface Indices {
  p: number | null;
  u: number | null;
  l: number | null;
  k: number;
}

function indices(mu: number, sigma: number, lsl: number | null, usl: number | null): Indices {
  const u = usl === null ? null : (usl - mu) / (3 * sigma);
  const l = lsl === null ? null : (mu - lsl) / (3 * sigma);
  const p = usl !== null && lsl !== null ? (usl - lsl) / (6 * sigma) : null;
  const k = u === null ? (l as number) : l === null ? u : Math.min(u, l);
  return { p, u, l, k };
}

/**
 * A fitted distribution for skewed data: a Johnson curve by percentiles (Slifker & Shapiro 1980) first,
 * since it has a location parameter and so suits readings far from zero with a small coefficient of
 * variation (hardness), where Box–Cox needs an extreme λ and extrapolates its tails badly (measured in
 * bench/capability.bench.ts); Box–Cox (positive values) when the Johnson percentiles give no fit.
 * Bootstrap intervals refit on each resample (for Johnson, whichever family the resample selects). Null
 * when neither fits.
 */
function fitDistribution(values: readonly number[], lsl: number | null, usl: number | null, boot: { replicates: number; seed?: number; confidence: number }): FittedCapability | null {
  let why = '';
  try {
    const fit = johnsonFit(values);
    const idx = johnsonIndices(fit, lsl, usl);
    if (Number.isFinite(idx.ppk) && Number.isFinite(idx.expectedPpm)) {
      const [ppk, ppm] = bootstrapPercentile(values, (s) => {
        const j = johnsonIndices(johnsonFit(s), lsl, usl);
        return [j.ppk, j.expectedPpm];
      }, boot);
      return { method: 'johnson', lambda: null, johnson: fit, choice: `Johnson ${fit.family} by percentiles`, ...idx, intervals: { ppk: ppk ?? null, expectedPpm: ppm ?? null } };
    }
    why = 'Johnson quantiles undefined';
  } catch (error) {
    why = `no Johnson fit (${(error as Error).message})`;
  }
  if (!values.every((x) => x > 0)) return null;
  try {
    const fit = boxCoxFit(values);
    if (fit.atBound) return null;
    const idx = boxCoxIndices(fit, lsl, usl);
    if (!Number.isFinite(idx.ppk) || !Number.isFinite(idx.expectedPpm)) return null;
    const [ppk, ppm] = bootstrapPercentile(values, (s) => {
      const b = boxCoxIndices(boxCoxFit(s), lsl, usl);
      return [b.ppk, b.expectedPpm];
    }, boot);
    return { method: 'box-cox', lambda: fit.lambda, johnson: null, choice: `${why}, so Box–Cox with maximum-likelihood λ`, ...idx, intervals: { ppk: ppk ?? null, expectedPpm: ppm ?? null } };
  } catch {
    return null;
  }
}

function intervalMethod(withinMethod: CapabilityResult['withinMethod'], choice: IntervalDfChoice, effectiveDf: number, n: number): IntervalMethod {
  const effectiveRule =
    withinMethod === 'moving-range'
      ? `effective df of MR-bar/d2, 0.62(n − 1) = ${effectiveDf.toFixed(2)} (Cryer & Ryan 1990)`
      : withinMethod === 'subgroup-s-over-c4'
        ? `effective df of the mean of s/c4, k²/(2Σ(1 − c4²)/c4²) = ${effectiveDf.toFixed(2)}`
        : `df carried by the given (pooled) within sigma = ${effectiveDf.toFixed(2)}`;
  return {
    cp: 'chi-square interval on the df of the within sigma (Montgomery §8.3.5)',
    cpk: 'Bissell (1990) normal approximation on the df of the within sigma',
    pp: 'chi-square interval on n − 1 df (Montgomery §8.3.5)',
    ppk: 'Bissell (1990) normal approximation on n − 1 df',
    withinDf: choice,
    withinDfRule: choice === 'effective' ? effectiveRule : `n − 1 = ${n - 1} (textbook form; the ${effectiveRule} was not used)`,
  };
}

/**
 * Interval for the smallest of several Cpk/Ppk-type indices (e.g. the weakest band distance). The
 * smallest estimate is biased low (the minimum of noisy estimates, most so when several distances are
 * about equally weak), and its own 95 % interval ignores that it was picked. Here each index gets a
 * Bissell (1990) interval at the Šidák level (confidence)^(1/k) (Šidák 1967, JASA 62:626–633; it holds
 * at least at the stated level for positively dependent estimates, which adjacent J-distances are),
 * so all k intervals hold together at ≥ confidence; then min_j L_j ≤ min_j index_j ≤ min_j U_j.
 */
export function minimumIndexInterval(
  indices: ReadonlyArray<{ estimate: number; n: number; df: number }>,
  confidence = 0.95,
): { estimate: number; at: number; lower: number; upper: number; k: number; perIndexConfidence: number; confidence: number } {
  if (indices.length === 0) throw new StatsInputError('the minimum needs at least one index');
  if (!(confidence > 0 && confidence < 1)) throw new StatsInputError('confidence must be in (0, 1)');
  const k = indices.length;
  const each = Math.pow(confidence, 1 / k);
  let at = 0;
  let lower = Infinity;
  let upper = Infinity;
  indices.forEach((x, j) => {
    if (x.estimate < indices[at].estimate) at = j;
    const iv = bissellInterval(x.estimate, x.n, x.df, each);
    lower = Math.min(lower, iv.lower);
    upper = Math.min(upper, iv.upper);
  });
  return { estimate: indices[at].estimate, at, lower, upper, k, perIndexConfidence: each, confidence };
}

/** Capability (Cp, Cpk, ...) and performance (Pp, Ppk, ...) of a series against a band; see module header. */
export function capability(data: CapabilityData, band: SpecBand, options: CapabilityOptions = {}): CapabilityResult {
  const lsl = finiteOrNull(band.lsl, 'LSL');
  const usl = finiteOrNull(band.usl, 'USL');
  const target = finiteOrNull(band.target, 'target');
  if (lsl === null && usl === null) throw new StatsInputError('a specification band needs an LSL, a USL or both');
  if (lsl !== null && usl !== null && !(usl > lsl)) throw new StatsInputError('USL must be greater than LSL');
  const confidence = options.confidence ?? 0.95;
  if (!(confidence > 0 && confidence < 1)) throw new StatsInputError('confidence must be in (0, 1)');
  const normalityAlpha = options.normalityAlpha ?? 0.05;
  const minN = options.minN ?? 25;
  const rules = options.stabilityRules ?? [1];
  const percentileMode = options.percentile ?? 'auto';
  const intervalDf = options.intervalDf ?? 'effective';
  if (!INTERVAL_DF_CHOICES.includes(intervalDf)) throw new StatsInputError(`intervalDf must be one of ${INTERVAL_DF_CHOICES.join(', ')}`);

  const given = options.within;
  if (given !== undefined && !(Number.isFinite(given.sigma) && given.sigma > 0 && Number.isFinite(given.df) && given.df > 0)) {
    throw new StatsInputError('a given within sigma needs a positive sigma and positive degrees of freedom');
  }
  let values: number[];
  let sigmaWithin: number;
  let withinDf: number;
  let withinMethod: CapabilityResult['withinMethod'];
  let unstablePoints: number[];
  if ('values' in data) {
    values = data.values.slice();
    if (values.length < 2) throw new StatsInputError('capability needs at least 2 values');
    assertFinite(values);
    const chart = individualsChart(values, given ? { sigma: given.sigma } : {});
    sigmaWithin = chart.sigma;
    withinDf = given ? given.df : movingRangeDf(values.length);
    withinMethod = given ? 'given' : 'moving-range';
    if (!(sigmaWithin > 0)) throw new StatsInputError(NO_SPREAD);
    unstablePoints = nelsonRules(values, { center: chart.center, sigma: chart.sigma }, { rules }).flagged;
  } else {
    if (given) throw new StatsInputError('a given within sigma applies to individuals data only');
    const chart = xbarSChart(data.subgroups);
    values = data.subgroups.flat();
    sigmaWithin = chart.sigma;
    withinDf = subgroupSDf(chart.sizes);
    withinMethod = 'subgroup-s-over-c4';
    if (!(sigmaWithin > 0)) throw new StatsInputError(NO_SPREAD);
    const standardised = chart.means.map((m, i) => ((m - chart.center) * Math.sqrt(chart.sizes[i])) / chart.sigma);
    const flagged = new Set(nelsonRules(standardised, { center: 0, sigma: 1 }, { rules }).flagged);
    for (const i of chart.dispersionOutOfControl) flagged.add(i);
    unstablePoints = Array.from(flagged).sort((a, b) => a - b);
  }
  const n = values.length;
  const effectiveDf = withinDf;
  if (intervalDf === 'n-1') withinDf = n - 1;
  const sorted = Float64Array.from(values).sort();
  let sum = 0;
  for (const x of values) sum += x;
  let mu = sum / n;
  let ss = 0;
  for (const x of values) ss += (x - mu) ** 2;
  let sigmaOverall = Math.sqrt(ss / (n - 1));
  const censored = 'values' in data && data.censored?.some((c) => c) ? data.censored : null;
  let censoring: CapabilityResult['censoring'] = null;
  if (censored) {
    const fit = censoredNormalFit(values, censored);
    mu = fit.mean;
    sigmaOverall = fit.sd;
    censoring = {
      below: fit.below,
      above: fit.above,
      method: 'censored-normal maximum likelihood (Cohen 1959), by EM',
      note: `${fit.below + fit.above} reading(s) off the scale: the overall mean and sigma are their censored-normal estimate; the within sigma (moving ranges) takes each bound as the value`,
    };
  }
  if (!(sigmaOverall > 0) || !(sigmaWithin > 0)) throw new StatsInputError(NO_SPREAD);

  const within = indices(mu, sigmaWithin, lsl, usl);
  const overall = indices(mu, sigmaOverall, lsl, usl);
  const cpm =
    target !== null && lsl !== null && usl !== null ? (usl - lsl) / (6 * Math.sqrt(sigmaOverall ** 2 + (mu - target) ** 2)) : null;

  let below = 0;
  let above = 0;
  values.forEach((x, i) => {
    const side = censored?.[i];
    if (side === 'below') {
      if (lsl !== null && x <= lsl) below++;
    } else if (side === 'above') {
      if (usl !== null && x >= usl) above++;
    } else {
      if (lsl !== null && x < lsl) below++;
      if (usl !== null && x > usl) above++;
    }
  });
  const observedPpm = { below: (1e6 * below) / n, above: (1e6 * above) / n, total: (1e6 * (below + above)) / n };

  let normality: AndersonDarlingResult | null = null;
  let judgement: NormalityJudgement | null = null;
  // Bounds are not readings: no normality test or fitted shape on them.
  if (n >= 3 && !censored) {
    normality = andersonDarling(values);
    judgement = judgeNormality(values, normalityAlpha);
  }
  const nonNormal = judgement !== null && judgement.rejected;
  const bootOptions = { replicates: options.bootstrap?.replicates ?? 400, seed: options.bootstrap?.seed, confidence };

  const fittedMode = options.fitted ?? 'never';
  let fitted: FittedCapability | null = null;
  let fitProblem: string | null = null;
  if (censored) fitProblem = 'readings off the scale: no distribution shape is fitted to bounds';
  else if (fittedMode === 'always' || (fittedMode === 'auto' && nonNormal)) {
    const distinct = new Set(values).size;
    if (n < 10) fitProblem = `${n} values: too few to fit a distribution`;
    else if (distinct < MIN_DISTINCT_FOR_FIT) fitProblem = `the readings take only ${distinct} distinct values: too coarse to fit a distribution's shape`;
    else {
      fitted = fitDistribution(values, lsl, usl, bootOptions);
      if (!fitted) fitProblem = 'neither a Box–Cox nor a Johnson curve could be fitted';
    }
  }

  const percentileIndices = (s: ArrayLike<number>) => {
    const p00135 = quantileSorted(s, 0.00135);
    const p50 = quantileSorted(s, 0.5);
    const p99865 = quantileSorted(s, 0.99865);
    const pp = lsl !== null && usl !== null ? (usl - lsl) / (p99865 - p00135) : null;
    const ppu = usl === null ? null : (usl - p50) / (p99865 - p50);
    const ppl = lsl === null ? null : (p50 - lsl) / (p50 - p00135);
    const ppk = ppu === null ? (ppl as number) : ppl === null ? ppu : Math.min(ppu, ppl);
    return { p00135, p50, p99865, pp, ppu, ppl, ppk };
  };
  let percentile: PercentileIndices | null = null;
  if (!censored && (percentileMode === 'always' || (percentileMode === 'auto' && nonNormal && n >= PERCENTILE_MIN_N))) {
    const interval =
      n >= PERCENTILE_MIN_N ? (bootstrapPercentile(values, (sample) => [percentileIndices(Float64Array.from(sample).sort()).ppk], bootOptions)[0] ?? null) : null;
    percentile = { ...percentileIndices(sorted), interval };
  }

  return {
    n,
    mean: mu,
    median: quantileSorted(sorted, 0.5),
    sigmaOverall,
    sigmaWithin,
    withinMethod,
    lsl,
    usl,
    target,
    cp: within.p,
    cpu: within.u,
    cpl: within.l,
    cpk: within.k,
    pp: overall.p,
    ppu: overall.u,
    ppl: overall.l,
    ppk: overall.k,
    cpm,
    confidence,
    intervals: {
      cp: within.p === null ? null : chiSquareInterval(within.p, withinDf, confidence),
      pp: overall.p === null ? null : chiSquareInterval(overall.p, n - 1, confidence),
      cpk: bissellInterval(within.k, n, withinDf, confidence),
      ppk: bissellInterval(overall.k, n, n - 1, confidence),
      df: { within: withinDf, overall: n - 1 },
      method: intervalMethod(withinMethod, intervalDf, effectiveDf, n),
    },
    expectedPpm: { within: expectedPpm(mu, sigmaWithin, lsl, usl), overall: expectedPpm(mu, sigmaOverall, lsl, usl) },
    observedPpm,
    normality,
    normalityJudgement: judgement,
    fitted,
    fitProblem,
    percentile,
    unstablePoints,
    flags: { smallSample: n < minN, nonNormal, unstable: unstablePoints.length > 0, percentileFewData: percentile !== null && n < PERCENTILE_MIN_N },
    censoring,
  };
}
