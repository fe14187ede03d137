// Cross-checks of the SPC modules against values computed by scipy 1.10 / statsmodels 0.13 / numpy 1.24
// (Debian python3 packages) in test/reference/spc_fixtures.py; versions are recorded in the JSON.
import { readFileSync } from 'node:fs';
import { describe, expect, it } from 'vitest';
import * as D from '../../src/stats/distributions.ts';
import { andersonDarling } from '../../src/stats/andersonDarling.ts';
import { c4, d2, d3 } from '../../src/stats/shewhartConstants.ts';
import { xbarRChart, xbarSChart } from '../../src/stats/subgroupCharts.ts';
import { ewmaChart } from '../../src/stats/ewma.ts';
import { cusumChart } from '../../src/stats/cusum.ts';
import { capability } from '../../src/stats/capability.ts';
import { quantile } from '../../src/stats/descriptive.ts';
import { estimateCovariance } from '../../src/stats/covariance.ts';
import { applyT2, freezeT2, hotellingT2PhaseOne } from '../../src/stats/hotellingT2.ts';

const fx = JSON.parse(readFileSync(new URL('./spc-fixtures.json', import.meta.url), 'utf8'));

function rel(a: number, b: number): number {
  return Math.abs(a - b) / Math.max(Math.abs(b), 1e-300);
}
function closeArr(got: ArrayLike<number>, want: number[], tol: number, what = ''): void {
  expect(got.length, what).toBe(want.length);
  for (let i = 0; i < want.length; i++) expect(Math.abs(got[i] - want[i]), `${what}[${i}]`).toBeLessThanOrEqual(tol * Math.max(1, Math.abs(want[i])));
}

describe('fixture provenance', () => {
  it('records the reference library versions', () => {
    expect(fx.versions.scipy).toMatch(/^1\./);
    expect(fx.versions.statsmodels).toMatch(/^0\./);
    expect(fx.versions.numpy).toMatch(/^1\./);
  });
});

// Tolerance 1e-10 relative, except where @stdlib's inverses are measurably looser: the normal quantile
// in the far tail (p = 1e-9: 7e-10; it also returns −Infinity below about 1e-16, where scipy gives
// finite values) and the t quantile (df = 5, p = 0.975: 4e-10). Both are far below what control limits
// need; tightened to 1e-9 there, not hidden.
function tolerance(name: string, c: Record<string, number>): number {
  if (name === 'normalQuantile' && (c.p < 1e-6 || c.p > 1 - 1e-6)) return 1e-9;
  if (name === 'tQuantile') return 1e-9;
  return 1e-10;
}

describe('distributions.ts against scipy.stats (relative error <= 1e-10, see tolerance())', () => {
  const cases: [string, (c: Record<string, number>) => number][] = [
    ['normalCdf', (c) => D.normalCdf(c.x)],
    ['normalQuantile', (c) => D.normalQuantile(c.p)],
    ['tCdf', (c) => D.tCdf(c.x, c.df)],
    ['tQuantile', (c) => D.tQuantile(c.p, c.df)],
    ['chiSquareCdf', (c) => D.chiSquareCdf(c.x, c.df)],
    ['chiSquareQuantile', (c) => D.chiSquareQuantile(c.p, c.df)],
    ['fCdf', (c) => D.fCdf(c.x, c.d1, c.d2)],
    ['fQuantile', (c) => D.fQuantile(c.p, c.d1, c.d2)],
    ['betaCdf', (c) => D.betaCdf(c.x, c.a, c.b)],
    ['betaQuantile', (c) => D.betaQuantile(c.p, c.a, c.b)],
  ];
  for (const [name, fn] of cases) {
    it(name, () => {
      for (const c of fx.distributions[name]) {
        if (c.value === 0) expect(Math.abs(fn(c))).toBeLessThan(1e-15);
        else expect(rel(fn(c), c.value), `${name}(${JSON.stringify(c)})`).toBeLessThanOrEqual(tolerance(name, c));
      }
    });
  }
});

describe("Anderson–Darling against statsmodels normal_ad (D'Agostino & Stephens 1986 p-values)", () => {
  for (const c of fx.andersonDarling) {
    it(c.name, () => {
      const r = andersonDarling(c.x);
      expect(rel(r.a2, c.a2)).toBeLessThanOrEqual(1e-9);
      expect(rel(r.pValue, c.pValue)).toBeLessThanOrEqual(1e-8);
    });
  }
});

