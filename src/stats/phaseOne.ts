// Phase I (estimating control limits from a baseline) and phase II (applying frozen limits) for an
// individuals / moving-range chart. Retrospective limit revision as in Montgomery, Introduction to
// Statistical Quality Control, §5.4 and §6.4 (trial limits; drop out-of-control points; recompute), and
// ASTM E2587 §6. Procedure used here:
//   1. Start with every baseline point included.
//   2. Centre = mean of the included points; σ̂ = MR-bar/d2(2), where MR-bar averages |x_i − x_{i−1}|
//      over pairs of CONSECUTIVE baseline points that are both still included (a moving range that
//      straddles an excluded point is dropped, not bridged).
//   3. Apply the chosen Nelson rules (default rule 1 only: beyond centre ± Lσ̂) to the included points
//      in time order; exclude every point that fires (for run rules, the completing point).
//   4. Repeat 2–3 until a pass excludes nothing (converged), or maxIterations (default 10) passes have
//      run; then converged = false, the limits of the last pass are kept and the points that pass
//      still flags are listed in stillFlagged (not excluded).
// Fails with a PhaseOneError if fewer than minRemaining points (default 10) or no consecutive pair remain.
// The result is a plain serialisable object; phase II only reads it.
import { shewhartConstants } from './shewhartConstants.ts';
import { StatsInputError, assertFinite } from './descriptive.ts';
import { nelsonRules, type NelsonResult, type NelsonRule } from './nelsonRules.ts';

export class PhaseOneError extends Error {
  override name = 'PhaseOneError';
}

export interface PhaseOneOptions {
  /** Width of the limits in sigmas (default 3). */
  L?: number;
  /** Maximum number of estimate-and-exclude passes (default 10). */
  maxIterations?: number;
  /** Nelson rules whose points are excluded (default [1]). */
  rules?: readonly NelsonRule[];
  /** Minimum number of baseline points that must remain (default 10). */
  minRemaining?: number;
}

export interface FrozenIndividualsLimits {
  kind: 'individuals-mr';
  center: number;
  sigma: number;
  L: number;
  ucl: number;
  lcl: number;
  mrCenter: number;
  mrUcl: number;
  /** Points in the baseline. */
  baselineN: number;
  /** Points used for the final estimate. */
  usedN: number;
  /** Baseline indices excluded, ascending. */
  excluded: number[];
  iterations: number;
  converged: boolean;
  /** When not converged: included points the final limits still flag (not excluded). */
  stillFlagged: number[];
  rules: NelsonRule[];
}

