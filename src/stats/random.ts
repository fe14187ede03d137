// Seeded pseudo-random numbers for reproducible splits and Monte Carlo.
//
// Sources:
// - xoshiro128** 1.1: D. Blackman & S. Vigna, "Scrambled linear pseudorandom number generators",
//   ACM Transactions on Mathematical Software 47(4), 2021 (reference C code at prng.di.unimi.it).
// - SplitMix64 (used only to expand a seed into the 128-bit state, as the xoshiro authors advise):
//   G. L. Steele, D. Lea & C. H. Flood, "Fast splittable pseudorandom number generators", OOPSLA 2014.
// - Doubles in [0,1) from 53 random bits (two 32-bit draws: 27 + 26 bits), as in the xoshiro notes.
// - Normal deviates: G. E. P. Box & M. E. Muller, "A note on the generation of random normal
//   deviates", Annals of Mathematical Statistics 29(2), 1958 (both deviates of a pair are used).
// - Shuffle: R. A. Fisher & F. Yates (1938); D. E. Knuth, TAOCP vol. 2, §3.4.2, Algorithm P.

/** A seeded stream of random numbers. Not cryptographic. */
export interface Rng {
  /** Uniform double in [0, 1) with 53 random bits. */
  next(): number;
  /** Standard normal deviate (mean 0, SD 1), Box–Muller. */
  normal(): number;
  /** Uniform integer in [0, n) without modulo bias (rejection sampling). */
  int(n: number): number;
  /** The raw 32-bit output of the underlying generator, as an unsigned integer. */
  nextUint32(): number;
}

export class InvalidSeedError extends Error {
  override name = 'InvalidSeedError';
}

const MASK64 = (1n << 64n) - 1n;

/** The first `count` outputs of SplitMix64 started at `seed` (taken modulo 2^64). */
export function splitMix64(seed: bigint, count: number): bigint[] {
  let state = BigInt.asUintN(64, seed);
  const out: bigint[] = [];
  for (let i = 0; i < count; i++) {
    state = (state + 0x9e3779b97f4a7c15n) & MASK64;
    let z = state;
    z = ((z ^ (z >> 30n)) * 0xbf58476d1ce4e5b9n) & MASK64;
    z = ((z ^ (z >> 27n)) * 0x94d049bb133111ebn) & MASK64;
    out.push(z ^ (z >> 31n));
  }
  return out;
}

const rotl = (x: number, k: number): number => ((x << k) | (x >>> (32 - k))) >>> 0;

/**
 * xoshiro128** from an explicit 128-bit state (four unsigned 32-bit words, not all zero).
 * Most callers want `createRng(seed)` instead.
 */
export function createRngFromState(state: readonly [number, number, number, number]): Rng {
  let [s0, s1, s2, s3] = state.map((w) => w >>> 0) as [number, number, number, number];
  if ((s0 | s1 | s2 | s3) === 0) throw new InvalidSeedError('xoshiro128** state must not be all zero');

  const nextUint32 = (): number => {
    const result = Math.imul(rotl(Math.imul(s1, 5) >>> 0, 7), 9) >>> 0;
    const t = (s1 << 9) >>> 0;
    s2 = (s2 ^ s0) >>> 0;
    s3 = (s3 ^ s1) >>> 0;
    s1 = (s1 ^ s2) >>> 0;
    s0 = (s0 ^ s3) >>> 0;
    s2 = (s2 ^ t) >>> 0;
    s3 = rotl(s3, 11);
    return result;
  };

  const next = (): number => {
    const hi = nextUint32() >>> 5; // 27 bits
    const lo = nextUint32() >>> 6; // 26 bits
    return (hi * 67108864 + lo) / 9007199254740992; // (hi·2^26 + lo) / 2^53
  };

  let spare: number | undefined;
  const normal = (): number => {
    if (spare !== undefined) {
      const z = spare;
      spare = undefined;
      return z;
    }
    const u1 = 1 - next(); // in (0, 1]: log is finite
    const u2 = next();
    const r = Math.sqrt(-2 * Math.log(u1));
    const theta = 2 * Math.PI * u2;
    spare = r * Math.sin(theta);
    return r * Math.cos(theta);
  };

  const int = (n: number): number => {
    if (!Number.isInteger(n) || n < 1 || n > 2 ** 32) {
      throw new RangeError(`int(n) needs an integer n in [1, 2^32], got ${n}`);
    }
    // Reject the top partial block of the 2^32 range so every residue is equally likely.
    const limit = 2 ** 32 - (2 ** 32 % n);
    for (;;) {
      const u = nextUint32();
      if (u < limit) return u % n;
    }
  };

  return { next, normal, int, nextUint32 };
}

/**
 * A reproducible random stream: the same seed always gives the same sequence.
 * The seed (any safe integer or bigint) is expanded to the 128-bit xoshiro128** state by SplitMix64.
 */
export function createRng(seed: number | bigint): Rng {
  if (typeof seed === 'number' && !Number.isSafeInteger(seed)) {
    throw new InvalidSeedError(`seed must be a safe integer or a bigint, got ${seed}`);
  }
  const [a, b] = splitMix64(BigInt(seed), 2) as [bigint, bigint];
  const words: [number, number, number, number] = [
    Number(a & 0xffffffffn),
    Number(a >> 32n),
    Number(b & 0xffffffffn),
    Number(b >> 32n),
  ];
  // SplitMix64 is a bijection per step, so two consecutive outputs are never both zero.
  return createRngFromState(words);
}

/** A uniformly random permutation of 0..n-1 (Fisher–Yates, Knuth's Algorithm P). */
export function permutation(n: number, rng: Rng): Int32Array {
  if (!Number.isInteger(n) || n < 0) throw new RangeError(`permutation size must be a non-negative integer, got ${n}`);
  const p = new Int32Array(n);
  for (let i = 0; i < n; i++) p[i] = i;
  for (let i = n - 1; i > 0; i--) {
    const j = rng.int(i + 1);
    const tmp = p[i];
    p[i] = p[j];
    p[j] = tmp;
  }
  return p;
}
