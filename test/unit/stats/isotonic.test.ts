import { describe, expect, it } from 'vitest';
import fc from 'fast-check';
import { readFileSync } from 'node:fs';
import { isMonotone, isotonicRegression, IsotonicInputError } from '../../../src/stats/isotonic.ts';

interface RefCase {
  direction: 'non-increasing' | 'non-decreasing';
  y: number[];
  w: number[];
  fitted: number[];
  weightedSse: number;
}
// Reference: scipy 1.10.1 scipy.optimize.lsq_linear (bounded least squares, not PAVA); generator
// test/reference/isotonic_reference.py, versions recorded in the fixture.
const ref = JSON.parse(readFileSync(new URL('../../reference/isotonic.json', import.meta.url), 'utf8')) as {
  versions: Record<string, string>;
  cases: RefCase[];
};

describe('isotonicRegression (weighted PAVA; Ayer et al. 1955, Barlow et al. 1972)', () => {
  it('fixture records the library versions used', () => {
    expect(ref.versions.scipy).toBe('1.10.1');
    expect(ref.cases.length).toBeGreaterThanOrEqual(10);
  });

  for (const [i, c] of ref.cases.entries()) {
    it(`matches scipy bounded least squares, case ${i} (${c.direction}, n=${c.y.length})`, () => {
      // Reference: scipy.optimize.lsq_linear bvls solution of the same constrained problem.
      const r = isotonicRegression(c.y, { direction: c.direction, weights: c.w });
      r.fitted.forEach((f, k) => expect(f).toBeCloseTo(c.fitted[k], 8));
      expect(r.weightedSse).toBeCloseTo(c.weightedSse, 8);
    });
  }

  it('pools a single violation to the weighted mean (definition of the L2 projection, Barlow et al. 1972 §1.2)', () => {
    // Data 10, 12 with weights 1, 3 violate "non-increasing"; the pooled value is (10*1 + 12*3)/4.
    const r = isotonicRegression([10, 12], { weights: [1, 3] });
    expect(r.fitted).toEqual([11.5, 11.5]);
    expect(r.blocks).toEqual([{ start: 0, end: 1, value: 11.5, weight: 4 }]);
    expect(r.alreadyMonotone).toBe(false);
  });

  it('leaves already monotone data unchanged', () => {
    const y = [50, 48, 48, 40, 31];
    const r = isotonicRegression(y);
    expect(r.fitted).toEqual(y);
    expect(r.alreadyMonotone).toBe(true);
    expect(r.weightedSse).toBe(0);
  });

  it('rejects empty input, non-finite values and non-positive weights', () => {
    expect(() => isotonicRegression([])).toThrow(IsotonicInputError);
    expect(() => isotonicRegression([1, Number.NaN])).toThrow(/index 1/);
    expect(() => isotonicRegression([1, 2], { weights: [1] })).toThrow(/2 values but 1 weights/);
    expect(() => isotonicRegression([1, 2], { weights: [1, 0] })).toThrow(/positive/);
  });

  const dataArb = fc
    .integer({ min: 1, max: 25 })
    .chain((n) =>
      fc.tuple(
        fc.array(fc.double({ min: -100, max: 100, noNaN: true }), { minLength: n, maxLength: n }),
        fc.array(fc.double({ min: 0.05, max: 10, noNaN: true }), { minLength: n, maxLength: n }),
        fc.constantFrom<'non-increasing' | 'non-decreasing'>('non-increasing', 'non-decreasing'),
      ),
    );

  it('property: output is monotone in the requested direction', () => {
    fc.assert(
      fc.property(dataArb, ([y, w, direction]) => {
        const r = isotonicRegression(y, { weights: w, direction });
        return isMonotone(r.fitted, direction, 1e-9);
      }),
    );
  });

  it('property: no other monotone fit tried is closer in weighted SSE (optimality of the projection)', () => {
    const sse = (y: number[], w: number[], f: number[]) => y.reduce((s, v, i) => s + w[i] * (v - f[i]) ** 2, 0);
    fc.assert(
      fc.property(
        dataArb,
        fc.array(fc.double({ min: 0, max: 20, noNaN: true }), { minLength: 25, maxLength: 25 }),
        fc.double({ min: -100, max: 100, noNaN: true }),
        ([y, w, direction], steps, start) => {
          const r = isotonicRegression(y, { weights: w, direction });
          const best = sse(y, w, r.fitted);
          // Competitors: a random monotone staircase, the constant weighted mean, and small
          // monotone-preserving perturbations of the PAVA fit itself.
          const s = direction === 'non-increasing' ? -1 : 1;
          const stair = y.map((_, i) => start + s * steps.slice(0, i).reduce((a, b) => a + b, 0));
          const wm = y.reduce((a, v, i) => a + v * w[i], 0) / w.reduce((a, b) => a + b, 0);
          const flat = y.map(() => wm);
          const shifted = r.fitted.map((f) => f + 0.01);
          const scaled = r.fitted.map((f) => f * 0.99);
          for (const other of [stair, flat, shifted, scaled]) {
            if (!isMonotone(other, direction, 1e-12)) continue;
            if (sse(y, w, other) < best - 1e-7 * (1 + best)) return false;
          }
          return true;
        },
      ),
    );
  });

  it('property: the fit preserves the weighted mean of each block (first-order optimality)', () => {
    fc.assert(
      fc.property(dataArb, ([y, w, direction]) => {
        const r = isotonicRegression(y, { weights: w, direction });
        return r.blocks.every((b) => {
          let sw = 0;
          let swy = 0;
          for (let i = b.start; i <= b.end; i++) {
            sw += w[i];
            swy += w[i] * y[i];
          }
          return Math.abs(swy / sw - b.value) <= 1e-9 * (1 + Math.abs(b.value));
        });
      }),
    );
  });
});
