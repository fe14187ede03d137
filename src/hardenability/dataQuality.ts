// Mill-level signs of edited or invented end-quench data, over a history of certificates.
//
// 1. Terminal-digit preference. Readers who estimate or edit values favour some last digits
//    (0 and 5, or even numbers). Pearson's chi-square goodness-of-fit test of the last digits
//    against equal frequencies (10 cells, 9 df), or of even against odd (2 cells, 1 df).
//    Sources: K. Pearson (1900), Phil. Mag. 50, 157-175; the use for data auditing follows e.g.
//    Preece (1981), "Distributions of final digits in data", The Statistician 30, 31-60.
//    Limits: the test assumes every last digit is equally likely, which holds only when the values
//    spread over many reporting steps; the even/odd form needs only neighbouring steps to be about
//    equally likely and is the safer one for HRC. Every cell should expect at least 5 values
//    (Cochran 1954): smaller histories are "not applicable".
//
// 2. Curves too smooth to be measured. Each curve is cut into disjoint windows of consecutive
//    readings (default 5); a quadratic is fitted by least squares in each window and the residual
//    sum of squares RSS has k - 3 degrees of freedom. If readings scatter independently with SD
//    sigma about a locally quadratic curve, T = sum RSS / sigma^2 follows chi-square on the total
//    degrees of freedom; curvature of higher order only adds to T. A lower-tail p-value far below
//    alpha says the history scatters less than a measurement can; we call it "too smooth" only when
//    also the apparent SD is far below the expected one (ratio below maxRatio, default 0.7), so a
//    modest error in the assumed repeatability cannot by itself raise the flag. sigma combines the reading repeatability with the rounding of reported values:
//    sigma^2 = s_r^2 + step^2 / 12. The default s_r = 0.4 HRC is FROM MEMORY: the order of the
//    ASTM E18 repeatability of Rockwell C on steel test blocks; end-quench readings scatter more
//    (positioning on the steep part), so the default is on the safe side. Set your own from a
//    gauge study.

import { chiSquareCdf } from '../stats/distributions.ts';
import { sortedReadings } from './distances.ts';
import { HardenabilityInputError } from './errors.ts';
import type { CheckEvidence, Reading } from './types.ts';

export type DigitTestMode = 'last_digit' | 'even_odd';

/** A p-value for people: three significant digits, or "< 1e-16" where double precision runs out. */
const formatP = (p: number): string => (p < 1e-16 ? '< 1e-16' : `= ${p.toPrecision(3)}`);

export interface TerminalDigitOptions {
  mode?: DigitTestMode;
  /** Reporting step of the values (HRC): 1 for whole numbers, 0.5 for halves. Default 1. */
  step?: number;
  /** p-value below which the check fails (default 0.001) ... */
  alpha?: number;
  /** ... and below which it warns (default 0.01). */
  warnAlpha?: number;
}

export interface TerminalDigitResult {
  mode: DigitTestMode;
  n: number;
  /** Observed counts per cell: digits 0..9, or [even, odd]. */
  observed: number[];
  expected: number;
  chiSquare: number;
  degreesOfFreedom: number;
  pValue: number;
  /** Span of the values in reporting steps (a small span makes last digits unequal naturally). */
  spanInSteps: number;
}

/** Pearson chi-square test of terminal digits (or even/odd) of values reported on a fixed step. */
export function terminalDigitTest(
  values: readonly number[],
  options: TerminalDigitOptions = {},
): CheckEvidence<TerminalDigitResult | { n: number }> {
  const mode = options.mode ?? 'even_odd';
  const step = options.step ?? 1;
  const alpha = options.alpha ?? 0.001;
  const warnAlpha = options.warnAlpha ?? 0.01;
  if (!(step > 0)) throw new HardenabilityInputError('the reporting step must be positive');
  const units = values.map((v, i) => {
    const u = v / step;
    if (!Number.isFinite(u) || Math.abs(u - Math.round(u)) > 1e-6) {
      throw new HardenabilityInputError(`value ${i} (${v}) is not a multiple of the reporting step ${step}`);
    }
    return Math.abs(Math.round(u));
  });
  const cells = mode === 'last_digit' ? 10 : 2;
  const title = mode === 'last_digit' ? 'Last digits of readings equally frequent' : 'Even and odd readings equally frequent';
  const threshold = { alpha, warnAlpha, minExpectedPerCell: 5 };
  const n = units.length;
  if (n / cells < 5) {
    return {
      check: 'terminal_digit',
      title,
      verdict: 'not_applicable',
      summary: `${n} values are too few: each of the ${cells} cells should expect at least 5.`,
      threshold,
      values: { n },
    };
  }
  const observed = new Array<number>(cells).fill(0);
  for (const u of units) observed[mode === 'last_digit' ? u % 10 : u % 2]++;
  const expected = n / cells;
  const chiSquare = observed.reduce((s, o) => s + (o - expected) ** 2 / expected, 0);
  const df = cells - 1;
  const pValue = 1 - chiSquareCdf(chiSquare, df);
  const spanInSteps = Math.max(...units) - Math.min(...units);
  const verdict = pValue < alpha ? 'fail' : pValue < warnAlpha ? 'warn' : 'pass';
  let summary =
    `chi-square ${chiSquare.toFixed(2)} on ${df} df, p ${formatP(pValue)} over ${n} values; counts ` +
    (mode === 'last_digit' ? observed.map((o, d) => `${d}:${o}`).join(' ') : `even ${observed[0]}, odd ${observed[1]}`) +
    '.';
  if (mode === 'last_digit' && spanInSteps < 30) {
    summary += ` The values span only ${spanInSteps} steps, so unequal last digits can be natural: prefer the even/odd test.`;
  }
  return {
    check: 'terminal_digit',
    title,
    verdict,
    summary,
    threshold,
    values: { mode, n, observed, expected, chiSquare, degreesOfFreedom: df, pValue, spanInSteps },
  };
}