describe('Shewhart constants against scipy.integrate.quad / dblquad and scipy.special.gammaln', () => {
  it('d2, d3, c4 for n = 2..25, 30, 50 agree to 1e-8', () => {
    for (const c of fx.shewhartConstants) {
      expect(Math.abs(d2(c.n) - c.d2), `d2(${c.n})`).toBeLessThanOrEqual(1e-9);
      expect(Math.abs(d3(c.n) - c.d3), `d3(${c.n})`).toBeLessThanOrEqual(1e-8);
      expect(Math.abs(c4(c.n) - c.c4), `c4(${c.n})`).toBeLessThanOrEqual(1e-12);
    }
  });
});

describe('subgroup charts with unequal sizes against numpy', () => {
  const s = fx.subgroupCharts;
  for (const [key, chart] of [['xbarR', xbarRChart(s.groups)], ['xbarS', xbarSChart(s.groups)]] as const) {
    it(key, () => {
      const want = s[key];
      expect(chart.center).toBeCloseTo(s.grandMean, 12);
      expect(rel(chart.sigma, want.sigma)).toBeLessThanOrEqual(1e-9);
      closeArr(chart.dispersions, want.dispersions, 1e-12, 'dispersions');
      closeArr(chart.ucl, want.ucl, 1e-9, 'ucl');
      closeArr(chart.lcl, want.lcl, 1e-9, 'lcl');
      closeArr(chart.dispersionUcl, want.dispersionUcl, 1e-8, 'dispersionUcl');
      closeArr(chart.dispersionLcl, want.dispersionLcl, 1e-8, 'dispersionLcl');
      expect(chart.outOfControl).toContain(8); // the subgroup shifted in the fixture script
    });
  }
});

describe('EWMA and CUSUM against independent numpy loops', () => {
  it('EWMA statistics, exact limits and signals', () => {
    const e = fx.ewma;
    const r = ewmaChart(e.x, { target: e.target, sigma: e.sigma, lambda: e.lambda, L: e.L });
    closeArr(r.z, e.z, 1e-12, 'z');
    closeArr(r.ucl, e.ucl, 1e-12, 'ucl');
    closeArr(r.lcl, e.lcl, 1e-12, 'lcl');
    expect(r.signals).toEqual(e.signals);
  });
  for (const c of fx.cusum.cases) {
    it(`CUSUM k = ${c.k}, h = ${c.h}, head start ${c.headStart}`, () => {
      const r = cusumChart(fx.cusum.x, { target: fx.cusum.target, sigma: fx.cusum.sigma, k: c.k, h: c.h, headStart: c.headStart });
      closeArr(r.upper, c.upper, 1e-12, 'upper');
      closeArr(r.lower, c.lower, 1e-12, 'lower');
      expect(r.firstSignal?.index ?? null).toBe(c.firstSignal);
    });
  }
});

describe('capability against numpy/scipy', () => {
  const x: number[] = fx.capability.x;
  for (const c of fx.capability.cases) {
    it(`band [${c.lsl}, ${c.usl}] at ${c.conf}`, () => {
      const r = capability({ values: x }, { lsl: c.lsl, usl: c.usl, target: c.target }, { confidence: c.conf, percentile: 'always' });
      const ref = c.ref;
      expect(r.n).toBe(ref.n);
      for (const [k, v] of [['mean', ref.mean], ['sigmaOverall', ref.sigmaOverall], ['sigmaWithin', ref.sigmaWithin]] as const) {
        expect(rel(r[k], v), k).toBeLessThanOrEqual(1e-12);
      }
      for (const key of ['cp', 'cpu', 'cpl', 'cpk', 'pp', 'ppu', 'ppl', 'ppk', 'cpm'] as const) {
        if (ref[key] === null) expect(r[key], key).toBeNull();
        else expect(rel(r[key] as number, ref[key]), key).toBeLessThanOrEqual(1e-11);
      }
      // Cp/Cpk intervals on the effective df 0.62(n − 1) of MR-bar/d2 (Cryer & Ryan 1990), Pp/Ppk on n − 1.
      expect(r.intervals.df.within).toBeCloseTo(ref.dfWithin, 12);
      expect(r.intervals.df.overall).toBe(ref.dfOverall);
      if (ref.cpInterval) closeArr([r.intervals.cp!.lower, r.intervals.cp!.upper], ref.cpInterval, 1e-10, 'cp CI');
      if (ref.ppInterval) closeArr([r.intervals.pp!.lower, r.intervals.pp!.upper], ref.ppInterval, 1e-10, 'pp CI');
      closeArr([r.intervals.cpk.lower, r.intervals.cpk.upper], ref.cpkInterval, 1e-10, 'cpk CI');
      closeArr([r.intervals.ppk.lower, r.intervals.ppk.upper], ref.ppkInterval, 1e-10, 'ppk CI');
      for (const [got, want] of [
        [r.expectedPpm.within, ref.ppm_within],
        [r.expectedPpm.overall, ref.ppm_overall],
        [r.observedPpm, ref.observedPpm],
      ] as const) {
        expect(Math.abs(got.below - want[0])).toBeLessThanOrEqual(1e-9 * Math.max(1, want[0]));
        expect(Math.abs(got.above - want[1])).toBeLessThanOrEqual(1e-9 * Math.max(1, want[1]));
      }
      closeArr([r.percentile!.p00135, r.percentile!.p50, r.percentile!.p99865], ref.quantiles, 1e-13, 'quantiles');
    });
  }
});

