// Probability distributions from @stdlib (precise in the far tails; see DEVELOPERS.md).
import normal from '@stdlib/stats-base-dists-normal';
import t from '@stdlib/stats-base-dists-t';
import chisquare from '@stdlib/stats-base-dists-chisquare';
import f from '@stdlib/stats-base-dists-f';
import beta from '@stdlib/stats-base-dists-beta';

/** Standard normal CDF Φ(x). */
export const normalCdf = (x: number): number => normal.cdf(x, 0, 1);
/** Standard normal density φ(x). */
export const normalPdf = (x: number): number => normal.pdf(x, 0, 1);
/** Standard normal quantile Φ⁻¹(p). */
export const normalQuantile = (p: number): number => normal.quantile(p, 0, 1);
export const tCdf = (x: number, df: number): number => t.cdf(x, df);
export const tQuantile = (p: number, df: number): number => t.quantile(p, df);
export const chiSquareCdf = (x: number, df: number): number => chisquare.cdf(x, df);
export const chiSquareQuantile = (p: number, df: number): number => chisquare.quantile(p, df);
export const fCdf = (x: number, d1: number, d2: number): number => f.cdf(x, d1, d2);
export const fQuantile = (p: number, d1: number, d2: number): number => f.quantile(p, d1, d2);
export const betaCdf = (x: number, a: number, b: number): number => beta.cdf(x, a, b);
export const betaQuantile = (p: number, a: number, b: number): number => beta.quantile(p, a, b);
