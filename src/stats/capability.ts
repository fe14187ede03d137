// Process capability and performance against a two-sided or one-sided specification band.
// Indices (ISO 22514-2; AIAG SPC manual 2nd ed.; NIST/SEMATECH e-Handbook §6.1.6; Montgomery §8.2):
//   Cp = (USL − LSL)/6σw, Cpu = (USL − μ)/3σw, Cpl = (μ − LSL)/3σw, Cpk = min(Cpu, Cpl);
//   Pp, Ppu, Ppl, Ppk the same with the overall sample SD (n − 1).
//   σw = MR-bar/d2(2) for individuals, mean of s_i/c4(n_i) (= s-bar/c4 for equal sizes) for subgroups.
//   Cpm = (USL − LSL) / (6√(s² + (x̄ − T)²))   (Chan, Cheng & Spiring 1988, J. Quality Technology 20:162–175;
//   here with the overall n − 1 SD).
// One-sided band: Cp, Pp, Cpm and the index of the missing side are null; Cpk/Ppk equal the one
// defined side (common practice).
// Intervals at confidence 1 − α: Cp, Pp by the chi-square interval Ĉ·√(χ²(α/2, ν)/ν)..Ĉ·√(χ²(1 − α/2, ν)/ν),
// ν = n − 1 (Montgomery §8.3.5; exact for Pp, the usual approximation for Cp); Cpk, Ppk by
// Bissell (1990), Applied Statistics 39:313–320: Ĉ ± z(1 − α/2)·√(1/(9n) + Ĉ²/(2(n − 1))).
// Expected nonconforming (normal model): 10⁶·Φ((LSL − μ)/σ) below and 10⁶·Φ((μ − USL)/σ) above.
// Observed: share of values strictly below LSL / above USL (a value on a limit conforms).
// Normality: Anderson–Darling (D'Agostino & Stephens 1986). When normality is rejected at level
// normalityAlpha, percentile indices (Clements 1989, Quality Progress 22(9):95–100; ISO 22514-2)
// replace 6σ by X(0.99865) − X(0.00135) and μ by the median; here with empirical quantiles
// (Hyndman & Fan definition 7), which need a large sample to reach the 0.135 % tails.
// Flags: n < minN (default 25); non-normal; unstable (any point flagged by the chosen Nelson rules,
// default rule 1, on the individuals chart, or on the standardised X-bar of an X-bar/S chart, or an
// S chart point beyond its limits).
import { chiSquareQuantile, normalCdf, normalQuantile } from './distributions.ts';
import { StatsInputError, assertFinite, quantileSorted } from './descriptive.ts';
import { andersonDarling, type AndersonDarlingResult } from './andersonDarling.ts';
import { individualsChart } from './individualsChart.ts';
import { xbarSChart } from './subgroupCharts.ts';
import { nelsonRules, type NelsonRule } from './nelsonRules.ts';

export interface SpecBand {
  lsl?: number | null;
  usl?: number | null;
  /** Target value, used for Cpm (two-sided bands only). */
  target?: number | null;
}

export type CapabilityData = { values: readonly number[] } | { subgroups: readonly (readonly number[])[] };

export interface CapabilityOptions {
  /** Confidence level of the intervals (default 0.95). */
  confidence?: number;
  /** Level at which Anderson–Darling rejects normality (default 0.05). */
  normalityAlpha?: number;
  /** Sample size below which the smallSample flag is raised (default 25). */
  minN?: number;
  /** Nelson rules used for the stability flag (default [1]). */
  stabilityRules?: readonly NelsonRule[];
  /** Percentile indices: 'auto' (when normality is rejected), 'always' or 'never' (default 'auto'). */
  percentile?: 'auto' | 'always' | 'never';
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
}

export interface CapabilityResult {
  n: number;
  mean: number;
  median: number;
  sigmaOverall: number;
  sigmaWithin: number;
  withinMethod: 'moving-range' | 'subgroup-s-over-c4';
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
  intervals: { cp: Interval | null; pp: Interval | null; cpk: Interval; ppk: Interval };
  expectedPpm: { within: PpmSplit; overall: PpmSplit };
  observedPpm: PpmSplit;
  normality: AndersonDarlingResult | null;
  percentile: PercentileIndices | null;
  /** Indices flagged by the stability rules (observations for individuals, subgroups otherwise). */
  unstablePoints: number[];
  flags: { smallSample: boolean; nonNormal: boolean; unstable: boolean };
}

const NO_SPREAD = 'capability is undefined for a series with no spread (sigma = 0)';

function finiteOrNull(x: number | null | undefined, what: string): number | null {
  if (x === null || x === undefined) return null;
  if (!Number.isFinite(x)) throw new StatsInputError(`${what} must be a finite number`);
  return x;
}