/** Phase I: estimate individuals/MR limits with iterative exclusion; see the module header. */
export function estimateIndividualsLimits(baseline: readonly number[], options: PhaseOneOptions = {}): FrozenIndividualsLimits {
  const L = options.L ?? 3;
  const maxIterations = options.maxIterations ?? 10;
  const rules = [...(options.rules ?? [1])] as NelsonRule[];
  const minRemaining = Math.max(2, options.minRemaining ?? 10);
  if (!(L > 0)) throw new StatsInputError('L must be positive');
  if (!(Number.isInteger(maxIterations) && maxIterations >= 1)) throw new StatsInputError('maxIterations must be a positive integer');
  assertFinite(baseline);
  const n = baseline.length;
  if (n < minRemaining) throw new PhaseOneError(`phase I needs at least ${minRemaining} baseline points, got ${n}`);
  const { d2, d3 } = shewhartConstants(2);
  const included = new Uint8Array(n).fill(1);
  let iterations = 0;
  let converged = false;
  let center = NaN;
  let sigma = NaN;
  let mrBar = NaN;
  let used = n;
  const stillFlagged: number[] = [];
  while (iterations < maxIterations) {
    iterations++;
    let sum = 0;
    let count = 0;
    let mrSum = 0;
    let mrCount = 0;
    for (let i = 0; i < n; i++) {
      if (!included[i]) continue;
      sum += baseline[i];
      count++;
      if (i > 0 && included[i - 1]) {
        mrSum += Math.abs(baseline[i] - baseline[i - 1]);
        mrCount++;
      }
    }
    if (count < minRemaining) throw new PhaseOneError(`phase I left only ${count} baseline points (need ${minRemaining})`);
    if (mrCount === 0) throw new PhaseOneError('phase I left no pair of consecutive baseline points for a moving range');
    center = sum / count;
    mrBar = mrSum / mrCount;
    sigma = mrBar / d2;
    used = count;
    if (!(sigma > 0)) throw new PhaseOneError('baseline moving ranges are all zero; sigma cannot be estimated');
    const idx: number[] = [];
    const xs: number[] = [];
    for (let i = 0; i < n; i++) if (included[i]) {
      idx.push(i);
      xs.push(baseline[i]);
    }
    // Rule 1 at L sigma: scale sigma so that the rule's 3σ test becomes an Lσ test.
    const flagged = nelsonRulesAtL(xs, center, sigma, L, rules);
    if (flagged.length === 0) {
      converged = true;
      break;
    }
    if (iterations === maxIterations) {
      // Out of passes: keep the estimate of this pass and report what it still flags.
      for (const j of flagged) stillFlagged.push(idx[j]);
      break;
    }
    for (const j of flagged) included[idx[j]] = 0;
  }
  const excluded: number[] = [];
  for (let i = 0; i < n; i++) if (!included[i]) excluded.push(i);
  return {
    kind: 'individuals-mr',
    center,
    sigma,
    L,
    ucl: center + L * sigma,
    lcl: center - L * sigma,
    mrCenter: mrBar,
    mrUcl: mrBar * (1 + (L * d3) / d2),
    baselineN: n,
    usedN: used,
    excluded,
    iterations,
    converged,
    stillFlagged,
    rules,
  };
}

function nelsonRulesAtL(xs: number[], center: number, sigma: number, L: number, rules: NelsonRule[]): number[] {
  const flagged = new Set<number>();
  const others = rules.filter((r) => r !== 1);
  if (rules.includes(1)) {
    for (let j = 0; j < xs.length; j++) if (Math.abs(xs[j] - center) > L * sigma) flagged.add(j);
  }
  if (others.length) for (const j of nelsonRules(xs, { center, sigma }, { rules: others }).flagged) flagged.add(j);
  return Array.from(flagged).sort((a, b) => a - b);
}

export interface PhaseTwoOptions {
  /** Nelson rules to apply to the new points (default all eight). */
  rules?: readonly NelsonRule[];
  /** Last value before the new points, so the first new point gets a moving range. */
  previous?: number;
}

export interface PhaseTwoResult {
  n: number;
  /** Indices (into the new points) beyond the frozen X limits. */
  outOfControl: number[];
  /** Indices whose moving range exceeds the frozen MR UCL. */
  mrOutOfControl: number[];
  nelson: NelsonResult;
}

/** Phase II: apply frozen individuals/MR limits (and run rules at the frozen centre and sigma). */
export function applyIndividualsLimits(frozen: FrozenIndividualsLimits, values: readonly number[], options: PhaseTwoOptions = {}): PhaseTwoResult {
  if (frozen.kind !== 'individuals-mr') throw new StatsInputError(`unsupported frozen limits kind ${String(frozen.kind)}`);
  assertFinite(values);
  const outOfControl: number[] = [];
  const mrOutOfControl: number[] = [];
  let prev = options.previous;
  if (prev !== undefined && !Number.isFinite(prev)) throw new StatsInputError('previous must be finite');
  for (let i = 0; i < values.length; i++) {
    const x = values[i];
    if (x > frozen.ucl || x < frozen.lcl) outOfControl.push(i);
    if (prev !== undefined && Math.abs(x - prev) > frozen.mrUcl) mrOutOfControl.push(i);
    prev = x;
  }
  const nelson = nelsonRules(values, { center: frozen.center, sigma: frozen.sigma }, { rules: options.rules });
  return { n: values.length, outOfControl, mrOutOfControl, nelson };
}
