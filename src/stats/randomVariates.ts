// Gamma and chi-square deviates from a seeded Rng (src/stats/random.ts).
// Gamma(shape a ≥ 1): Marsaglia, G. & Tsang, W. W. (2000), "A simple method for generating gamma
// variables", ACM Transactions on Mathematical Software 26(3):363–372: d = a − 1/3, c = 1/√(9d);
// repeat x ~ N(0,1), v = (1 + c·x)³ until v > 0 and ln U < x²/2 + d − d·v + d·ln v; return d·v.
// a < 1: Gamma(a + 1)·U^(1/a) (the same paper, §6). χ²(ν) = 2·Gamma(ν/2).
import { StatsInputError } from './descriptive.ts';
import type { Rng } from './random.ts';

/** A Gamma(shape, scale 1) deviate (see header). */
export function gammaDeviate(shape: number, rng: Rng): number {
  if (!(shape > 0) || !Number.isFinite(shape)) throw new StatsInputError('gamma shape must be a positive finite number');
  if (shape < 1) {
    const u = 1 - rng.next(); // in (0, 1]
    return gammaDeviate(shape + 1, rng) * Math.pow(u, 1 / shape);
  }
  const d = shape - 1 / 3;
  const c = 1 / Math.sqrt(9 * d);
  for (;;) {
    let x: number;
    let v: number;
    do {
      x = rng.normal();
      v = 1 + c * x;
    } while (v <= 0);
    v = v * v * v;
    const u = 1 - rng.next();
    if (Math.log(u) < 0.5 * x * x + d - d * v + d * Math.log(v)) return d * v;
  }
}

/** A chi-square deviate on ν degrees of freedom. */
export function chiSquareDeviate(df: number, rng: Rng): number {
  return 2 * gammaDeviate(df / 2, rng);
}
