// Average run length (ARL) of the tabular CUSUM and of the EWMA chart for individual normal observations
// (σ = 1, in-control mean 0, the shift in σ units), by Markov-chain approximations:
// - CUSUM: D. Brook & D. A. Evans, "An approach to the probability distribution of cusum run length",
//   Biometrika 59(3), 1972, 539–549. The one-sided sum on [0, h] is cut into `states` cells of width
//   w = 2h/(2·states − 1): cell 0 holds the sum 0 (and sums below w/2), cell i the sums around i·w, and a
//   sum beyond (states − ½)·w = h signals. Q[i][j] = P(i·w + X − k falls in cell j), X ~ N(shift, 1).
//   Two-sided: 1/ARL = 1/ARL⁺ + 1/ARL⁻ (Van Dobben de Bruyn 1968; used by J. M. Lucas & R. B. Crosier,
//   "Fast initial response for CUSUM quality-control schemes", Technometrics 24(3), 1982, 199–205).
//   With a head start s for both sums: ARL = [L⁺(s)L⁻(0) + L⁺(0)L⁻(s) − L⁺(0)L⁻(0)] / [L⁺(0) + L⁻(0)],
//   which reproduces Lucas & Crosier's Table 1 FIR column (149 for k = 0.5, h = 4, s = 2) and the seeded
//   Monte Carlo check in the tests. The lower sum against a shift m runs like the upper sum against −m.
// - EWMA: J. M. Lucas & M. S. Saccucci, "Exponentially weighted moving average control schemes:
//   properties and enhancements", Technometrics 32(1), 1990, 1–12. The in-control band of z between the
//   asymptotic limits ±L·√(λ/(2 − λ)) is cut into `states` (odd) cells of width δ; from the centre c_i,
//   z' = (1 − λ)c_i + λX falls in cell j with probability Φ((c_j + δ/2 − (1 − λ)c_i)/λ − s) −
//   Φ((c_j − δ/2 − (1 − λ)c_i)/λ − s). The chart starts at z₀ = 0 (the middle cell).
// In both cases the ARL from each transient cell solves (I − Q)·ARL = 1 (Brook & Evans 1972).
//
// Default number of states (about 3 significant digits): the discretisation error of both chains
// shrinks roughly as (cell width)², and what matters is the cell against the spread of one step.
// CUSUM: 25 cells per σ of h (cell w ≈ 0.04σ), at least 100 and at most 1000 (h = 8: 200 states).
// EWMA: cells no wider than λ/20 (in σ of x, so one step λX spans ~20 cells per σ), odd, at least 101
// and at most 1001 (λ = 0.05, L = 3.5: 449 states). Against the Fredholm-integral (Nyström) solution
// the defaults are within 0.15% for h <= 8 and 0.03 <= λ <= 1, L <= 3.5; pass `states` for more (the
// solve is O(states³)).
import { LuDecomposition, Matrix } from 'ml-matrix';
import { StatsInputError } from './descriptive.ts';
import { normalCdf } from './distributions.ts';

/** Default Markov-chain states of cusumArl: 25 per σ of h, between 100 and 1000. */
export function defaultCusumArlStates(h: number): number {
  return Math.min(1000, Math.max(100, Math.ceil(25 * h)));
}

/** Default Markov-chain states of ewmaArl: cells no wider than λ/20, odd, between 101 and 1001. */
export function defaultEwmaArlStates(lambda: number, L: number): number {
  const ucl = L * Math.sqrt(lambda / (2 - lambda));
  const n = Math.ceil((40 * ucl) / lambda);
  return Math.min(1001, Math.max(101, n % 2 === 0 ? n + 1 : n));
}

export interface CusumArlOptions {
  /** Reference value in σ units, k >= 0. */
  k: number;
  /** Decision interval in σ units, h > 0. */
  h: number;
  /** Shift of the mean in σ units (0 for the in-control ARL); positive is upward. */
  shift: number;
  /** Head start (fast initial response) of both sums in σ units, 0 <= headStart < h (default 0). */
  headStart?: number;
  /** Markov-chain states per one-sided sum, an integer >= 5 (default defaultCusumArlStates(h)). */
  states?: number;
}

export interface CusumArl {
  /** ARL of the two-sided scheme (signal when either sum exceeds h). */
  twoSided: number;
  /** ARL of the upper sum C⁺ alone. */
  upper: number;
  /** ARL of the lower sum C⁻ alone. */
  lower: number;
  /** Markov-chain states used per one-sided sum. */
  states: number;
}

export interface EwmaArlOptions {
  /** Smoothing weight, 0 < λ <= 1. */
  lambda: number;
  /** Width of the asymptotic limits in σ of z: ±L·√(λ/(2 − λ)), L > 0. */
  L: number;
  /** Shift of the mean in σ units (0 for the in-control ARL). */
  shift: number;
  /** Markov-chain states, an odd integer >= 5 (default defaultEwmaArlStates(lambda, L)). */
  states?: number;
}

function requireFinite(value: number, what: string): void {
  if (!Number.isFinite(value)) throw new StatsInputError(`${what} must be a finite number, got ${value}`);
}

function requireStates(states: number, odd: boolean): void {
  if (!Number.isInteger(states) || states < 5) throw new StatsInputError(`states must be an integer of at least 5, got ${states}`);
  if (odd && states % 2 === 0) throw new StatsInputError(`states must be odd (a middle cell for z = 0), got ${states}`);
  if (states > 5000) throw new StatsInputError(`states above 5000 are not supported (dense solve), got ${states}`);
}

