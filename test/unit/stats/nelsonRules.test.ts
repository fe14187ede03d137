import { describe, expect, it } from 'vitest';
import fc from 'fast-check';
import { nelsonRules, type NelsonRule } from '../../../src/stats/nelsonRules.ts';

// Rule definitions: Nelson (1984), J. Quality Technology 16(4):237–239. Tie-breaking choices are the
// module's documented ones (strict "beyond", centre-line points and equal neighbours break runs).
const lim = { center: 0, sigma: 1 };
const only = (values: number[], rule: NelsonRule) => nelsonRules(values, lim, { rules: [rule] }).hits[0].indices;
const alternating = (n: number, a: number) => Array.from({ length: n }, (_, i) => (i % 2 ? -a : a));

describe('Nelson rules on constructed series', () => {
  it('rule 1: beyond 3 sigma, strict', () => {
    expect(only([0, 0, 3.0001, -3.5, 3, -3], 1)).toEqual([2, 3]);
  });
  it('rule 2: nine on one side; a centre-line point breaks the run', () => {
    expect(only(Array(9).fill(0.5), 2)).toEqual([8]);
    expect(only(Array(10).fill(-0.5), 2)).toEqual([8, 9]);
    expect(only([...Array(5).fill(0.5), 0, ...Array(5).fill(0.5)], 2)).toEqual([]);
    expect(only(Array(8).fill(0.5), 2)).toEqual([]);
  });
  it('rule 3: six steadily increasing or decreasing; equal neighbours break it', () => {
    expect(only([0, 0.1, 0.2, 0.3, 0.4, 0.5], 3)).toEqual([5]);
    expect(only([0.5, 0.4, 0.3, 0.2, 0.1, 0, -0.1], 3)).toEqual([5, 6]);
    expect(only([0, 0.1, 0.2, 0.2, 0.3, 0.4, 0.5], 3)).toEqual([]);
  });
  it('rule 4: fourteen alternating; a zero difference breaks it', () => {
    expect(only(alternating(14, 0.3), 4)).toEqual([13]);
    expect(only(alternating(13, 0.3), 4)).toEqual([]);
    const broken = alternating(15, 0.3);
    broken[7] = broken[6];
    expect(only(broken, 4)).toEqual([]);
  });
  it('rule 5: two of three beyond 2 sigma on the same side', () => {
    expect(only([2.5, 0, 2.5], 5)).toEqual([2]);
    expect(only([2.5, 2.1], 5)).toEqual([1]);
    expect(only([2.5, 0, -2.5], 5)).toEqual([]);
    expect(only([2.5, 0, 0, 2.5], 5)).toEqual([]);
    expect(only([-2.5, 2.9, -2.01], 5)).toEqual([2]);
    expect(only([2, 0, 2.5], 5)).toEqual([]); // exactly 2 sigma is not beyond
  });
  it('rule 6: four of five beyond 1 sigma on the same side', () => {
    expect(only([1.5, 1.5, 0, 1.5, 1.5], 6)).toEqual([4]);
    expect(only([1.5, 1.5, 0, 1.5, 1.0], 6)).toEqual([]); // exactly 1 sigma is not beyond
    expect(only([-1.5, -1.5, -1.5, -1.5], 6)).toEqual([3]);
  });
  it('rule 7: fifteen within 1 sigma (a point at exactly 1 sigma counts as within)', () => {
    const v = alternating(15, 0.5);
    v[4] = 1;
    expect(only(v, 7)).toEqual([14]);
    v[4] = 1.01;
    expect(only(v, 7)).toEqual([]);
  });
  it('rule 8: eight beyond 1 sigma, either side', () => {
    expect(only(alternating(8, 1.5), 8)).toEqual([7]);
    expect(only([...alternating(7, 1.5), 0.5], 8)).toEqual([]);
  });
  it('rules are switchable and the union is reported', () => {
    const v = [0, 4, ...Array(9).fill(0.5)];
    const all = nelsonRules(v, lim);
    expect(all.hits.map((h) => h.rule)).toEqual([1, 2, 3, 4, 5, 6, 7, 8]);
    const some = nelsonRules(v, lim, { rules: [2] });
    expect(some.hits).toHaveLength(1);
    expect(some.flagged).toEqual([9, 10]); // points 1..9 and 2..10 are both nine on one side
    expect(all.flagged).toContain(1);
  });
  it('rejects a non-positive sigma', () => {
    expect(() => nelsonRules([1, 2], { center: 0, sigma: 0 })).toThrow(/sigma/);
  });
});

// Property: the O(n) implementation agrees with a literal window-by-window reading of each rule.
function naive(values: number[], c: number, s: number): Record<NelsonRule, number[]> {
  const z = values.map((x) => (x - c) / s);
  const out: Record<NelsonRule, number[]> = { 1: [], 2: [], 3: [], 4: [], 5: [], 6: [], 7: [], 8: [] };
  const win = (i: number, len: number) => (i + 1 >= len ? z.slice(i + 1 - len, i + 1) : null);
  for (let i = 0; i < z.length; i++) {
    if (Math.abs(z[i]) > 3) out[1].push(i);
    const w9 = win(i, 9);
    if (w9 && (w9.every((v) => v > 0) || w9.every((v) => v < 0))) out[2].push(i);
    const w6 = win(i, 6);
    if (w6) {
      const d = w6.slice(1).map((v, j) => v - w6[j]);
      if (d.every((x) => x > 0) || d.every((x) => x < 0)) out[3].push(i);
    }
    const w14 = win(i, 14);
    if (w14) {
      const d = w14.slice(1).map((v, j) => v - w14[j]);
      if (d.every((x, j) => x !== 0 && (j === 0 || Math.sign(x) === -Math.sign(d[j - 1])))) out[4].push(i);
    }
    const w3 = z.slice(Math.max(0, i - 2), i + 1);
    if ((z[i] > 2 && w3.filter((v) => v > 2).length >= 2) || (z[i] < -2 && w3.filter((v) => v < -2).length >= 2)) out[5].push(i);
    const w5 = z.slice(Math.max(0, i - 4), i + 1);
    if ((z[i] > 1 && w5.filter((v) => v > 1).length >= 4) || (z[i] < -1 && w5.filter((v) => v < -1).length >= 4)) out[6].push(i);
    const w15 = win(i, 15);
    if (w15 && w15.every((v) => Math.abs(v) <= 1)) out[7].push(i);
    const w8 = win(i, 8);
    if (w8 && w8.every((v) => Math.abs(v) > 1)) out[8].push(i);
  }
  return out;
}

describe('Nelson rules: property against a literal reading of the rules', () => {
  it('agrees on random series (with ties and centre-line points)', () => {
    const value = fc.oneof(fc.integer({ min: -7, max: 7 }).map((k) => k / 2), fc.double({ min: -4, max: 4, noNaN: true }));
    fc.assert(
      fc.property(fc.array(value, { minLength: 0, maxLength: 80 }), (xs) => {
        const got = nelsonRules(xs, lim);
        const want = naive(xs, 0, 1);
        for (const h of got.hits) expect(h.indices, `rule ${h.rule}`).toEqual(want[h.rule]);
      }),
      { numRuns: 400 },
    );
  });
});
