import { describe, expect, it } from 'vitest';
import { cusumArl, defaultCusumArlStates, defaultEwmaArlStates, ewmaArl } from '../../../src/stats/runLength.ts';
import { StatsInputError } from '../../../src/stats/descriptive.ts';
import { normalCdf } from '../../../src/stats/distributions.ts';
import { createRng } from '../../../src/stats/random.ts';

/** Relative difference |a − b| / b. */
const rel = (a: number, b: number) => Math.abs(a - b) / Math.abs(b);

describe('cusumArl (Brook & Evans 1972 Markov chain) against published tables', () => {
  it('one-sided k = 0.5, h = 3: 117.59 in control, 3.75 at a 1.5σ shift (Brook & Evans 1972, Biometrika 59, §4.3; as quoted in the R package spc, xcusum.arl examples; high confidence)', () => {
    // Brook & Evans print 117.59 and 3.75 from their own chain; ours with many more states agrees.
    expect(cusumArl({ k: 0.5, h: 3, shift: 0 }).upper).toBeCloseTo(117.59, 0);
    expect(rel(cusumArl({ k: 0.5, h: 3, shift: 0 }).upper, 117.59)).toBeLessThan(0.002);
    expect(cusumArl({ k: 0.5, h: 3, shift: 1.5 }).upper).toBeCloseTo(3.75, 2);
  });

  it('two-sided k = 0.5, h = 4: 168, 26.6 at 0.5σ, 8.38 at 1σ (Lucas & Crosier 1982, Technometrics 24, Table 1; reproduced in Montgomery, Introduction to SQC, CUSUM ARL table; high confidence)', () => {
    expect(rel(cusumArl({ k: 0.5, h: 4, shift: 0 }).twoSided, 168)).toBeLessThan(0.005);
    expect(rel(cusumArl({ k: 0.5, h: 4, shift: 0.5 }).twoSided, 26.6)).toBeLessThan(0.005);
    expect(rel(cusumArl({ k: 0.5, h: 4, shift: 1 }).twoSided, 8.38)).toBeLessThan(0.002);
    // A downward shift is the mirror image of an upward one.
    expect(cusumArl({ k: 0.5, h: 4, shift: -1 }).twoSided).toBeCloseTo(cusumArl({ k: 0.5, h: 4, shift: 1 }).twoSided, 9);
    expect(cusumArl({ k: 0.5, h: 4, shift: -1 }).lower).toBeCloseTo(cusumArl({ k: 0.5, h: 4, shift: 1 }).upper, 9);
  });

  it('two-sided k = 0.5, h = 4, head start h/2: 149, 20.1 at 0.5σ, 5.29 at 1σ (Lucas & Crosier 1982, Table 1, FIR column; high confidence)', () => {
    expect(rel(cusumArl({ k: 0.5, h: 4, shift: 0, headStart: 2 }).twoSided, 149)).toBeLessThan(0.005);
    expect(rel(cusumArl({ k: 0.5, h: 4, shift: 0.5, headStart: 2 }).twoSided, 20.1)).toBeLessThan(0.005);
    expect(rel(cusumArl({ k: 0.5, h: 4, shift: 1, headStart: 2 }).twoSided, 5.29)).toBeLessThan(0.002);
  });

  it('two-sided k = 0.5, h = 5: 465, 38.0 at 0.5σ, 10.4 at 1σ (Montgomery, Introduction to SQC, CUSUM ARL table for h = 4 and 5; from memory, looser tolerance)', () => {
    expect(rel(cusumArl({ k: 0.5, h: 5, shift: 0 }).twoSided, 465)).toBeLessThan(0.01);
    expect(rel(cusumArl({ k: 0.5, h: 5, shift: 0.5 }).twoSided, 38.0)).toBeLessThan(0.01);
    expect(rel(cusumArl({ k: 0.5, h: 5, shift: 1 }).twoSided, 10.4)).toBeLessThan(0.01);
  });

  // The chain's error shrinks about as 1/states², so the default's error is about 4/3 of its distance to
  // the chain with twice the states: a distance below 0.11% keeps the default within ~0.15%.
  it('the default states give about 3 significant digits at h = 8 (against twice as many states)', () => {
    const s = defaultCusumArlStates(8);
    expect(s).toBe(200);
    const coarse = cusumArl({ k: 0.5, h: 8, shift: 0 }).twoSided;
    const fine = cusumArl({ k: 0.5, h: 8, shift: 0, states: 2 * s }).twoSided;
    expect(rel(coarse, fine)).toBeLessThan(0.0011);
    expect(coarse).toBeLessThan(fine); // the coarse chain errs low here, as the 1/states² model expects
  });

  it('rejects invalid input with StatsInputError', () => {
    expect(() => cusumArl({ k: -0.1, h: 4, shift: 0 })).toThrow(StatsInputError);
    expect(() => cusumArl({ k: 0.5, h: 0, shift: 0 })).toThrow(StatsInputError);
    expect(() => cusumArl({ k: 0.5, h: 4, shift: Number.NaN })).toThrow(StatsInputError);
    expect(() => cusumArl({ k: 0.5, h: 4, shift: 0, headStart: 4 })).toThrow(StatsInputError);
    expect(() => cusumArl({ k: 0.5, h: 4, shift: 0, states: 3 })).toThrow(StatsInputError);
    expect(() => cusumArl({ k: 0.5, h: 4, shift: 0, states: 10.5 })).toThrow(StatsInputError);
  });
});