/** Solves (I − Q)·ARL = 1 for the ARL from every transient state. */
function solveArl(q: Matrix): number[] {
  const n = q.rows;
  const a = Matrix.eye(n, n).sub(q);
  const lu = new LuDecomposition(a);
  if (lu.isSingular()) throw new StatsInputError('the run-length chain never signals (I − Q is singular)');
  return lu.solve(Matrix.ones(n, 1)).getColumn(0);
}

/** ARL of the upper one-sided CUSUM from every cell (cell i at sum i·w). */
function upperCusumArls(k: number, h: number, shift: number, t: number): { arl: number[]; w: number } {
  const w = (2 * h) / (2 * t - 1);
  // P(increment X − k <= x) with X ~ N(shift, 1); Q depends on j − i only, so tabulate by the offset.
  const cdf = (x: number) => normalCdf(x + k - shift);
  const toZero: number[] = [];
  const byOffset = new Map<number, number>();
  for (let d = -(t - 1); d <= t - 1; d++) byOffset.set(d, cdf((d + 0.5) * w) - cdf((d - 0.5) * w));
  for (let i = 0; i < t; i++) toZero.push(cdf((0.5 - i) * w));
  const q = new Matrix(t, t);
  for (let i = 0; i < t; i++) {
    q.set(i, 0, toZero[i] as number);
    for (let j = 1; j < t; j++) q.set(i, j, byOffset.get(j - i) as number);
  }
  return { arl: solveArl(q), w };
}

/** Linear interpolation of the cell ARLs at a start value (cells at 0, w, 2w, ...). */
function arlAt(arl: number[], w: number, start: number): number {
  const x = start / w;
  const i = Math.min(Math.floor(x), arl.length - 2);
  const f = x - i;
  return (1 - f) * (arl[i] as number) + f * (arl[i + 1] as number);
}

/**
 * ARL of the tabular CUSUM for individual N(shift, 1) observations (Brook & Evans 1972 Markov chain;
 * two-sided by Lucas & Crosier 1982, 1/ARL = 1/ARL⁺ + 1/ARL⁻). With a head start, the start value is
 * interpolated linearly between the two nearest cells.
 */
export function cusumArl(options: CusumArlOptions): CusumArl {
  const { k, h, shift } = options;
  const headStart = options.headStart ?? 0;
  requireFinite(k, 'k');
  requireFinite(h, 'h');
  requireFinite(shift, 'shift');
  requireFinite(headStart, 'headStart');
  if (k < 0) throw new StatsInputError(`k must be >= 0, got ${k}`);
  if (!(h > 0)) throw new StatsInputError(`h must be > 0, got ${h}`);
  if (!(headStart >= 0 && headStart < h)) throw new StatsInputError(`headStart must satisfy 0 <= headStart < h, got ${headStart}`);
  const states = options.states ?? defaultCusumArlStates(h);
  requireStates(states, false);
  const up = upperCusumArls(k, h, shift, states);
  const down = shift === 0 ? up : upperCusumArls(k, h, -shift, states);
  const upper = arlAt(up.arl, up.w, headStart);
  const lower = arlAt(down.arl, down.w, headStart);
  const upper0 = up.arl[0] as number;
  const lower0 = down.arl[0] as number;
  // Zero start: 1/ARL = 1/ARL⁺ + 1/ARL⁻; head start s: the same renewal argument weighs each side's
  // run from s by the other side's zero-start ARL (equal to 1/(1/ARL⁺ + 1/ARL⁻) when s = 0).
  const twoSided = (upper * lower0 + upper0 * lower - upper0 * lower0) / (upper0 + lower0);
  return { twoSided, upper, lower, states };
}

/**
 * Zero-state ARL of the two-sided EWMA chart with asymptotic limits ±L·√(λ/(2 − λ)) for individual
 * N(shift, 1) observations, z₀ = 0 (Lucas & Saccucci 1990 Markov chain).
 */
export function ewmaArl(options: EwmaArlOptions): number {
  const { lambda, L, shift } = options;
  requireFinite(lambda, 'lambda');
  requireFinite(L, 'L');
  requireFinite(shift, 'shift');
  if (!(lambda > 0 && lambda <= 1)) throw new StatsInputError(`lambda must be in (0, 1], got ${lambda}`);
  if (!(L > 0)) throw new StatsInputError(`L must be > 0, got ${L}`);
  const states = options.states ?? defaultEwmaArlStates(lambda, L);
  requireStates(states, true);
  const ucl = L * Math.sqrt(lambda / (2 - lambda));
  const delta = (2 * ucl) / states;
  const centre = (j: number) => -ucl + (j + 0.5) * delta;
  const q = new Matrix(states, states);
  for (let i = 0; i < states; i++) {
    const from = (1 - lambda) * centre(i);
    let previous = normalCdf((-ucl - from) / lambda - shift);
    for (let j = 0; j < states; j++) {
      const next = normalCdf((centre(j) + delta / 2 - from) / lambda - shift);
      q.set(i, j, next - previous);
      previous = next;
    }
  }
  const arl = solveArl(q);
  return arl[(states - 1) / 2] as number;
}