describe('quantiles against numpy.quantile (linear = Hyndman & Fan type 7)', () => {
  it('matches', () => {
    const q = fx.quantiles;
    closeArr(q.p.map((p: number) => quantile(q.x, p)), q.values, 1e-14, 'q');
  });
});

describe('Hotelling T² against numpy', () => {
  const h = fx.hotelling;
  const r = hotellingT2PhaseOne(h.X, { alpha: h.alpha });
  it('mean, covariance, T² values, Beta and F limits, signals', () => {
    closeArr(r.mean, h.mean, 1e-13, 'mean');
    r.covariance.forEach((row, i) => closeArr(row, h.covariance[i], 1e-12, `S[${i}]`));
    closeArr(r.t2, h.t2, 1e-9, 't2');
    expect(rel(r.ucl, h.uclPhaseOne)).toBeLessThanOrEqual(1e-10);
    expect(rel(freezeT2(r).ucl, h.uclPhaseTwo)).toBeLessThanOrEqual(1e-10);
    expect(r.signals).toEqual(h.signals);
  });
  it('conditional contributions equal T² − T² without the variable (recomputed in numpy); unconditional terms', () => {
    const frozen = freezeT2(r);
    for (const c of h.contributions) {
      const all = applyT2({ ...frozen, ucl: -1 }, [h.X[c.index]]).contributions[0];
      closeArr(all.conditional, c.conditional, 1e-8, `conditional ${c.index}`);
      closeArr(all.unconditional, c.unconditional, 1e-10, `unconditional ${c.index}`);
    }
  });
  it('successive-difference covariance (Holmes & Mergen 1993) and its T²', () => {
    const est = estimateCovariance(h.X, 'successive-difference');
    est.covariance.forEach((row, i) => closeArr(row, h.successiveDifference[i], 1e-12, `S2[${i}]`));
    const sd = hotellingT2PhaseOne(h.X, { alpha: h.alpha, covariance: 'successive-difference' });
    closeArr(sd.t2, h.successiveDifferenceT2, 1e-9, 't2 (S2)');
    expect(sd.flags.approximateLimit).toBe(true);
  });
  it('Ledoit–Wolf shrinkage (Ledoit & Wolf 2004, written from the paper in numpy)', () => {
    const est = estimateCovariance(h.X, 'ledoit-wolf');
    expect(rel(est.shrinkage!, h.ledoitWolfShrinkage)).toBeLessThanOrEqual(1e-10);
    est.covariance.forEach((row, i) => closeArr(row, h.ledoitWolf[i], 1e-11, `LW[${i}]`));
    const small = hotellingT2PhaseOne(h.small.X, { alpha: h.alpha, covariance: 'ledoit-wolf' });
    expect(rel(small.shrinkage!, h.small.shrinkage)).toBeLessThanOrEqual(1e-10);
    closeArr(small.t2, h.small.t2, 1e-9, 'small t2');
    expect(rel(small.ucl, h.small.chi2Ucl)).toBeLessThanOrEqual(1e-10);
  });
  it('phase II T² of new heats against the frozen estimate', () => {
    const out = applyT2(freezeT2(r), h.phaseTwo.X);
    closeArr(out.t2, h.phaseTwo.t2, 1e-9, 'phase II t2');
  });
});
