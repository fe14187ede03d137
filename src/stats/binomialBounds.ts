// Exact (Clopper–Pearson) confidence bounds for a binomial proportion, for Monte Carlo shares
// (x successes in n draws). Clopper, C. J. & Pearson, E. S. (1934), "The use of confidence or fiducial
// limits illustrated in the case of the binomial", Biometrika 26(4):404–413:
//   lower = Beta⁻¹(α/2; x, n − x + 1) (0 when x = 0), upper = Beta⁻¹(1 − α/2; x + 1, n − x) (1 when x = n).
// With x = n the lower bound is (α/2)^(1/n); with x = 0 the upper bound is 1 − (α/2)^(1/n)
// (about 3.7/n at 95 %, close to the "rule of three", Hanley & Lippman-Hand 1983, JAMA 249:1743).
import { betaQuantile } from './distributions.ts';
import { StatsInputError } from './descriptive.ts';

export interface ProportionBounds {
  successes: number;
  trials: number;
  estimate: number;
  lower: number;
  upper: number;
  confidence: number;
}

/** Two-sided Clopper–Pearson interval for x successes in n trials (see header). */
export function clopperPearson(successes: number, trials: number, confidence = 0.95): ProportionBounds {
  if (!Number.isInteger(trials) || trials < 1) throw new StatsInputError('trials must be a positive whole number');
  if (!Number.isInteger(successes) || successes < 0 || successes > trials) throw new StatsInputError('successes must be a whole number in [0, trials]');
  if (!(confidence > 0 && confidence < 1)) throw new StatsInputError('confidence must be in (0, 1)');
  const a = 1 - confidence;
  const x = successes;
  const n = trials;
  const lower = x === 0 ? 0 : x === n ? Math.pow(a / 2, 1 / n) : betaQuantile(a / 2, x, n - x + 1);
  const upper = x === n ? 1 : x === 0 ? 1 - Math.pow(a / 2, 1 / n) : betaQuantile(1 - a / 2, x + 1, n - x);
  return { successes: x, trials: n, estimate: x / n, lower, upper, confidence };
}
