// OLS: rank deficiency by name, input errors, and algebraic properties of least squares
// (Montgomery, Peck & Vining, Introduction to Linear Regression Analysis, 5th ed., §3.2: the residuals are
// orthogonal to every column of X; the LS fit does not depend on row order; with an intercept,
// adding a constant to y changes only the intercept).
import { describe, expect, it } from 'vitest';
import fc from 'fast-check';
import { fitOls, RankDeficientError, RegressionInputError } from '../../../src/stats/ols.ts';
import { createRng, permutation } from '../../../src/stats/random.ts';

/** A random design with correlated columns and a response, from a seed. */
function dataset(seed: number, n: number, p: number) {
  const rng = createRng(seed);
  const base = Array.from({ length: n }, () => rng.normal());
  const X = Array.from({ length: n }, (_, i) =>
    Array.from({ length: p }, (_, j) => 10 * (j + 1) + 0.5 * base[i] + rng.normal() * (j + 1)),
  );
  const y = X.map((row) => 3 + row.reduce((s, v, j) => s + (j % 2 ? -1 : 1) * 0.7 * v, 0) + rng.normal());
  const names = Array.from({ length: p }, (_, j) => `x${j + 1}`);
  return { X, y, names };
}

const relErr = (a: number, b: number, scale: number) => Math.abs(a - b) / Math.max(Math.abs(b), scale);

describe('rank deficiency is reported by name', () => {
  const { X, y } = dataset(1, 30, 3);

  it('a predictor that is a sum of two others', () => {
    // CMn = C + Mn exactly.
    const rows = X.map(([c, mn, si]) => [c, mn, si, c + mn]);
    try {
      fitOls(rows, y, { names: ['C', 'Mn', 'Si', 'CMn'] });
      expect.unreachable();
    } catch (e) {
      expect(e).toBeInstanceOf(RankDeficientError);
      const err = e as RankDeficientError;
      expect(err.rank).toBe(4);
      expect(err.collinear.map((c) => c.name)).toEqual(['CMn']);
      expect(err.collinear[0].with.map((w) => w.name).sort()).toEqual(['C', 'Mn']);
      for (const w of err.collinear[0].with) expect(w.coefficient).toBeCloseTo(1, 8);
      expect(err.names.sort()).toEqual(['C', 'CMn', 'Mn']);
      expect(err.message).toMatch(/CMn/);
    }
  });

  it('a constant predictor collides with the intercept; without an intercept it does not', () => {
    const rows = X.map(([a, b]) => [a, 0.012, b]);
    const err = (() => {
      try {
        fitOls(rows, y, { names: ['C', 'B', 'Mn'] });
      } catch (e) {
        return e as RankDeficientError;
      }
      throw new Error('expected a RankDeficientError');
    })();
    expect(err).toBeInstanceOf(RankDeficientError);
    expect(err.collinear).toHaveLength(1);
    expect(err.collinear[0].name).toBe('B');
    expect(err.collinear[0].with).toEqual([{ name: '(Intercept)', coefficient: expect.closeTo(0.012, 12) }]);
    expect(() => fitOls(rows, y, { names: ['C', 'B', 'Mn'], intercept: false })).not.toThrow();
  });

  it('two duplicated pairs are both reported', () => {
    const rows = X.map(([a, b, c]) => [a, b, a, c, 2 * c]);
    try {
      fitOls(rows, y, { names: ['Ni', 'Cr', 'Ni2', 'Mo', 'Mo2'] });
      expect.unreachable();
    } catch (e) {
      const err = e as RankDeficientError;
      expect(err.collinear.map((c) => c.name)).toEqual(['Ni2', 'Mo2']);
      expect(err.collinear[0].with.map((w) => w.name)).toEqual(['Ni']);
      expect(err.collinear[1].with.map((w) => w.name)).toEqual(['Mo']);
    }
  });
});

describe('input errors', () => {
  const { X, y, names } = dataset(2, 10, 2);
  it('rejects bad shapes, non-finite values, too few rows and reserved names', () => {
    expect(() => fitOls(X, y.slice(1), { names })).toThrow(RegressionInputError);
    expect(() => fitOls(X, y, { names: ['a'] })).toThrow(RegressionInputError);
    expect(() => fitOls(X, y, { names: ['a', 'a'] })).toThrow(/unique/);
    expect(() => fitOls(X, y, { names: ['(Intercept)', 'b'] })).toThrow(/reserved/);
    expect(() => fitOls(X.slice(0, 3), y.slice(0, 3), { names })).toThrow(/more observations/);
    const bad = X.map((r) => [...r]);
    bad[4][1] = NaN;
    expect(() => fitOls(bad, y, { names })).toThrow(/x2.*non-finite/);
    expect(() => fitOls(X, y.map((v, i) => (i === 2 ? Infinity : v)), { names })).toThrow(/y has a non-finite/);
    expect(() => fitOls(X, y, { names }).predict([[1, 2]], { level: 1 })).toThrow(RangeError);
    expect(() => fitOls(X, y, { names }).predict([[1, 2, 3]])).toThrow(RegressionInputError);
  });

  it('an intercept-only model gives the mean, its SE s/√n, and no F test', () => {
    // Mean and standard error of the mean (any statistics text).
    const fit = fitOls(y.map(() => []), y, { names: [] });
    const n = y.length;
    const mean = y.reduce((a, b) => a + b, 0) / n;
    const sd = Math.sqrt(y.reduce((a, b) => a + (b - mean) ** 2, 0) / (n - 1));
    expect(fit.coefficients[0].estimate).toBeCloseTo(mean, 12);
    expect(fit.coefficients[0].standardError).toBeCloseTo(sd / Math.sqrt(n), 12);
    expect(Number.isNaN(fit.fStatistic)).toBe(true);
  });
});