describe('ewmaArl (Lucas & Saccucci 1990 Markov chain) against published tables', () => {
  it('λ = 0.5, L = 3.071: 500 in control, 17.5 at 1σ, 3.63 at 2σ (Lucas & Saccucci 1990, Technometrics 32(1), Table 3; as quoted in the R package spc, xewma.arl examples; high confidence)', () => {
    expect(rel(ewmaArl({ lambda: 0.5, L: 3.071, shift: 0 }), 500)).toBeLessThan(0.005);
    expect(rel(ewmaArl({ lambda: 0.5, L: 3.071, shift: 1 }), 17.5)).toBeLessThan(0.005);
    expect(rel(ewmaArl({ lambda: 0.5, L: 3.071, shift: 2 }), 3.63)).toBeLessThan(0.005);
  });

  it('λ = 0.03, L = 2.437: 500 in control, 29.3 at 0.5σ, 12.6 at 1σ (Lucas & Saccucci 1990, Table 3; via spc, high confidence)', () => {
    expect(rel(ewmaArl({ lambda: 0.03, L: 2.437, shift: 0 }), 500)).toBeLessThan(0.005);
    expect(rel(ewmaArl({ lambda: 0.03, L: 2.437, shift: 0.5 }), 29.3)).toBeLessThan(0.005);
    expect(rel(ewmaArl({ lambda: 0.03, L: 2.437, shift: 1 }), 12.6)).toBeLessThan(0.005);
  });

  it('λ = 0.10, L = 2.814: 500 in control, 10.3 at 1σ (Lucas & Saccucci 1990, Table 3; Montgomery, Introduction to SQC, EWMA ARL table; from memory, looser tolerance)', () => {
    expect(rel(ewmaArl({ lambda: 0.1, L: 2.814, shift: 0 }), 500)).toBeLessThan(0.01);
    expect(rel(ewmaArl({ lambda: 0.1, L: 2.814, shift: 1 }), 10.3)).toBeLessThan(0.01);
  });

  it('λ = 0.05, L = 2.615: 500 in control, 11.4 at 1σ (Lucas & Saccucci 1990, Table 3; Montgomery, EWMA ARL table; from memory, looser tolerance)', () => {
    expect(rel(ewmaArl({ lambda: 0.05, L: 2.615, shift: 0 }), 500)).toBeLessThan(0.01);
    expect(rel(ewmaArl({ lambda: 0.05, L: 2.615, shift: 1 }), 11.4)).toBeLessThan(0.01);
  });

  it('λ = 0.05, limits ±2 in σ of z: 127.53 in control, 8.38 at 1σ (Crowder 1987, Technometrics 29, Table 1; via spc, high confidence)', () => {
    expect(rel(ewmaArl({ lambda: 0.05, L: 2, shift: 0 }), 127.53)).toBeLessThan(0.002);
    expect(rel(ewmaArl({ lambda: 0.05, L: 2, shift: 1 }), 8.38)).toBeLessThan(0.002);
  });

  it('λ = 0.05, L = 3: 1379 in control, 13.5 at 1σ (Steiner 1999, J. Quality Technology 31, Table 2, fixed limits; via spc, high confidence)', () => {
    expect(rel(ewmaArl({ lambda: 0.05, L: 3, shift: 0 }), 1379)).toBeLessThan(0.003);
    expect(rel(ewmaArl({ lambda: 0.05, L: 3, shift: 1 }), 13.5)).toBeLessThan(0.003);
  });

  it('λ = 0.25, L = 3, 1σ shift: 11.1543 (SAS/QC User’s Guide, MACONTROL Example "Computing Average Run Lengths", EWMAARL; high confidence)', () => {
    expect(rel(ewmaArl({ lambda: 0.25, L: 3, shift: 1 }), 11.1543)).toBeLessThan(0.0005);
  });

  it('λ = 1 is the Shewhart individuals chart: ARL = 1/(Φ(−L − s) + Φ(−L + s)) exactly (textbook identity; SAS/QC EWMAARL example: 155.224 at s = 0.5, L = 3)', () => {
    for (const s of [0, 0.5, 1, 2]) {
      const exact = 1 / (normalCdf(-3 - s) + normalCdf(-3 + s));
      expect(rel(ewmaArl({ lambda: 1, L: 3, shift: s }), exact)).toBeLessThan(1e-9);
    }
    expect(ewmaArl({ lambda: 1, L: 3, shift: 0.5 })).toBeCloseTo(155.224, 2);
  });

  it('the default states give about 3 significant digits at λ = 0.05, L = 3.5 (against twice as many states; see the CUSUM case)', () => {
    const s = defaultEwmaArlStates(0.05, 3.5);
    expect(s % 2).toBe(1);
    const coarse = ewmaArl({ lambda: 0.05, L: 3.5, shift: 0 });
    const fine = ewmaArl({ lambda: 0.05, L: 3.5, shift: 0, states: 2 * s + 1 });
    expect(rel(coarse, fine)).toBeLessThan(0.0011);
  });

  it('rejects invalid input with StatsInputError', () => {
    expect(() => ewmaArl({ lambda: 0, L: 3, shift: 0 })).toThrow(StatsInputError);
    expect(() => ewmaArl({ lambda: 1.2, L: 3, shift: 0 })).toThrow(StatsInputError);
    expect(() => ewmaArl({ lambda: 0.1, L: -1, shift: 0 })).toThrow(StatsInputError);
    expect(() => ewmaArl({ lambda: 0.1, L: 3, shift: Infinity })).toThrow(StatsInputError);
    expect(() => ewmaArl({ lambda: 0.1, L: 3, shift: 0, states: 100 })).toThrow(StatsInputError);
  });
});

