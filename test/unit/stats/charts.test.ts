import { describe, expect, it } from 'vitest';
import { individualsChart } from '../../../src/stats/individualsChart.ts';
import { xbarRChart, xbarSChart } from '../../../src/stats/subgroupCharts.ts';
import { StatsInputError } from '../../../src/stats/descriptive.ts';

describe('individuals and moving-range chart (ASTM E2587; Montgomery §6.4)', () => {
  // Hand computation: MRs 2, 1, 4, 2 → MR-bar 2.25; σ̂ = MR-bar/d2(2), d2(2) = 2/√π exactly.
  const x = [10, 12, 11, 15, 13];
  const c = individualsChart(x);
  it('centre, sigma and limits', () => {
    expect(c.center).toBeCloseTo(12.2, 12);
    expect(c.mrBar).toBeCloseTo(2.25, 12);
    expect(c.sigma).toBeCloseTo(2.25 / (2 / Math.sqrt(Math.PI)), 12);
    expect(c.ucl).toBeCloseTo(12.2 + 3 * c.sigma, 12);
    expect(c.movingRanges).toEqual([2, 1, 4, 2]);
  });
  it('MR UCL is D4(2)·MR-bar with D4(2) printed 3.267 (ASTM E2587 Table 1), to the printed precision', () => {
    expect(Math.abs(c.mrUcl / c.mrBar - 3.267)).toBeLessThan(0.0005);
    expect(c.mrLcl).toBe(0);
  });
  it('flags points strictly beyond the limits and large moving ranges', () => {
    const y = [0, 0.1, -0.1, 0.05, 0, 5, 0, 0.1];
    const ch = individualsChart(y);
    expect(ch.outOfControl).toEqual([5]);
    expect(ch.mrOutOfControl).toEqual([5, 6]);
    const known = individualsChart([0, 3, -3, 3.0000001], { center: 0, sigma: 1 });
    expect(known.outOfControl).toEqual([3]);
    expect(known.sigmaSource).toBe('given');
  });
  it('rejects fewer than 2 points and non-finite values', () => {
    expect(() => individualsChart([1])).toThrow(StatsInputError);
    expect(() => individualsChart([1, NaN])).toThrow(StatsInputError);
  });
});

describe('X-bar/R and X-bar/S, equal sizes: tabled-constant limits (ASTM E2587; Montgomery §6.2–6.3)', () => {
  const groups = [
    [74.03, 74.002, 74.019, 73.992, 74.008],
    [73.995, 73.992, 74.001, 74.011, 74.004],
    [73.988, 74.024, 74.021, 74.005, 74.002],
    [74.002, 73.996, 73.993, 74.015, 74.009],
    [73.992, 74.007, 74.015, 73.989, 74.014],
    [74.009, 73.994, 73.997, 73.985, 73.993],
  ];
  const means = groups.map((g) => g.reduce((a, b) => a + b, 0) / 5);
  const grand = means.reduce((a, b) => a + b, 0) / means.length;
  const ranges = groups.map((g) => Math.max(...g) - Math.min(...g));
  const rBar = ranges.reduce((a, b) => a + b, 0) / ranges.length;
  it('X-bar/R: x̿ ± A2·R-bar and D3·R-bar..D4·R-bar with printed A2(5) = 0.577, D4(5) = 2.114', () => {
    const c = xbarRChart(groups);
    expect(c.center).toBeCloseTo(grand, 12);
    expect(c.dispersionBar).toBeCloseTo(rBar, 12);
    for (let i = 0; i < groups.length; i++) {
      expect(Math.abs(c.ucl[i] - (grand + 0.577 * rBar))).toBeLessThanOrEqual(0.0005 * rBar);
      expect(Math.abs(c.dispersionUcl[i] - 2.114 * rBar)).toBeLessThanOrEqual(0.0005 * rBar);
      expect(c.dispersionLcl[i]).toBe(0);
    }
    expect(c.equalSizes).toBe(true);
  });
  it('X-bar/S: x̿ ± A3·s-bar and B4·s-bar with printed A3(5) = 1.427, B4(5) = 2.089', () => {
    const c = xbarSChart(groups);
    const sds = groups.map((g, i) => Math.sqrt(g.reduce((a, x) => a + (x - means[i]) ** 2, 0) / 4));
    const sBar = sds.reduce((a, b) => a + b, 0) / sds.length;
    expect(c.dispersionBar).toBeCloseTo(sBar, 12);
    expect(Math.abs(c.ucl[0] - (grand + 1.427 * sBar))).toBeLessThanOrEqual(0.0005 * sBar);
    expect(Math.abs(c.dispersionUcl[0] - 2.089 * sBar)).toBeLessThanOrEqual(0.0005 * sBar);
  });
  it('flags a shifted subgroup and rejects subgroups of one', () => {
    const shifted = groups.map((g) => g.slice());
    shifted.push(groups[0].map((v) => v + 0.05));
    expect(xbarSChart(shifted).outOfControl).toEqual([6]);
    expect(() => xbarRChart([[1, 2], [3]])).toThrow(/at least 2/);
  });
  it('unequal sizes: wider limits for smaller subgroups', () => {
    const c = xbarSChart([[1, 2, 3], [2, 3, 4, 5, 6, 7], [1, 3], [2, 2.5, 3, 3.5]]);
    expect(c.equalSizes).toBe(false);
    expect(c.ucl[2] - c.center).toBeGreaterThan(c.ucl[0] - c.center);
    expect(c.ucl[0] - c.center).toBeGreaterThan(c.ucl[1] - c.center);
    expect((c.ucl[1] - c.center) * Math.sqrt(6)).toBeCloseTo((c.ucl[2] - c.center) * Math.sqrt(2), 12);
  });
});
