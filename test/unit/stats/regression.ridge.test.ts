// Ridge regression: limiting cases and properties from Hoerl & Kennard (1970) and Golub, Heath & Wahba (1979):
// λ = 0 gives OLS; λ → ∞ shrinks every slope to 0 (intercept → ȳ); tr H(λ) falls from p (+1) towards 1;
// identical predictors share their coefficient equally (the ridge solution is unique and symmetric).
import { describe, expect, it } from 'vitest';
import { fitRidge } from '../../../src/stats/ridge.ts';
import { fitOls, RegressionInputError } from '../../../src/stats/ols.ts';
import { createRng } from '../../../src/stats/random.ts';

function dataset(seed: number, n: number) {
  const rng = createRng(seed);
  const X = Array.from({ length: n }, () => {
    const c = 0.2 + 0.015 * rng.normal();
    const mn = 0.8 + 0.05 * rng.normal();
    const cr = 0.5 + 0.6 * (mn - 0.8) + 0.02 * rng.normal();
    return [c, mn, cr, 7.5 + 0.7 * rng.normal()];
  });
  const y = X.map(([c, mn, cr, g]) => 10 + 90 * c + 9 * mn + 14 * cr - 0.5 * g + rng.normal());
  return { X, y, names: ['C', 'Mn', 'Cr', 'GrainSize'] };
}

describe('fitRidge', () => {
  const { X, y, names } = dataset(4, 80);

  it('λ = 0 reproduces OLS', () => {
    const ridge = fitRidge(X, y, { names, lambda: 0 });
    const ols = fitOls(X, y, { names });
    ridge.coefficients.forEach((c, j) => {
      expect(Math.abs(c.estimate - ols.coefficients[j].estimate)).toBeLessThan(1e-6 * ols.coefficients[j].standardError);
    });
    expect(ridge.effectiveDf).toBeCloseTo(5, 12);
    expect(ridge.rss).toBeCloseTo(ols.rss, 8);
  });

  it('λ = 0 without an intercept reproduces OLS through the origin', () => {
    const ridge = fitRidge(X, y, { names, lambda: 0, intercept: false });
    const ols = fitOls(X, y, { names, intercept: false });
    ridge.coefficients.forEach((c, j) => expect(c.estimate).toBeCloseTo(ols.coefficients[j].estimate, 6));
    expect(ridge.terms).toEqual(names);
    expect(ridge.effectiveDf).toBeCloseTo(4, 12);
  });

  it('a huge λ shrinks slopes to zero and the intercept to the mean', () => {
    const fit = fitRidge(X, y, { names, lambda: 1e14 });
    const mean = y.reduce((a, b) => a + b, 0) / y.length;
    for (const c of fit.coefficients.slice(1)) expect(Math.abs(c.estimate)).toBeLessThan(1e-8);
    expect(fit.coefficients[0].estimate).toBeCloseTo(mean, 6);
    expect(fit.effectiveDf).toBeCloseTo(1, 8);
  });

  it('effective df decreases with λ and RSS increases', () => {
    const lambdas = [0, 0.1, 1, 10, 100, 1000];
    const fits = lambdas.map((lambda) => fitRidge(X, y, { names, lambda }));
    for (let i = 1; i < fits.length; i++) {
      expect(fits[i].effectiveDf).toBeLessThan(fits[i - 1].effectiveDf);
      expect(fits[i].rss).toBeGreaterThan(fits[i - 1].rss);
    }
  });

  it('RSS, GCV and predictions agree with a direct computation from the coefficients', () => {
    const fit = fitRidge(X, y, { names, lambda: 3 });
    const pred = fit.predict(X);
    const rss = pred.reduce((s, v, i) => s + (y[i] - v) ** 2, 0);
    expect(fit.rss).toBeCloseTo(rss, 9);
    expect(fit.gcv).toBeCloseTo((y.length * rss) / (y.length - fit.effectiveDf) ** 2, 9);
    expect(fit.sigma).toBeCloseTo(Math.sqrt(rss / (y.length - fit.effectiveDf)), 12);
  });

  it('GCV selection returns the minimum of its own path, refined', () => {
    const fit = fitRidge(X, y, { names, lambda: 'gcv' });
    const path = fit.gcvPath!;
    expect(path).toHaveLength(61);
    expect(fit.gcv).toBeLessThanOrEqual(Math.min(...path.map((g) => g.gcv)));
    // At the returned λ the criterion is locally minimal.
    const at = (lambda: number) => fitRidge(X, y, { names, lambda }).gcv;
    expect(at(fit.lambda * 1.01)).toBeGreaterThanOrEqual(fit.gcv);
    expect(at(fit.lambda / 1.01)).toBeGreaterThanOrEqual(fit.gcv);
  });

  it('flags a GCV minimum at the edge of the search range', () => {
    const fit = fitRidge(X, y, { names, lambda: 'gcv', lambdaRange: [1e6, 1e9] });
    expect(fit.lambdaAtBoundary).toBe(true);
  });

  it('copes with exactly collinear predictors, splitting the effect equally between twins', () => {
    const twins = X.map(([c, mn]) => [c, mn, mn]);
    const fit = fitRidge(twins, y, { names: ['C', 'Mn', 'Mn2'], lambda: 2 });
    expect(fit.coefficients[2].estimate).toBeCloseTo(fit.coefficients[3].estimate, 9);
    expect(Math.abs(fit.coefficients[2].estimate)).toBeGreaterThan(1);
    const rss = fit.predict(twins).reduce((s, v, i) => s + (y[i] - v) ** 2, 0);
    expect(fit.rss).toBeCloseTo(rss, 9);
    expect(fit.effectiveDf).toBeLessThan(3); // intercept + at most two independent directions
  });

  it('works when there are more predictors than observations', () => {
    const rng = createRng(8);
    const wide = Array.from({ length: 6 }, () => Array.from({ length: 10 }, () => rng.normal()));
    const yw = wide.map((r) => r[0] - r[3] + 0.1 * rng.normal());
    const fit = fitRidge(wide, yw, { names: Array.from({ length: 10 }, (_, j) => `x${j}`), lambda: 0.5 });
    expect(fit.effectiveDf).toBeLessThan(6);
    const rss = fit.predict(wide).reduce((s, v, i) => s + (yw[i] - v) ** 2, 0);
    expect(fit.rss).toBeCloseTo(rss, 9);
  });

  it('rejects constant predictors, bad λ and bad shapes', () => {
    expect(() => fitRidge(X.map((r) => [r[0], 1]), y, { names: ['C', 'K'], lambda: 1 })).toThrow(/K is constant/);
    expect(() => fitRidge(X, y, { names, lambda: -1 })).toThrow(RangeError);
    expect(() => fitRidge(X, y.slice(1), { names, lambda: 1 })).toThrow(RegressionInputError);
    expect(() => fitRidge(X, y, { names, lambda: 'gcv', lambdaRange: [5, 1] })).toThrow(RangeError);
  });
});
