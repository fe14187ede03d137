import { describe, expect, it } from 'vitest';
import { createRng, createRngFromState, permutation, splitMix64, InvalidSeedError } from '../../../src/stats/random.ts';
import { normalCdf } from '../../../src/stats/distributions.ts';

describe('splitMix64', () => {
  it('matches the published reference outputs for seed 1234567', () => {
    // Source: Rosetta Code, "Pseudo-random numbers/Splitmix64" (first five outputs for seed 1234567),
    // which reproduces Vigna's splitmix64.c.
    expect(splitMix64(1234567n, 5)).toEqual([
      6457827717110365317n,
      3203168211198807973n,
      9817491932198370423n,
      4593380528125082431n,
      16408922859458223821n,
    ]);
  });
});

describe('xoshiro128**', () => {
  it('matches the reference C code (xoshiro128starstar.c, Blackman & Vigna) for state {0,1,2,3}', () => {
    // Source: output of the authors' reference xoshiro128starstar.c for s = {0,1,2,3}; the same
    // 30 values are published in the test suites of independent ports.
    const expected = [
      5760, 17280, 2966400, 32451840, 2604340873, 3891234569, 1254043636, 216095511, 3291724652, 2070429911,
      3403762308, 371730125, 2871333640, 1107719891, 407174912, 2984142590, 3931454317, 988064505, 139866493,
      1642526786, 2209862179, 1349487243, 1285712680, 615038681, 3943957616, 1212430137, 2007351553, 492343048,
      3280648624, 35038342,
    ];
    const rng = createRngFromState([0, 1, 2, 3]);
    expect(expected.map(() => rng.nextUint32())).toEqual(expected);
  });

  it('rejects the all-zero state and unsafe seeds', () => {
    expect(() => createRngFromState([0, 0, 0, 0])).toThrow(InvalidSeedError);
    expect(() => createRng(0.5)).toThrow(InvalidSeedError);
    expect(() => createRng(2 ** 60)).toThrow(InvalidSeedError);
  });
});

describe('createRng', () => {
  it('is reproducible: same seed, same stream; different seed, different stream', () => {
    const a = createRng(42);
    const b = createRng(42);
    const c = createRng(43);
    const sa = Array.from({ length: 50 }, () => a.next());
    const sb = Array.from({ length: 50 }, () => b.next());
    const sc = Array.from({ length: 50 }, () => c.next());
    expect(sa).toEqual(sb);
    expect(sa).not.toEqual(sc);
    expect(createRng(7n).next()).toBe(createRng(7).next());
  });

  it('next() stays in [0,1) with mean 1/2 and variance 1/12', () => {
    // Uniform(0,1) moments: mean 1/2, variance 1/12 (textbook). 4-SE bounds.
    const rng = createRng(2024);
    const n = 200_000;
    let s = 0;
    let s2 = 0;
    let min = 1;
    let max = 0;
    for (let i = 0; i < n; i++) {
      const u = rng.next();
      s += u;
      s2 += u * u;
      if (u < min) min = u;
      if (u > max) max = u;
    }
    const mean = s / n;
    const variance = s2 / n - mean * mean;
    expect(min).toBeGreaterThanOrEqual(0);
    expect(max).toBeLessThan(1);
    expect(Math.abs(mean - 0.5)).toBeLessThan(4 * Math.sqrt(1 / 12 / n));
    expect(Math.abs(variance - 1 / 12)).toBeLessThan(4 * Math.sqrt(1 / 180 / n)); // Var((U-1/2)^2) = 1/80 - 1/144 = 1/180
  });

  it('normal() has mean 0, SD 1 and normal decile frequencies', () => {
    // Standard normal CDF from @stdlib; chi-square on 10 equiprobable bins, 9 df, 0.999 quantile 27.88
    // (chi-square table, e.g. NIST/SEMATECH e-Handbook §1.3.6.7.4).
    const rng = createRng(99);
    const n = 100_000;
    const counts = new Array(10).fill(0);
    let s = 0;
    let s2 = 0;
    for (let i = 0; i < n; i++) {
      const z = rng.normal();
      s += z;
      s2 += z * z;
      counts[Math.min(9, Math.floor(normalCdf(z) * 10))]++;
    }
    expect(Math.abs(s / n)).toBeLessThan(4 / Math.sqrt(n));
    expect(Math.abs(s2 / n - 1)).toBeLessThan(4 * Math.sqrt(2 / n));
    const chi2 = counts.reduce((acc, c) => acc + (c - n / 10) ** 2 / (n / 10), 0);
    expect(chi2).toBeLessThan(27.88);
  });

  it('int(n) is unbiased and in range', () => {
    const rng = createRng(5);
    const counts = new Array(7).fill(0);
    const n = 70_000;
    for (let i = 0; i < n; i++) counts[rng.int(7)]++;
    // chi-square, 6 df, 0.999 quantile 22.46 (chi-square table, NIST/SEMATECH e-Handbook §1.3.6.7.4)
    const chi2 = counts.reduce((acc, c) => acc + (c - n / 7) ** 2 / (n / 7), 0);
    expect(chi2).toBeLessThan(22.46);
    expect(() => rng.int(0)).toThrow(RangeError);
    expect(() => rng.int(2.5)).toThrow(RangeError);
  });
});

describe('permutation', () => {
  it('returns each index once and is reproducible', () => {
    const p = permutation(1000, createRng(1));
    expect([...p].sort((x, y) => x - y)).toEqual(Array.from({ length: 1000 }, (_, i) => i));
    expect(permutation(1000, createRng(1))).toEqual(p);
    expect(permutation(0, createRng(1)).length).toBe(0);
  });

  it('puts every element in every position about equally often', () => {
    // Uniform permutations: each of the 3! = 6 orders has probability 1/6 (Knuth, TAOCP 2, §3.4.2).
    const rng = createRng(11);
    const seen = new Map<string, number>();
    const n = 60_000;
    for (let i = 0; i < n; i++) {
      const key = permutation(3, rng).join('');
      seen.set(key, (seen.get(key) ?? 0) + 1);
    }
    expect(seen.size).toBe(6);
    // chi-square, 5 df, 0.999 quantile 20.52 (chi-square table, NIST/SEMATECH e-Handbook §1.3.6.7.4)
    const chi2 = [...seen.values()].reduce((acc, c) => acc + (c - n / 6) ** 2 / (n / 6), 0);
    expect(chi2).toBeLessThan(20.52);
  });
});
