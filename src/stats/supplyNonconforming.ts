// Nonconforming share of a supply drawn from several mills, without one index over the mixture.
// A capability index needs one process (rational subgrouping: Montgomery, Introduction to Statistical
// Quality Control, §6.2.4; AIAG SPC manual 2nd ed., ch. I): pooled over mills with different means it
// can read better than every mill on its own, and its normal-model PPM misstates the mixture's tails.
// So each mill keeps its own indices, and the supply-level figure is the share outside the band of
// the mixture, the heat-weighted sum of the mills' shares:
//   p = Σ w_m p_m,  w_m = n_m / Σ n (the mills' shares of the heats, taken as the supply mix),
//   p_m = Φ((LSL − x̄_m)/s_m) + Φ((x̄_m − USL)/s_m)  (normal model of each mill, overall n − 1 SD).
// Interval: generalized pivotal quantities (Weerahandi, S. 1993, "Generalized confidence intervals",
// JASA 88:899–905; for normal tail probabilities Krishnamoorthy, K. & Mathew, T. 2009, Statistical
// Tolerance Regions, Wiley, §2.4): per mill R_σ = s·√((n − 1)/U), U ~ χ²(n − 1), and
// R_μ = x̄ − Z·R_σ/√n, Z ~ N(0, 1); R_p = Φ((LSL − R_μ)/R_σ) + Φ((R_μ − USL)/R_σ); the interval is the
// α/2 and 1 − α/2 quantiles (Hyndman & Fan type 7) of Σ w_m R_p,m over seeded draws. The weights are
// held fixed (the mix is taken as known); the normal model of each mill is an assumption the mills'
// own normality checks speak to.
import { normalCdf } from './distributions.ts';
import { StatsInputError, quantileSorted } from './descriptive.ts';
import { createRng } from './random.ts';
import { chiSquareDeviate } from './randomVariates.ts';

export interface SupplyPart {
  name: string;
  n: number;
  mean: number;
  sd: number;
}

export interface SupplyPartShare {
  name: string;
  n: number;
  weight: number;
  /** Expected share outside the band (0..1), normal model. */
  fraction: number;
  lower: number;
  upper: number;
}

export interface SupplyShare {
  /** Heat-weighted expected share outside the band (0..1). */
  fraction: number;
  lower: number;
  upper: number;
  confidence: number;
  parts: SupplyPartShare[];
  draws: number;
  seed: number;
  method: string;
}

function outside(mu: number, sigma: number, lsl: number | null, usl: number | null): number {
  return (lsl === null ? 0 : normalCdf((lsl - mu) / sigma)) + (usl === null ? 0 : normalCdf((mu - usl) / sigma));
}

/** Supply-level expected share outside the band with its generalized interval (see header). */
export function supplyNonconforming(
  parts: readonly SupplyPart[],
  band: { lsl: number | null; usl: number | null },
  options: { confidence?: number; draws?: number; seed?: number } = {},
): SupplyShare {
  const confidence = options.confidence ?? 0.95;
  const draws = options.draws ?? 4000;
  const seed = options.seed ?? 20261204;
  if (parts.length === 0) throw new StatsInputError('a supply needs at least one mill');
  if (band.lsl === null && band.usl === null) throw new StatsInputError('a specification band needs an LSL, a USL or both');
  if (!(confidence > 0 && confidence < 1)) throw new StatsInputError('confidence must be in (0, 1)');
  if (!Number.isInteger(draws) || draws < 100) throw new StatsInputError('draws must be a whole number of at least 100');
  for (const p of parts) {
    if (!Number.isInteger(p.n) || p.n < 2) throw new StatsInputError(`${p.name}: at least 2 heats are needed`);
    if (!(p.sd > 0) || !Number.isFinite(p.mean)) throw new StatsInputError(`${p.name}: needs a finite mean and a positive SD`);
  }
  const total = parts.reduce((a, p) => a + p.n, 0);
  const weights = parts.map((p) => p.n / total);
  const rng = createRng(seed);
  const sums = new Float64Array(draws);
  const perPart = parts.map(() => new Float64Array(draws));
  for (let b = 0; b < draws; b++) {
    let s = 0;
    parts.forEach((p, m) => {
      const rSigma = p.sd * Math.sqrt((p.n - 1) / chiSquareDeviate(p.n - 1, rng));
      const rMu = p.mean - (rng.normal() * rSigma) / Math.sqrt(p.n);
      const r = outside(rMu, rSigma, band.lsl, band.usl);
      perPart[m][b] = r;
      s += weights[m] * r;
    });
    sums[b] = s;
  }
  const a = (1 - confidence) / 2;
  const bounds = (v: Float64Array) => {
    const sorted = v.slice().sort();
    return { lower: quantileSorted(sorted, a), upper: quantileSorted(sorted, 1 - a) };
  };
  const partShares = parts.map((p, m) => ({ name: p.name, n: p.n, weight: weights[m], fraction: outside(p.mean, p.sd, band.lsl, band.usl), ...bounds(perPart[m]) }));
  return {
    fraction: partShares.reduce((acc, p) => acc + p.weight * p.fraction, 0),
    ...bounds(sums),
    confidence,
    parts: partShares,
    draws,
    seed,
    method: 'heat-weighted sum of each mill’s normal-model share outside the band; interval by generalized pivotal quantities (Weerahandi 1993), weights held fixed',
  };
}
