import { describe, expect, it } from 'vitest';
import { capability } from '../../../src/stats/capability.ts';
import { normalCdf } from '../../../src/stats/distributions.ts';
import { StatsInputError } from '../../../src/stats/descriptive.ts';
import { createRng } from '../../../src/stats/random.ts';
import { chiSquareDeviate, gammaDeviate } from '../../../src/stats/randomVariates.ts';
import { supplyNonconforming } from '../../../src/stats/supplyNonconforming.ts';

describe('gamma and chi-square deviates (Marsaglia & Tsang 2000)', () => {
  it('χ²(ν) has mean ν and variance 2ν (textbook moments), within 4 standard errors over 40000 seeded draws', () => {
    for (const df of [1, 4, 29, 149]) {
      const rng = createRng(df);
      const n = 40000;
      let s = 0;
      let ss = 0;
      for (let i = 0; i < n; i++) {
        const x = chiSquareDeviate(df, rng);
        s += x;
        ss += x * x;
      }
      const m = s / n;
      const v = ss / n - m * m;
      expect(Math.abs(m - df)).toBeLessThan(4 * Math.sqrt((2 * df) / n));
      // The sample variance of 40000 draws is within a few per cent of 2ν; 10 % leaves room (from memory).
      expect(Math.abs(v / (2 * df) - 1)).toBeLessThan(0.1);
    }
    expect(() => gammaDeviate(0, createRng(1))).toThrow(StatsInputError);
  });
});

describe('supply share outside the band', () => {
  it('a 50/50 mixture of two mills: the heat-weighted sum is the mixture share; a normal index over the mixture misstates it', () => {
    // Known populations: EAST N(34.1, 1), WEST N(41, 1), band 31–43. True share outside:
    // ½[Φ(−3.1) + Φ(−8.9)] + ½[Φ(−10) + Φ(−2)] (normal model of each mill, exact).
    const truth = 0.5 * (normalCdf(-3.1) + normalCdf(-8.9)) + 0.5 * (normalCdf(-10) + normalCdf(-2));
    const r = supplyNonconforming(
      [
        { name: 'EAST', n: 200, mean: 34.1, sd: 1 },
        { name: 'WEST', n: 200, mean: 41, sd: 1 },
      ],
      { lsl: 31, usl: 43 },
    );
    expect(r.fraction).toBeCloseTo(truth, 12);
    expect(r.lower).toBeLessThan(truth);
    expect(r.upper).toBeGreaterThan(truth);
    // One normal fitted to the mixture (mean 37.55, SD √(1 + 3.45²) ≈ 3.59) puts several times as much
    // outside: the mixture is bimodal with short tails, which the single normal does not see.
    const rng = createRng(5);
    const mixed = Array.from({ length: 4000 }, (_, i) => (i % 2 ? 34.1 : 41) + rng.normal());
    const single = capability({ values: mixed }, { lsl: 31, usl: 43 }, { stabilityRules: [] });
    expect(single.expectedPpm.overall.total / (1e6 * truth)).toBeGreaterThan(3);
  });

  it('refuses a mill with fewer than 2 heats or no spread, and a band without limits', () => {
    expect(() => supplyNonconforming([{ name: 'A', n: 1, mean: 1, sd: 1 }], { lsl: 0, usl: 2 })).toThrow(/at least 2 heats/);
    expect(() => supplyNonconforming([{ name: 'A', n: 5, mean: 1, sd: 0 }], { lsl: 0, usl: 2 })).toThrow(/positive SD/);
    expect(() => supplyNonconforming([{ name: 'A', n: 5, mean: 1, sd: 1 }], { lsl: null, usl: null })).toThrow(/LSL, a USL/);
  });
});
