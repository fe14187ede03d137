// Censored-normal MLE (Cohen 1959) by EM against a direct numerical maximisation of the likelihood with
// scipy.optimize (test/reference/censored_normal_reference.py, scipy 1.10.1).
import { readFileSync } from 'node:fs';
import { describe, expect, it } from 'vitest';
import { censoredNormalFit, type Censoring } from '../../../src/stats/censoredNormal.ts';

const fixture = JSON.parse(readFileSync(new URL('../../reference/censored_normal.json', import.meta.url), 'utf8')) as {
  cases: Array<{ name: string; values: number[]; censoring: Censoring[]; mean: number; sigmaMle: number; logLikelihood: number }>;
};

describe('censoredNormalFit', () => {
  for (const c of fixture.cases) {
    it(`${c.name}: the scipy maximum-likelihood estimate`, () => {
      const fit = censoredNormalFit(c.values, c.censoring);
      expect(fit.mean).toBeCloseTo(c.mean, 6);
      expect(fit.sigmaMle).toBeCloseTo(c.sigmaMle, 6);
      expect(fit.logLikelihood).toBeCloseTo(c.logLikelihood, 6);
    });
  }

  it('with nothing censored: the sample mean and the sample SD (n − 1)', () => {
    const values = [41, 43, 44, 44, 45, 47];
    const fit = censoredNormalFit(values, values.map(() => null));
    const mean = values.reduce((a, b) => a + b, 0) / values.length;
    expect(fit.mean).toBeCloseTo(mean, 10);
    expect(fit.sd).toBeCloseTo(Math.sqrt(values.reduce((s, x) => s + (x - mean) ** 2, 0) / (values.length - 1)), 9);
  });

  it('a value known only to lie below 20 pulls the mean under what taking it as 20 would give', () => {
    const values = [20, 20, 21, 22, 22, 23, 24, 25];
    const censoring: Censoring[] = ['below', 'below', null, null, null, null, null, null];
    const fit = censoredNormalFit(values, censoring);
    expect(fit.mean).toBeLessThan(values.reduce((a, b) => a + b, 0) / values.length);
    expect(fit).toMatchObject({ below: 2, above: 0 });
  });

  it('refuses a sample with fewer than two values that are not bounds', () => {
    expect(() => censoredNormalFit([20, 20, 21], ['below', 'below', null])).toThrow(/at least 2/);
  });
});
