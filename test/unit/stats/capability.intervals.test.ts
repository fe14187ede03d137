import { describe, expect, it } from 'vitest';
import {
  capability,
  individualsWithin,
  movingRangeDf,
  PERCENTILE_MIN_N,
  poolWithin,
  subgroupSDf,
} from '../../../src/stats/capability.ts';
import { chiSquareQuantile } from '../../../src/stats/distributions.ts';
import { StatsInputError } from '../../../src/stats/descriptive.ts';
import { createRng, type Rng } from '../../../src/stats/random.ts';

const normals = (rng: Rng, n: number, mu: number, sd: number) => Array.from({ length: n }, () => mu + sd * rng.normal());
const covers = (iv: { lower: number; upper: number }, truth: number) => iv.lower <= truth && truth <= iv.upper;

describe('interval degrees of freedom', () => {
  it('individuals: Cp/Cpk on 0.62(n − 1) (Cryer & Ryan 1990, from memory), Pp/Ppk on n − 1', () => {
    const x = normals(createRng(7), 50, 36, 1.2);
    const r = capability({ values: x }, { lsl: 32, usl: 40 });
    expect(r.intervals.df.within).toBeCloseTo(0.62 * 49, 12);
    expect(r.intervals.df.overall).toBe(49);
    expect(movingRangeDf(50)).toBeCloseTo(30.38, 12);
    // Montgomery §8.3.5 chi-square interval for Cp, here on the effective df.
    const nu = r.intervals.df.within;
    expect(r.intervals.cp!.lower).toBeCloseTo(r.cp! * Math.sqrt(chiSquareQuantile(0.025, nu) / nu), 12);
    // Fewer df than n − 1: the Cp interval is relatively wider than the Pp interval.
    expect(r.intervals.cp!.upper / r.intervals.cp!.lower).toBeGreaterThan(r.intervals.pp!.upper / r.intervals.pp!.lower);
  });

  it('subgroups: ν = k²/(2Σ(1 − c4²)/c4²); 10 subgroups of 5 with c4(5) = 0.9400 (ASTM E2587 / Montgomery App. VI table) give ≈ 37.96, below Σ(nᵢ − 1) = 40', () => {
    const c = 0.94;
    const tabled = 100 / (2 * 10 * ((1 - c * c) / (c * c)));
    expect(Math.abs(subgroupSDf(Array(10).fill(5)) - tabled)).toBeLessThan(0.05); // c4 tabled to 4 digits
    expect(subgroupSDf(Array(10).fill(5))).toBeLessThan(40);
    // Large subgroups: tends to Σ(nᵢ − 1) (Var(s) → σ²/(2(n − 1)), common practice).
    expect(subgroupSDf(Array(4).fill(200)) / (4 * 199)).toBeGreaterThan(0.99);
    const rng = createRng(8);
    const groups = Array.from({ length: 10 }, () => normals(rng, 5, 36, 1));
    expect(capability({ subgroups: groups }, { lsl: 32, usl: 40 }).intervals.df.within).toBeCloseTo(subgroupSDf(Array(10).fill(5)), 12);
  });
});

describe('interval df switch (intervalDf)', () => {
  it("'n-1' uses n − 1 for the within sigma too; the result names the choice", () => {
    const x = normals(createRng(7), 50, 36, 1.2);
    const eff = capability({ values: x }, { lsl: 32, usl: 40 });
    const textbook = capability({ values: x }, { lsl: 32, usl: 40 }, { intervalDf: 'n-1' });
    expect(eff.intervals.method.withinDf).toBe('effective');
    expect(eff.intervals.method.withinDfRule).toMatch(/0\.62\(n − 1\) = 30\.38/);
    expect(textbook.intervals.method.withinDf).toBe('n-1');
    expect(textbook.intervals.df.within).toBe(49);
    // Same point estimates; Montgomery §8.3.5 chi-square interval on ν = n − 1.
    expect(textbook.cp).toBe(eff.cp);
    expect(textbook.intervals.cp!.upper).toBeCloseTo(textbook.cp! * Math.sqrt(chiSquareQuantile(0.975, 49) / 49), 12);
    // Bissell (1990) on ν = n − 1: narrower than on the effective df.
    const w = (iv: { lower: number; upper: number }) => iv.upper - iv.lower;
    expect(w(textbook.intervals.cpk)).toBeLessThan(w(eff.intervals.cpk));
    expect(textbook.intervals.ppk).toEqual(eff.intervals.ppk);
    expect(() => capability({ values: x }, { lsl: 32, usl: 40 }, { intervalDf: 'n' as never })).toThrow(StatsInputError);
  });
});