// Independent check: simulate the charts directly (seeded xoshiro128** + Box–Muller) and compare the mean
// run length with the chain, within 4 standard errors of the simulated mean.
function simulate(runs: number, seed: number, runOnce: (normal: () => number) => number): { mean: number; se: number } {
  const rng = createRng(seed);
  const normal = () => rng.normal();
  let sum = 0;
  let sumSq = 0;
  for (let r = 0; r < runs; r++) {
    const n = runOnce(normal);
    sum += n;
    sumSq += n * n;
  }
  const mean = sum / runs;
  const sd = Math.sqrt((sumSq - runs * mean * mean) / (runs - 1));
  return { mean, se: sd / Math.sqrt(runs) };
}

function cusumRun(k: number, h: number, shift: number, headStart: number) {
  return (normal: () => number) => {
    let up = headStart;
    let down = headStart;
    for (let n = 1; ; n++) {
      const x = normal() + shift;
      up = Math.max(0, up + x - k);
      down = Math.max(0, down - x - k);
      if (up > h || down > h) return n;
    }
  };
}

function ewmaRun(lambda: number, L: number, shift: number) {
  const limit = L * Math.sqrt(lambda / (2 - lambda));
  return (normal: () => number) => {
    let z = 0;
    for (let n = 1; ; n++) {
      z = lambda * (normal() + shift) + (1 - lambda) * z;
      if (Math.abs(z) > limit) return n;
    }
  };
}

describe('Monte Carlo cross-check (seeded)', () => {
  it('CUSUM k = 0.5, h = 4, head start 2, in control (chain ≈ 149)', () => {
    const mc = simulate(6000, 20240611, cusumRun(0.5, 4, 0, 2));
    expect(Math.abs(mc.mean - cusumArl({ k: 0.5, h: 4, shift: 0, headStart: 2 }).twoSided)).toBeLessThan(4 * mc.se);
  });
  it('CUSUM k = 0.5, h = 8 (the alert default), 1σ shift', () => {
    const mc = simulate(20000, 7, cusumRun(0.5, 8, 1, 0));
    expect(Math.abs(mc.mean - cusumArl({ k: 0.5, h: 8, shift: 1 }).twoSided)).toBeLessThan(4 * mc.se);
  });
  it('EWMA λ = 0.05, L = 2, in control (chain ≈ 127.5)', () => {
    const mc = simulate(5000, 11, ewmaRun(0.05, 2, 0));
    expect(Math.abs(mc.mean - ewmaArl({ lambda: 0.05, L: 2, shift: 0 }))).toBeLessThan(4 * mc.se);
  });
  it('EWMA λ = 0.05, L = 3.5 (the alert default), 1σ shift', () => {
    const mc = simulate(20000, 13, ewmaRun(0.05, 3.5, 1));
    expect(Math.abs(mc.mean - ewmaArl({ lambda: 0.05, L: 3.5, shift: 1 }))).toBeLessThan(4 * mc.se);
  });
});
