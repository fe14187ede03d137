// Normality of readings reported on a coarse grid (e.g. whole HRC), where a test for continuous data
// rejects because of the rounding alone: ties make the Anderson–Darling statistic large whenever the
// step is not small against σ, and the more readings, the surer the rejection.
// Rule used here (our rule, checked by simulation in bench/capability.bench.ts): when every reading is
// a multiple of a step h (1, 0.5, 0.2, 0.1, 0.05, 0.02 or 0.01) and h ≥ σ̂/20, normality is judged by a
// chi-square test on the grouped data; otherwise by Anderson–Darling (D'Agostino & Stephens 1986).
// Grouped test: cells are the grid values, each [x − h/2, x + h/2), the outermost opened to ±∞
// (a reading x stands for the interval it was rounded from). Adjacent cells are merged from the low end
// until each expects at least 5 readings under the starting estimate (Cochran 1954, Biometrics 10:417–451;
// a short last group joins the one before). μ and σ are then the maximum-likelihood estimates from the
// merged cell counts (multinomial likelihood Σ n_k ln P_k(μ, σ)), so Pearson's X² = Σ (n_k − E_k)²/E_k has
// K − 1 − 2 degrees of freedom (Cramér 1946, Mathematical Methods of Statistics, §30.3; with estimates
// from the ungrouped data the df would lie between K − 3 and K − 1, Chernoff & Lehmann 1954, Ann. Math.
// Stat. 25:579–586). Starting estimate: mean and the Sheppard-corrected SD √(s² − h²/12) (Sheppard 1898).
// Fewer than 4 cells leave no df: no test (pValue null), which is not evidence against normality.
import { andersonDarling } from './andersonDarling.ts';
import { chiSquareCdf, normalCdf } from './distributions.ts';
import { StatsInputError, assertFinite } from './descriptive.ts';
import { nelderMead } from './optimize.ts';

/** Steps a reading grid is recognised on, coarsest first. */
export const READING_STEPS = [1, 0.5, 0.2, 0.1, 0.05, 0.02, 0.01] as const;

/** Use the grouped test when the reading step is at least this fraction of σ̂ (see header: σ̂/20). */
export const GROUPED_STEP_RATIO = 0.05;

/** Fewest expected readings per merged cell (Cochran 1954). */
export const MIN_EXPECTED_PER_CELL = 5;

/** The coarsest step all readings are multiples of, or null when none of READING_STEPS fits. */
export function readingStep(values: readonly number[]): number | null {
  if (values.length === 0) return null;
  for (const step of READING_STEPS) {
    if (values.every((v) => Math.abs(v / step - Math.round(v / step)) < 1e-6)) return step;
  }
  return null;
}

/** P(a ≤ X < b) for X ~ N(μ, σ), computed on the side that avoids cancellation. */
function cellProbability(a: number, b: number, mu: number, sigma: number): number {
  const za = (a - mu) / sigma;
  const zb = (b - mu) / sigma;
  return za > 0 ? normalCdf(-za) - normalCdf(-zb) : normalCdf(zb) - normalCdf(za);
}

export interface GroupedCell {
  from: number;
  to: number;
  observed: number;
  expected: number;
}

export interface GroupedNormalityResult {
  method: 'grouped-chi-square';
  step: number;
  /** Maximum-likelihood estimates from the grouped counts. */
  mu: number;
  sigma: number;
  cells: GroupedCell[];
  statistic: number;
  df: number;
  /** Null when fewer than 4 cells remain after merging (no degrees of freedom). */
  pValue: number | null;
}