// Seeded Monte Carlo: N(0.5, 1) against [−4, 3], so Cp = 7/6 and Cpk = 2.5/3 exactly.
describe('coverage of the 95 % intervals (seeded Monte Carlo, 3000 replications)', () => {
  const trueCp = 7 / 6;
  const trueCpk = 2.5 / 3;
  const reps = 3000;

  it('individuals, n = 50: Cp and Cpk cover 93–97 %, where ν = n − 1 for MR-bar/d2 would not', () => {
    const rng = createRng(20240611);
    const n = 50;
    let cp = 0;
    let cpk = 0;
    let pp = 0;
    let ppk = 0;
    let cpOldDf = 0;
    for (let i = 0; i < reps; i++) {
      const r = capability({ values: normals(rng, n, 0.5, 1) }, { lsl: -4, usl: 3 }, { percentile: 'never', fitted: 'never', stabilityRules: [] });
      if (covers(r.intervals.cp!, trueCp)) cp++;
      if (covers(r.intervals.cpk, trueCpk)) cpk++;
      if (covers(r.intervals.pp!, trueCp)) pp++;
      if (covers(r.intervals.ppk, trueCpk)) ppk++;
      // The former interval: the chi-square interval on n − 1 around the MR-bar/d2 Cp.
      const lo = r.cp! * Math.sqrt(chiSquareQuantile(0.025, n - 1) / (n - 1));
      const hi = r.cp! * Math.sqrt(chiSquareQuantile(0.975, n - 1) / (n - 1));
      if (lo <= trueCp && trueCp <= hi) cpOldDf++;
    }
    // Binomial SE of a 95 % coverage over 3000 runs is 0.4 %, so 93–97 % is ±5 SE.
    for (const c of [cp, cpk, pp, ppk]) {
      expect(c / reps).toBeGreaterThanOrEqual(0.93);
      expect(c / reps).toBeLessThanOrEqual(0.97);
    }
    expect(cpOldDf / reps).toBeLessThan(0.91);
  });

  it('subgroups, 10 of 5: the Cp interval on the c4-based ν covers 93–97 %', () => {
    const rng = createRng(99);
    let cp = 0;
    for (let i = 0; i < reps; i++) {
      const groups = Array.from({ length: 10 }, () => normals(rng, 5, 0.5, 1));
      const r = capability({ subgroups: groups }, { lsl: -4, usl: 3 }, { percentile: 'never', fitted: 'never', stabilityRules: [] });
      if (covers(r.intervals.cp!, trueCp)) cp++;
    }
    expect(cp / reps).toBeGreaterThanOrEqual(0.93);
    expect(cp / reps).toBeLessThanOrEqual(0.97);
  });
});

