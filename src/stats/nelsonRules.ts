// The eight run rules of Nelson, L.S. (1984), "The Shewhart control chart — tests for special causes",
// J. Quality Technology 16(4):237–239, applied to a series with a known centre line and sigma:
//   1  one point beyond 3σ
//   2  nine points in a row on the same side of the centre line
//   3  six points in a row steadily increasing or steadily decreasing
//   4  fourteen points in a row alternating up and down
//   5  two out of three points in a row beyond 2σ, on the same side
//   6  four out of five points in a row beyond 1σ, on the same side
//   7  fifteen points in a row within 1σ, either side
//   8  eight points in a row beyond 1σ, either side (none within 1σ)
// Choices the paper leaves open, fixed here:
//   - "Beyond kσ" is strict: |x − centre| > kσ. "Within 1σ" (rule 7) is its complement, |x − centre| ≤ σ.
//   - A point exactly on the centre line belongs to neither side and breaks a same-side run (rule 2).
//   - Equal neighbours (a zero difference) break a trend (rule 3) and an alternation (rule 4).
//   - Rule 8 does not require points on both sides; "either side" as in the rule text above.
//   - Each rule reports the index of the point that completes the pattern. A longer run reports every
//     point from the completing one on (ten in a row on one side report the 9th and the 10th). For
//     rules 5 and 6 the completing point is itself beyond the zone: a window whose last point is
//     inside the zone was already reported at an earlier point.
import { StatsInputError, assertFinite } from './descriptive.ts';

export type NelsonRule = 1 | 2 | 3 | 4 | 5 | 6 | 7 | 8;

export const NELSON_RULE_DESCRIPTIONS: Readonly<Record<NelsonRule, string>> = Object.freeze({
  1: 'one point beyond 3 sigma',
  2: 'nine points in a row on the same side of the centre line',
  3: 'six points in a row steadily increasing or decreasing',
  4: 'fourteen points in a row alternating up and down',
  5: 'two out of three points beyond 2 sigma on the same side',
  6: 'four out of five points beyond 1 sigma on the same side',
  7: 'fifteen points in a row within 1 sigma',
  8: 'eight points in a row beyond 1 sigma, either side',
});

export const ALL_NELSON_RULES: readonly NelsonRule[] = Object.freeze([1, 2, 3, 4, 5, 6, 7, 8]);

export interface NelsonLimits {
  center: number;
  sigma: number;
}

export interface NelsonOptions {
  /** Rules to apply (default all eight). */
  rules?: readonly NelsonRule[];
}

export interface NelsonRuleHit {
  rule: NelsonRule;
  description: string;
  /** Indices of the points completing the pattern, ascending. */
  indices: number[];
}

export interface NelsonResult {
  /** One entry per enabled rule, in rule order (indices may be empty). */
  hits: NelsonRuleHit[];
  /** Union of all indices that fired, ascending. */
  flagged: number[];
}

/** Apply Nelson's (1984) eight run rules (each switchable) to a series; see the module header. */
export function nelsonRules(values: readonly number[], limits: NelsonLimits, options: NelsonOptions = {}): NelsonResult {
  const { center, sigma } = limits;
  if (!Number.isFinite(center)) throw new StatsInputError('centre line must be finite');
  if (!(sigma > 0) || !Number.isFinite(sigma)) throw new StatsInputError('sigma must be positive and finite');
  assertFinite(values);
  const enabled = new Set<NelsonRule>(options.rules ?? ALL_NELSON_RULES);
  for (const r of enabled) if (!ALL_NELSON_RULES.includes(r)) throw new StatsInputError(`unknown Nelson rule ${String(r)}`);
  const on = (r: NelsonRule): boolean => enabled.has(r);
  const out: Record<NelsonRule, number[]> = { 1: [], 2: [], 3: [], 4: [], 5: [], 6: [], 7: [], 8: [] };
  const n = values.length;
  const z = new Float64Array(n);
  for (let i = 0; i < n; i++) z[i] = (values[i] - center) / sigma;
  let sideRun = 0;
  let prevSide = 0;
  let trendRun = 0;
  let prevDir = 0;
  let altRun = 0;
  let innerRun = 0;
  let outerRun = 0;
  const r1 = on(1), r2 = on(2), r3 = on(3), r4 = on(4), r5 = on(5), r6 = on(6), r7 = on(7), r8 = on(8);
  for (let i = 0; i < n; i++) {
    const zi = z[i];
    const a = Math.abs(zi);
    if (r1 && a > 3) out[1].push(i);
    // Rule 2: same-side run; a point on the centre line breaks it.
    const side = zi > 0 ? 1 : zi < 0 ? -1 : 0;
    sideRun = side === 0 ? 0 : side === prevSide ? sideRun + 1 : 1;
    prevSide = side;
    if (r2 && sideRun >= 9) out[2].push(i);
    // Rules 3 and 4 work on successive differences; a zero difference breaks both.
    if (i > 0) {
      const d = values[i] - values[i - 1];
      const dir = d > 0 ? 1 : d < 0 ? -1 : 0;
      trendRun = dir === 0 ? 0 : dir === prevDir ? trendRun + 1 : 1;
      altRun = dir === 0 ? 0 : dir === -prevDir ? altRun + 1 : 1;
      prevDir = dir;
      if (r3 && trendRun >= 5) out[3].push(i);
      if (r4 && altRun >= 13) out[4].push(i);
    }
    // Rule 5: 2 of the last 3 beyond 2σ on the side of the current point, which is itself beyond.
    if (r5 && a > 2 && i >= 1) {
      let c = 0;
      for (let j = Math.max(0, i - 2); j <= i; j++) if (side > 0 ? z[j] > 2 : z[j] < -2) c++;
      if (c >= 2) out[5].push(i);
    }
    // Rule 6: 4 of the last 5 beyond 1σ on the side of the current point, which is itself beyond.
    if (r6 && a > 1 && i >= 3) {
      let c = 0;
      for (let j = Math.max(0, i - 4); j <= i; j++) if (side > 0 ? z[j] > 1 : z[j] < -1) c++;
      if (c >= 4) out[6].push(i);
    }
    innerRun = a <= 1 ? innerRun + 1 : 0;
    outerRun = a > 1 ? outerRun + 1 : 0;
    if (r7 && innerRun >= 15) out[7].push(i);
    if (r8 && outerRun >= 8) out[8].push(i);
  }
  const hits: NelsonRuleHit[] = [];
  const flaggedSet = new Set<number>();
  for (const rule of ALL_NELSON_RULES) {
    if (!enabled.has(rule)) continue;
    hits.push({ rule, description: NELSON_RULE_DESCRIPTIONS[rule], indices: out[rule] });
    for (const i of out[rule]) flaggedSet.add(i);
  }
  const flagged = Array.from(flaggedSet).sort((x, y) => x - y);
  return { hits, flagged };
}
