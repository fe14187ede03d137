// Nonparametric bootstrap, percentile interval: resample the n values with replacement B times
// (seeded), recompute the statistic, and take its α/2 and 1 − α/2 quantiles (Hyndman & Fan type 7).
// Efron, B. & Tibshirani, R. J. (1993), An Introduction to the Bootstrap, Chapman & Hall, ch. 6 and 13.
// Replicates where the statistic is undefined (null or not finite) are counted and left out.
import { StatsInputError, quantileSorted } from './descriptive.ts';
import { createRng } from './random.ts';

export interface BootstrapInterval {
  lower: number;
  upper: number;
  confidence: number;
  replicates: number;
  /** Replicates in which the statistic could not be computed (left out). */
  failed: number;
  seed: number;
  method: 'bootstrap-percentile';
}

/**
 * Percentile bootstrap intervals of one or more statistics of one sample, from the same resamples (see
 * header); an entry is null when fewer than half the replicates give it a value.
 */
export function bootstrapPercentile(
  values: readonly number[],
  statistic: (sample: number[]) => ReadonlyArray<number | null> | null,
  options: { replicates?: number; seed?: number; confidence?: number } = {},
): Array<BootstrapInterval | null> {
  const replicates = options.replicates ?? 500;
  const seed = options.seed ?? 20261204;
  const confidence = options.confidence ?? 0.95;
  if (!Number.isInteger(replicates) || replicates < 50) throw new StatsInputError('a bootstrap needs a whole number of at least 50 replicates');
  if (!(confidence > 0 && confidence < 1)) throw new StatsInputError('confidence must be in (0, 1)');
  const n = values.length;
  if (n < 2) throw new StatsInputError('a bootstrap needs at least 2 values');
  const rng = createRng(seed);
  const out: number[][] = [];
  const sample = new Array<number>(n);
  for (let b = 0; b < replicates; b++) {
    for (let i = 0; i < n; i++) sample[i] = values[rng.int(n)];
    let v: ReadonlyArray<number | null> | null;
    try {
      v = statistic(sample);
    } catch {
      v = null;
    }
    (v ?? []).forEach((x, k) => {
      if (!out[k]) out[k] = [];
      if (x !== null && Number.isFinite(x)) out[k].push(x);
    });
  }
  const a = (1 - confidence) / 2;
  const width = Math.max(0, ...out.map((_, k) => k + 1));
  return Array.from({ length: width }, (_, k) => {
    const got = out[k] ?? [];
    if (got.length < replicates / 2) return null;
    const sorted = Float64Array.from(got).sort();
    return { lower: quantileSorted(sorted, a), upper: quantileSorted(sorted, 1 - a), confidence, replicates, failed: replicates - got.length, seed, method: 'bootstrap-percentile' as const };
  });
}
