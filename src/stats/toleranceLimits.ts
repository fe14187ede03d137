// Normal tolerance limits: an interval that contains at least a proportion p of the population with
// confidence γ (ISO 16269-6:2014, Statistical interpretation of data — Determination of statistical
// tolerance intervals; Hahn, G. J. & Meeker, W. Q. 1991, Statistical Intervals, Wiley, ch. 4).
// Limits x̄ ± k·s (s the n − 1 SD). Factors (closed-form approximations, checked in the tests against
// the exact factors computed with scipy):
//   one-sided, k1 = (z_p + √(z_p² − a·b))/a, a = 1 − z_γ²/(2(n − 1)), b = z_p² − z_γ²/n
//     (Natrella, M. G. 1963, Experimental Statistics, NBS Handbook 91, §2-5; exact: the noncentral t
//     quantile t'(γ; n − 1, z_p√n)/√n);
//   two-sided, k2 = √((n − 1)(1 + 1/n)·z²_((1+p)/2) / χ²(1 − γ; n − 1))
//     (Howe, W. G. 1969, "Two-sided tolerance limits for normal populations — some improvements",
//     JASA 64:610–620; exact: Odeh & Owen 1980, as tabled in ISO 16269-6 Annex).
import { chiSquareQuantile, normalQuantile } from './distributions.ts';
import { StatsInputError } from './descriptive.ts';

function check(n: number, p: number, gamma: number) {
  if (!Number.isInteger(n) || n < 3) throw new StatsInputError('tolerance limits need at least 3 values');
  if (!(p > 0 && p < 1)) throw new StatsInputError('the proportion covered must be in (0, 1)');
  if (!(gamma > 0 && gamma < 1)) throw new StatsInputError('the confidence must be in (0, 1)');
}

/** One-sided normal tolerance factor k1 (Natrella 1963; see header). */
export function oneSidedToleranceFactor(n: number, p: number, gamma: number): number {
  check(n, p, gamma);
  const zp = normalQuantile(p);
  const zg = normalQuantile(gamma);
  const a = 1 - (zg * zg) / (2 * (n - 1));
  const b = zp * zp - (zg * zg) / n;
  if (!(a > 0) || zp * zp - a * b < 0) throw new StatsInputError(`too few values (${n}) for a one-sided tolerance limit at these levels`);
  return (zp + Math.sqrt(zp * zp - a * b)) / a;
}

/** Two-sided normal tolerance factor k2 (Howe 1969; see header). */
export function twoSidedToleranceFactor(n: number, p: number, gamma: number): number {
  check(n, p, gamma);
  const z = normalQuantile((1 + p) / 2);
  return Math.sqrt(((n - 1) * (1 + 1 / n) * z * z) / chiSquareQuantile(1 - gamma, n - 1));
}