describe('intervals', () => {
  it('the prediction interval contains the confidence interval, and both shrink as the level falls', () => {
    const { X, y, names } = dataset(3, 40, 3);
    const fit = fitOls(X, y, { names });
    const [p95] = fit.predict([X[0]]);
    const [p80] = fit.predict([X[0]], { level: 0.8 });
    expect(p95.prediction.lower).toBeLessThan(p95.confidence.lower);
    expect(p95.prediction.upper).toBeGreaterThan(p95.confidence.upper);
    expect(p80.confidence.upper - p80.confidence.lower).toBeLessThan(p95.confidence.upper - p95.confidence.lower);
    // At a training row, se(fit) = s·√h (Montgomery, Peck & Vining §3.4).
    const withDiag = fitOls(X, y, { names, diagnostics: true });
    expect(p95.seFit).toBeCloseTo(fit.sigma * Math.sqrt(withDiag.diagnostics!.leverage[0]), 12);
    expect(p95.fit).toBeCloseTo(fit.fitted[0], 10);
  });
});

describe('properties (fast-check)', () => {
  const shape = fc.record({
    seed: fc.integer({ min: 0, max: 1_000_000 }),
    p: fc.integer({ min: 1, max: 5 }),
    extra: fc.integer({ min: 2, max: 30 }),
  });

  it('the fit is invariant to row permutation', () => {
    fc.assert(
      fc.property(shape, fc.integer(), ({ seed, p, extra }, permSeed) => {
        const { X, y, names } = dataset(seed, p + 1 + extra, p);
        const perm = permutation(y.length, createRng(permSeed));
        const a = fitOls(X, y, { names });
        const b = fitOls(Array.from(perm, (i) => X[i]), Array.from(perm, (i) => y[i]), { names });
        a.coefficients.forEach((c, j) => {
          const d = b.coefficients[j];
          expect(relErr(d.estimate, c.estimate, c.standardError)).toBeLessThan(1e-9);
          expect(relErr(d.standardError, c.standardError, 0)).toBeLessThan(1e-9);
        });
        expect(relErr(b.rss, a.rss, 0)).toBeLessThan(1e-9);
        perm.forEach((i, k) => expect(Math.abs(b.residuals[k] - a.residuals[i])).toBeLessThan(1e-9 * a.sigma));
      }),
      { numRuns: 60 },
    );
  });

  it('adding c to y shifts only the intercept, by c', () => {
    fc.assert(
      fc.property(shape, fc.double({ min: -1e4, max: 1e4, noNaN: true }), ({ seed, p, extra }, c) => {
        const { X, y, names } = dataset(seed, p + 1 + extra, p);
        const a = fitOls(X, y, { names });
        const b = fitOls(X, y.map((v) => v + c), { names });
        const scale = Math.max(1, Math.abs(c));
        expect(Math.abs(b.coefficients[0].estimate - a.coefficients[0].estimate - c)).toBeLessThan(1e-9 * scale * Math.max(1, Math.abs(a.coefficients[0].estimate)));
        for (let j = 1; j < a.coefficients.length; j++) {
          expect(Math.abs(b.coefficients[j].estimate - a.coefficients[j].estimate)).toBeLessThan(1e-8 * scale * a.coefficients[j].standardError + 1e-12);
          expect(relErr(b.coefficients[j].standardError, a.coefficients[j].standardError, 0)).toBeLessThan(1e-8);
        }
        expect(relErr(b.rss, a.rss, 0)).toBeLessThan(1e-7);
      }),
      { numRuns: 60 },
    );
  });

  it('residuals are orthogonal to every column of X (and sum to zero with an intercept)', () => {
    fc.assert(
      fc.property(shape, fc.boolean(), ({ seed, p, extra }, intercept) => {
        const { X, y, names } = dataset(seed, p + 1 + extra, p);
        const fit = fitOls(X, y, { names, intercept });
        const eNorm = Math.sqrt(fit.residuals.reduce((s, e) => s + e * e, 0));
        const cols = intercept ? [y.map(() => 1), ...names.map((_, j) => X.map((r) => r[j]))] : names.map((_, j) => X.map((r) => r[j]));
        for (const col of cols) {
          const dot = col.reduce((s, v, i) => s + v * fit.residuals[i], 0);
          const colNorm = Math.sqrt(col.reduce((s, v) => s + v * v, 0));
          expect(Math.abs(dot)).toBeLessThan(1e-12 * colNorm * Math.max(eNorm, 1e-300) * y.length + 1e-300);
        }
      }),
      { numRuns: 80 },
    );
  });
});
