import { describe, expect, it } from 'vitest';
import fc from 'fast-check';
import { ewmaChart } from '../../../src/stats/ewma.ts';
import { cusumChart } from '../../../src/stats/cusum.ts';
import { individualsChart } from '../../../src/stats/individualsChart.ts';

describe('EWMA: NIST/SEMATECH e-Handbook §6.3.2.4 worked example', () => {
  const data = [52.0, 47.0, 53.0, 49.3, 50.1, 47.0, 51.0, 50.1, 51.2, 50.5, 49.6, 47.6, 49.9, 51.3, 47.8, 51.2, 52.6, 52.4, 53.6, 52.1];
  // Published EWMA values (2 dp) and steady-state limits 52.5884 / 47.4115 (target 50, s = 2.0539, λ = 0.3, L = 3).
  const published = [50.6, 49.52, 50.56, 50.18, 50.16, 49.21, 49.75, 49.85, 50.26, 50.33, 50.11, 49.36, 49.52, 50.05, 49.38, 49.92, 50.73, 51.23, 51.94, 51.99];
  const chart = ewmaChart(data, { target: 50, sigma: 2.0539, lambda: 0.3, L: 3 });
  it('reproduces the published EWMA statistics to their 2 decimals', () => {
    chart.z.forEach((z, i) => expect(Math.abs(z - published[i]), `i = ${i}`).toBeLessThanOrEqual(0.005 + 1e-9));
  });
  it('reproduces the published steady-state limits (NIST prints 52.5884 / 47.4115 from the rounded factor 0.4201)', () => {
    expect(chart.steadyUcl).toBeCloseTo(52.58843, 4);
    expect(chart.steadyLcl).toBeCloseTo(47.41157, 4);
    expect(Math.abs(chart.steadyUcl - 52.5884)).toBeLessThan(1e-3);
  });
  it('no point signals (as published); the exact limits start narrow and widen to steady state', () => {
    expect(chart.signals).toEqual([]);
    expect(chart.runLength).toBeNull();
    // First limit: L·s·√(λ/(2−λ)·(1 − (1−λ)²)) = 3·2.0539·√(0.3/1.7·0.51) (formula of the same section).
    expect(chart.ucl[0] - 50).toBeCloseTo(3 * 2.0539 * Math.sqrt((0.3 / 1.7) * 0.51), 12);
    for (let i = 1; i < chart.n; i++) expect(chart.ucl[i]).toBeGreaterThan(chart.ucl[i - 1]);
    expect(chart.ucl[chart.n - 1]).toBeLessThan(chart.steadyUcl);
  });
});

describe('EWMA property: lambda = 1 is the individuals chart', () => {
  it('same statistics, limits and signals as the individuals chart with sigma = MR-bar/d2', () => {
    fc.assert(
      fc.property(fc.array(fc.double({ min: 20, max: 60, noNaN: true }), { minLength: 3, maxLength: 60 }), (xs) => {
        const ind = individualsChart(xs);
        fc.pre(ind.sigma > 1e-9);
        const ew = ewmaChart(xs, { target: ind.center, sigma: ind.sigma, lambda: 1, L: 3 });
        xs.forEach((x, i) => {
          expect(ew.z[i]).toBe(x);
          expect(ew.ucl[i]).toBeCloseTo(ind.ucl, 9);
          expect(ew.lcl[i]).toBeCloseTo(ind.lcl, 9);
        });
        expect(ew.signals).toEqual(ind.outOfControl);
      }),
      { numRuns: 200 },
    );
  });
});

describe('CUSUM: Lucas & Crosier (1982), Technometrics 24:199–205, Table 5', () => {
  // Initially out-of-control example, standardised observations, h = 5, k = 0.5; values as printed
  // (1 dp) in Lucas & Crosier's Table 5, reproduced in Six Sigma: Advanced Tools for Black Belts and
  // Master Black Belts (Wiley 2006), Table 24.1. Without FIR the first signal is at sample 7; with a
  // head start of 2.5 (h/2) at sample 3.
  const z = [0.8, 1.9, 1.4, 2.0, 1.1, 0.7, 2.6];
  it('without head start', () => {
    const c = cusumChart(z, { target: 0, sigma: 1, k: 0.5, h: 5 });
    [0.3, 1.7, 2.6, 4.1, 4.7, 4.9, 7.0].forEach((v, i) => expect(c.upper[i]).toBeCloseTo(v, 10));
    expect(c.firstSignal).toEqual({ index: 6, side: 'upper' });
    expect(c.runLength).toBe(7);
  });
  it('with FIR head start h/2 = 2.5', () => {
    const c = cusumChart(z, { target: 0, sigma: 1, k: 0.5, h: 5, headStart: 2.5 });
    [2.8, 4.2, 5.1, 6.6, 7.2, 7.4, 9.5].forEach((v, i) => expect(c.upper[i]).toBeCloseTo(v, 10));
    expect(c.upperSignals).toEqual([2, 3, 4, 5, 6]);
    expect(c.runLength).toBe(3);
  });
  it('works in data units: target and sigma standardise', () => {
    const c = cusumChart(z.map((v) => 40 + 2 * v), { target: 40, sigma: 2, k: 0.5, h: 5 });
    expect(c.upper[6]).toBeCloseTo(7.0, 10);
    expect(c.lower.every((v) => v === 0)).toBe(true);
  });
  it('rejects a head start at or above h', () => {
    expect(() => cusumChart(z, { target: 0, sigma: 1, h: 5, headStart: 5 })).toThrow(/headStart/);
  });
});
