// k-fold cross-validation (Stone 1974; Hastie, Tibshirani & Friedman, ESL 2nd ed., §7.10): every observation
// is held out exactly once, fold sizes differ by at most one, and a seed fixes the split.
import { describe, expect, it } from 'vitest';
import { crossValidate, crossValidateOls, CrossValidationError, kFoldAssignment } from '../../../src/stats/crossValidation.ts';
import { fitOls } from '../../../src/stats/ols.ts';
import { createRng } from '../../../src/stats/random.ts';

describe('kFoldAssignment', () => {
  it('balances folds, uses every fold, and is fixed by the seed', () => {
    const a = kFoldAssignment(103, 5, 42);
    const sizes = [0, 0, 0, 0, 0];
    a.forEach((f) => sizes[f]++);
    expect(Math.max(...sizes) - Math.min(...sizes)).toBeLessThanOrEqual(1);
    expect(sizes.reduce((s, v) => s + v, 0)).toBe(103);
    expect(kFoldAssignment(103, 5, 42)).toEqual(a);
    expect(kFoldAssignment(103, 5, 43)).not.toEqual(a);
  });

  it('k = n is leave-one-out', () => {
    const a = kFoldAssignment(12, 12, 1);
    expect([...a].sort((x, y) => x - y)).toEqual(Array.from({ length: 12 }, (_, i) => i));
  });

  it('rejects bad n and k', () => {
    expect(() => kFoldAssignment(1, 2, 0)).toThrow(CrossValidationError);
    expect(() => kFoldAssignment(10, 1, 0)).toThrow(CrossValidationError);
    expect(() => kFoldAssignment(10, 11, 0)).toThrow(CrossValidationError);
    expect(() => kFoldAssignment(10, 2.5, 0)).toThrow(CrossValidationError);
  });
});

describe('crossValidate', () => {
  const rng = createRng(77);
  const y = Array.from({ length: 50 }, () => 40 + 3 * rng.normal());

  it('with a training-mean predictor, matches a direct computation', () => {
    const cv = crossValidate({
      y,
      k: 5,
      seed: 9,
      fitPredict: (train, test) => {
        const m = train.reduce((s, i) => s + y[i], 0) / train.length;
        return test.map(() => m);
      },
    });
    // Direct: for each fold, mean of the other folds.
    let total = 0;
    for (let f = 0; f < 5; f++) {
      const inFold = cv.fold.map((g, i) => (g === f ? i : -1)).filter((i) => i >= 0);
      const out = cv.fold.map((g, i) => (g !== f ? i : -1)).filter((i) => i >= 0);
      const m = out.reduce((s, i) => s + y[i], 0) / out.length;
      const ss = inFold.reduce((s, i) => s + (y[i] - m) ** 2, 0);
      expect(cv.foldRmse[f]).toBeCloseTo(Math.sqrt(ss / inFold.length), 12);
      inFold.forEach((i) => expect(cv.predictions[i]).toBeCloseTo(m, 12));
      total += ss;
    }
    expect(cv.rmse).toBeCloseTo(Math.sqrt(total / y.length), 12);
    expect(cv.foldSizes).toEqual([10, 10, 10, 10, 10]);
  });

  it('gives the training and test indices as disjoint sets covering all rows', () => {
    crossValidate({
      y,
      k: 4,
      seed: 3,
      fitPredict: (train, test) => {
        const all = new Set([...train, ...test]);
        expect(all.size).toBe(y.length);
        expect(train.length + test.length).toBe(y.length);
        return test.map(() => 0);
      },
    });
  });

  it('same seed, same result; a wrong number of predictions is an error', () => {
    const fp = (train: readonly number[], test: readonly number[]) => test.map((i) => y[train[0]] + i * 0.01);
    expect(crossValidate({ y, k: 5, seed: 1, fitPredict: fp })).toEqual(crossValidate({ y, k: 5, seed: 1, fitPredict: fp }));
    expect(() => crossValidate({ y, k: 5, seed: 1, fitPredict: (_t, test) => test.slice(1).map(() => 0) })).toThrow(CrossValidationError);
    expect(() => crossValidate({ y, k: 5, seed: 1, fitPredict: (_t, test) => test.map(() => NaN) })).toThrow(/not finite/);
  });
});

describe('crossValidateOls', () => {
  it('equals crossValidate with an explicit OLS fit/predict, and is reproducible', () => {
    const rng = createRng(5);
    const X = Array.from({ length: 60 }, () => [rng.normal(), rng.normal(), rng.normal()]);
    const y = X.map(([a, b, c]) => 1 + 2 * a - b + 0.5 * c + 0.3 * rng.normal());
    const names = ['a', 'b', 'c'];
    const cv = crossValidateOls(X, y, { names, k: 5, seed: 123 });
    const manual = crossValidate({
      y,
      k: 5,
      seed: 123,
      fitPredict: (train, test) =>
        fitOls(train.map((i) => X[i]), train.map((i) => y[i]), { names }).predict(test.map((i) => X[i])).map((p) => p.fit),
    });
    expect(cv).toEqual(manual);
    expect(crossValidateOls(X, y, { names, k: 5, seed: 123 })).toEqual(cv);
    // The simulated noise SD is 0.3; with 4 coefficients and 48 training rows the CV RMSE stays near it.
    expect(cv.rmse).toBeGreaterThan(0.2);
    expect(cv.rmse).toBeLessThan(0.5);
  });
});