function chiSquareInterval(est: number, n: number, confidence: number): Interval {
  const nu = n - 1;
  const a = 1 - confidence;
  return {
    lower: est * Math.sqrt(chiSquareQuantile(a / 2, nu) / nu),
    upper: est * Math.sqrt(chiSquareQuantile(1 - a / 2, nu) / nu),
  };
}

function bissellInterval(est: number, n: number, confidence: number): Interval {
  const z = normalQuantile(1 - (1 - confidence) / 2);
  const half = z * Math.sqrt(1 / (9 * n) + (est * est) / (2 * (n - 1)));
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

  let values: number[];
  let sigmaWithin: number;
  let withinMethod: CapabilityResult['withinMethod'];
  let unstablePoints: number[];
  if ('values' in data) {
    values = data.values.slice();
    if (values.length < 2) throw new StatsInputError('capability needs at least 2 values');
    assertFinite(values);
    const chart = individualsChart(values);
    sigmaWithin = chart.sigma;
    withinMethod = 'moving-range';
    if (!(sigmaWithin > 0)) throw new StatsInputError(NO_SPREAD);
    unstablePoints = nelsonRules(values, { center: chart.center, sigma: chart.sigma }, { rules }).flagged;
  } else {
    const chart = xbarSChart(data.subgroups);
    values = data.subgroups.flat();
    sigmaWithin = chart.sigma;
    withinMethod = 'subgroup-s-over-c4';
    if (!(sigmaWithin > 0)) throw new StatsInputError(NO_SPREAD);
    const standardised = chart.means.map((m, i) => ((m - chart.center) * Math.sqrt(chart.sizes[i])) / chart.sigma);
    const flagged = new Set(nelsonRules(standardised, { center: 0, sigma: 1 }, { rules }).flagged);
    for (const i of chart.dispersionOutOfControl) flagged.add(i);
    unstablePoints = Array.from(flagged).sort((a, b) => a - b);
  }
  const n = values.length;
  const sorted = Float64Array.from(values).sort();
  let sum = 0;
  for (const x of values) sum += x;
  const mu = sum / n;
  let ss = 0;
  for (const x of values) ss += (x - mu) ** 2;
  const sigmaOverall = Math.sqrt(ss / (n - 1));
  if (!(sigmaOverall > 0) || !(sigmaWithin > 0)) throw new StatsInputError(NO_SPREAD);

  const within = indices(mu, sigmaWithin, lsl, usl);
  const overall = indices(mu, sigmaOverall, lsl, usl);
  const cpm =
    target !== null && lsl !== null && usl !== null ? (usl - lsl) / (6 * Math.sqrt(sigmaOverall ** 2 + (mu - target) ** 2)) : null;

  let below = 0;
  let above = 0;
  for (const x of values) {
    if (lsl !== null && x < lsl) below++;
    if (usl !== null && x > usl) above++;
  }
  const observedPpm = { below: (1e6 * below) / n, above: (1e6 * above) / n, total: (1e6 * (below + above)) / n };

  let normality: AndersonDarlingResult | null = null;
  if (n >= 3) normality = andersonDarling(values);
  const nonNormal = normality !== null && normality.pValue < normalityAlpha;

  let percentile: PercentileIndices | null = null;
  if (percentileMode === 'always' || (percentileMode === 'auto' && nonNormal)) {
    const p00135 = quantileSorted(sorted, 0.00135);
    const p50 = quantileSorted(sorted, 0.5);
    const p99865 = quantileSorted(sorted, 0.99865);
    const pp = lsl !== null && usl !== null ? (usl - lsl) / (p99865 - p00135) : null;
    const ppu = usl === null ? null : (usl - p50) / (p99865 - p50);
    const ppl = lsl === null ? null : (p50 - lsl) / (p50 - p00135);
    const ppk = ppu === null ? (ppl as number) : ppl === null ? ppu : Math.min(ppu, ppl);
    percentile = { p00135, p50, p99865, pp, ppu, ppl, ppk };
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
      cp: within.p === null ? null : chiSquareInterval(within.p, n, confidence),
      pp: overall.p === null ? null : chiSquareInterval(overall.p, n, confidence),
      cpk: bissellInterval(within.k, n, confidence),
      ppk: bissellInterval(overall.k, n, confidence),
    },
    expectedPpm: { within: expectedPpm(mu, sigmaWithin, lsl, usl), overall: expectedPpm(mu, sigmaOverall, lsl, usl) },
    observedPpm,
    normality,
    percentile,
    unstablePoints,
    flags: { smallSample: n < minN, nonNormal, unstable: unstablePoints.length > 0 },
  };
}