/** Chi-square test of normality on readings grouped on a grid of the given step (see header). */
export function groupedNormalityTest(values: readonly number[], step: number): GroupedNormalityResult {
  assertFinite(values);
  if (values.length < 3) throw new StatsInputError('a normality test needs at least 3 values');
  if (!(step > 0)) throw new StatsInputError('the reading step must be positive');
  const n = values.length;
  const grid = values.map((v) => Math.round(v / step));
  const lo = Math.min(...grid);
  const hi = Math.max(...grid);
  const counts = new Array<number>(hi - lo + 1).fill(0);
  for (const g of grid) counts[g - lo]++;
  const mean = values.reduce((a, b) => a + b, 0) / n;
  const s2 = values.reduce((a, b) => a + (b - mean) ** 2, 0) / (n - 1);
  if (!(s2 > 0)) throw new StatsInputError('a normality test needs values with some spread');
  const sd0 = Math.sqrt(Math.max(s2 - (step * step) / 12, s2 / 4));
  // Upper edges of the unmerged cells (the last one open).
  const upper = counts.map((_, j) => (j === counts.length - 1 ? Infinity : (lo + j + 0.5) * step));
  const lower = counts.map((_, j) => (j === 0 ? -Infinity : (lo + j - 0.5) * step));
  const groups: Array<{ from: number; to: number; observed: number }> = [];
  let current: { from: number; to: number; observed: number } | null = null;
  for (let j = 0; j < counts.length; j++) {
    if (!current) current = { from: lower[j], to: upper[j], observed: 0 };
    current.to = upper[j];
    current.observed += counts[j];
    if (n * cellProbability(current.from, current.to, mean, sd0) >= MIN_EXPECTED_PER_CELL) {
      groups.push(current);
      current = null;
    }
  }
  if (current) {
    if (groups.length) {
      const last = groups[groups.length - 1];
      last.to = current.to;
      last.observed += current.observed;
    } else groups.push(current);
  }
  groups[groups.length - 1].to = Infinity;
  const negLogLik = ([mu, logSigma]: number[]) => {
    const sigma = Math.exp(logSigma);
    let ll = 0;
    for (const g of groups) {
      if (g.observed === 0) continue;
      const pk = cellProbability(g.from, g.to, mu, sigma);
      if (!(pk > 0)) return Infinity;
      ll += g.observed * Math.log(pk);
    }
    return -ll;
  };
  let fit = nelderMead(negLogLik, [mean, Math.log(sd0)], [0.1 * sd0, 0.1]);
  fit = nelderMead(negLogLik, fit.x, [0.02 * sd0, 0.02]); // restart once (common practice for Nelder–Mead)
  const mu = fit.x[0];
  const sigma = Math.exp(fit.x[1]);
  const cells = groups.map((g) => ({ ...g, expected: n * cellProbability(g.from, g.to, mu, sigma) }));
  const statistic = cells.reduce((a, c) => a + (c.observed - c.expected) ** 2 / c.expected, 0);
  const df = cells.length - 3;
  return { method: 'grouped-chi-square', step, mu, sigma, cells, statistic, df, pValue: df >= 1 ? 1 - chiSquareCdf(statistic, df) : null };
}

export interface NormalityJudgement {
  method: 'anderson-darling' | 'grouped-chi-square';
  /** Grid step of the readings, or null when they are not on one of READING_STEPS. */
  readingStep: number | null;
  statistic: number;
  df: number | null;
  pValue: number | null;
  rejected: boolean;
  alpha: number;
  /** Why this test, in words. */
  rule: string;
  grouped: GroupedNormalityResult | null;
}

/** Normality judged with the reading resolution taken into account (see header). */
export function judgeNormality(values: readonly number[], alpha = 0.05): NormalityJudgement {
  if (!(alpha > 0 && alpha < 1)) throw new StatsInputError('alpha must be in (0, 1)');
  const step = readingStep(values);
  const n = values.length;
  const mean = values.reduce((a, b) => a + b, 0) / n;
  const sd = Math.sqrt(values.reduce((a, b) => a + (b - mean) ** 2, 0) / (n - 1));
  if (step !== null && step >= GROUPED_STEP_RATIO * sd) {
    const g = groupedNormalityTest(values, step);
    return {
      method: 'grouped-chi-square',
      readingStep: step,
      statistic: g.statistic,
      df: g.df,
      pValue: g.pValue,
      rejected: g.pValue !== null && g.pValue < alpha,
      alpha,
      rule: `readings on a ${step} grid, step ≥ σ/20 (σ ≈ ${sd.toFixed(2)}): chi-square test on the grouped readings (${g.cells.length} cells, ${g.df} df)${g.pValue === null ? ', too few cells to test' : ''}`,
      grouped: g,
    };
  }
  const ad = andersonDarling(values);
  return {
    method: 'anderson-darling',
    readingStep: step,
    statistic: ad.a2Adjusted,
    df: null,
    pValue: ad.pValue,
    rejected: ad.pValue < alpha,
    alpha,
    rule: step === null ? 'readings not on a coarse grid: Anderson–Darling' : `readings on a ${step} grid, fine against σ ≈ ${sd.toFixed(2)}: Anderson–Darling`,
    grouped: null,
  };
}