describe('pooled within sigma', () => {
  it('pools variances weighted by df (pooled variance, common practice)', () => {
    const p = poolWithin([{ sigma: 1, df: 10 }, { sigma: 2, df: 30 }]);
    expect(p.df).toBe(40);
    expect(p.sigma).toBeCloseTo(Math.sqrt((10 * 1 + 30 * 4) / 40), 14);
    expect(() => poolWithin([])).toThrow(StatsInputError);
    expect(() => poolWithin([{ sigma: 1, df: 0 }])).toThrow(StatsInputError);
  });

  it('two interleaved mills 2 HRC apart, each SD 1: MR-bar/d2 across them ≈ 1.9, pooled per mill ≈ 1; Cpk ≤ Ppk then', () => {
    const rng = createRng(4242);
    const a = normals(rng, 200, 36, 1);
    const b = normals(rng, 200, 38, 1);
    const castOrder = a.flatMap((v, i) => [v, b[i]]);
    // Adjacent heats of different mills: E|D| for D ~ N(2, 2) is ≈ 2.10 (folded normal), /d2 = 1.128 → ≈ 1.86.
    expect(individualsWithin(castOrder).sigma).toBeGreaterThan(1.7);
    const pooled = poolWithin([individualsWithin(a), individualsWithin(b)]);
    expect(Math.abs(pooled.sigma - 1)).toBeLessThan(0.1);
    expect(pooled.df).toBeCloseTo(2 * 0.62 * 199, 12);
    const naive = capability({ values: castOrder }, { lsl: 31, usl: 43 });
    expect(naive.cpk).toBeLessThan(naive.ppk); // the defect: within sigma above overall sigma
    const r = capability({ values: castOrder }, { lsl: 31, usl: 43 }, { within: pooled });
    expect(r.withinMethod).toBe('given');
    expect(r.sigmaWithin).toBe(pooled.sigma);
    expect(r.intervals.df.within).toBe(pooled.df);
    expect(r.cpk).toBeGreaterThan(r.ppk);
    // Overall SD of the mixture √(1 + 1) ≈ 1.41 (two means ±1 around the centre).
    expect(Math.abs(r.sigmaOverall - Math.SQRT2)).toBeLessThan(0.12);
  });

  it('a given within sigma: clear errors', () => {
    const x = normals(createRng(3), 30, 36, 1);
    expect(() => capability({ values: x }, { lsl: 30 }, { within: { sigma: 0, df: 10 } })).toThrow(StatsInputError);
    expect(() => capability({ values: x }, { lsl: 30 }, { within: { sigma: 1, df: Number.NaN } })).toThrow(StatsInputError);
    expect(() => capability({ subgroups: [x.slice(0, 5), x.slice(5, 10)] }, { lsl: 30 }, { within: { sigma: 1, df: 10 } })).toThrow(/individuals/);
  });
});

describe('percentile index with few data', () => {
  it('flag below round(1/0.00135) = 741 values, only when the percentile index is computed', () => {
    expect(PERCENTILE_MIN_N).toBe(741);
    const rng = createRng(11);
    const small = normals(rng, 200, 36, 1);
    expect(capability({ values: small }, { lsl: 31, usl: 41 }, { percentile: 'always', fitted: 'never' }).flags.percentileFewData).toBe(true);
    expect(capability({ values: small }, { lsl: 31, usl: 41 }, { percentile: 'never', fitted: 'never' }).flags.percentileFewData).toBe(false);
    const large = normals(rng, 800, 36, 1);
    expect(capability({ values: large }, { lsl: 31, usl: 41 }, { percentile: 'always', fitted: 'never' }).flags.percentileFewData).toBe(false);
  });

  it('the reason: at n = 100 the percentile Pp of normal data reads well above the true Pp', () => {
    // Expected range of 100 normal values ≈ 5.0σ (range tables, e.g. d2(100) ≈ 5.015) against 6σ.
    const rng = createRng(12);
    let sum = 0;
    const reps = 300;
    for (let i = 0; i < reps; i++) {
      const r = capability({ values: normals(rng, 100, 0, 1) }, { lsl: -3, usl: 3 }, { percentile: 'always', stabilityRules: [] });
      sum += r.percentile!.pp!;
    }
    expect(sum / reps).toBeGreaterThan(1.1); // true Pp = 1
  });
});