export interface SmoothnessOptions {
  /** Repeatability SD of one reading, HRC (default 0.4, from memory; see header). */
  repeatabilitySdHrc?: number;
  /** Reporting step of the readings (default 1 HRC); adds step^2/12 to the variance. */
  step?: number;
  /** Readings per window (>= 4; default 5). */
  window?: number;
  /** Lower-tail p-value below which the history can fail as too smooth (default 0.001) ... */
  alpha?: number;
  /** ... when also apparent SD / expected SD is below this (default 0.7: "far below"). */
  maxRatio?: number;
}

export interface SmoothnessResult {
  curves: number;
  windows: number;
  degreesOfFreedom: number;
  /** Apparent SD of a reading about the local quadratics. */
  apparentSdHrc: number;
  /** SD expected of honest readings: sqrt(s_r^2 + step^2/12). */
  expectedSdHrc: number;
  ratio: number;
  statistic: number;
  /** P(chi-square <= statistic): small means too smooth. */
  pValueLower: number;
}

/** Residual sum of squares of a least-squares quadratic through the points (modified Gram-Schmidt). */
export function quadraticRss(xs: readonly number[], ys: readonly number[]): number {
  const n = xs.length;
  const mean = xs.reduce((a, b) => a + b, 0) / n;
  const scale = Math.max(...xs.map((x) => Math.abs(x - mean))) || 1;
  const t = xs.map((x) => (x - mean) / scale);
  const basis: number[][] = [];
  for (const col of [t.map(() => 1), t, t.map((v) => v * v)]) {
    const v = [...col];
    for (const q of basis) {
      const dot = q.reduce((s, qi, i) => s + qi * v[i], 0);
      for (let i = 0; i < n; i++) v[i] -= dot * q[i];
    }
    const norm = Math.sqrt(v.reduce((s, vi) => s + vi * vi, 0));
    if (norm < 1e-12) throw new HardenabilityInputError('repeated distances in a window');
    basis.push(v.map((vi) => vi / norm));
  }
  const r = [...ys];
  for (const q of basis) {
    const dot = q.reduce((s, qi, i) => s + qi * r[i], 0);
    for (let i = 0; i < n; i++) r[i] -= dot * q[i];
  }
  return r.reduce((s, ri) => s + ri * ri, 0);
}

/** Test whether a history of curves scatters less than honest measurements can. */
export function smoothnessTest(
  curves: readonly (readonly Reading[])[],
  options: SmoothnessOptions = {},
): CheckEvidence<SmoothnessResult | { curves: number; degreesOfFreedom: number }> {
  const sr = options.repeatabilitySdHrc ?? 0.4;
  const step = options.step ?? 1;
  const w = options.window ?? 5;
  const alpha = options.alpha ?? 0.001;
  const maxRatio = options.maxRatio ?? 0.7;
  if (!(sr >= 0) || !(step >= 0) || sr + step === 0) throw new HardenabilityInputError('repeatability and step cannot both be zero');
  if (!Number.isInteger(w) || w < 4) throw new HardenabilityInputError('a window needs at least 4 readings');
  const expectedVar = sr * sr + (step * step) / 12;
  let rss = 0;
  let df = 0;
  let windows = 0;
  for (const c of curves) {
    const r = sortedReadings(c);
    for (let start = 0; start + 4 <= r.length; start += w) {
      const win = r.slice(start, Math.min(start + w, r.length));
      if (win.length < 4) break;
      rss += quadraticRss(win.map((p) => p.mm), win.map((p) => p.hrc));
      df += win.length - 3;
      windows++;
    }
  }
  const title = 'Curves scatter as much as real measurements do';
  const threshold = { alpha, maxRatio, repeatabilitySdHrc: sr, reportingStep: step, window: w };
  if (df < 10) {
    return {
      check: 'too_smooth',
      title,
      verdict: 'not_applicable',
      summary: `only ${df} degrees of freedom from ${curves.length} curves; at least 10 are needed.`,
      threshold,
      values: { curves: curves.length, degreesOfFreedom: df },
    };
  }
  const statistic = rss / expectedVar;
  const pValueLower = chiSquareCdf(statistic, df);
  const apparentSdHrc = Math.sqrt(rss / df);
  const expectedSdHrc = Math.sqrt(expectedVar);
  const ratio = apparentSdHrc / expectedSdHrc;
  const verdict = pValueLower < alpha && ratio < maxRatio ? 'fail' : 'pass';
  const summary =
    `readings scatter ${apparentSdHrc.toFixed(2)} HRC about local quadratics, against ${expectedSdHrc.toFixed(2)} HRC expected of measured and rounded values ` +
    `(ratio ${ratio.toFixed(2)}; chi-square ${statistic.toFixed(1)} on ${df} df, lower-tail p ${formatP(pValueLower)})` +
    (verdict === 'fail' ? ': too smooth to be measured readings.' : '.');
  return {
    check: 'too_smooth',
    title,
    verdict,
    summary,
    threshold,
    values: { curves: curves.length, windows, degreesOfFreedom: df, apparentSdHrc, expectedSdHrc, ratio, statistic, pValueLower },
  };
}
