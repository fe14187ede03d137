// Certificate check: an end-quench curve must not rise with distance from the quenched end.
// Physics: cooling rate falls monotonically along the specimen (ASTM A255, ISO 642), so hardness
// cannot rise except by measurement scatter. A rise larger than the tolerance (default 2 HRC,
// common practice for Rockwell C readings on end-quench bars) is reported with the two readings.

import { sortedReadings } from '../distances.ts';
import { HardenabilityInputError } from '../errors.ts';
import type { CheckEvidence, Reading } from '../types.ts';

export interface CurveRise {
  fromMm: number;
  fromHrc: number;
  toMm: number;
  toHrc: number;
  rise: number;
}

export interface NonIncreasingOptions {
  /** Largest rise accepted as measurement scatter, HRC (default 2; common practice). */
  toleranceHrc?: number;
}

/** Every rise of a reading above the lowest reading nearer the quenched end. */
export function curveRises(readings: readonly Reading[]): CurveRise[] {
  const r = sortedReadings(readings);
  const rises: CurveRise[] = [];
  let lowest = 0;
  for (let j = 1; j < r.length; j++) {
    if (r[j].hrc > r[lowest].hrc) {
      rises.push({ fromMm: r[lowest].mm, fromHrc: r[lowest].hrc, toMm: r[j].mm, toHrc: r[j].hrc, rise: r[j].hrc - r[lowest].hrc });
    }
    if (r[j].hrc < r[lowest].hrc) lowest = j;
  }
  return rises;
}

export function checkCurveNonIncreasing(
  readings: readonly Reading[],
  options: NonIncreasingOptions = {},
): CheckEvidence<{ rises: CurveRise[]; largestRise: number }> {
  const tol = options.toleranceHrc ?? 2;
  if (!(tol >= 0)) throw new HardenabilityInputError('tolerance must be zero or positive');
  const title = 'Curve does not rise with distance from the quenched end';
  const threshold = { toleranceHrc: tol };
  if (readings.length < 2) {
    return { check: 'curve_non_increasing', title, verdict: 'not_applicable', summary: 'fewer than two readings', threshold, values: { rises: [], largestRise: 0 } };
  }
  const rises = curveRises(readings);
  const largestRise = rises.reduce((m, x) => Math.max(m, x.rise), 0);
  const big = rises.filter((x) => x.rise > tol);
  const verdict = big.length > 0 ? 'fail' : 'pass';
  const summary =
    big.length > 0
      ? `${big.length} reading(s) rise more than ${tol} HRC above a reading nearer the quenched end; largest ${fmt(largestRise)} HRC (${fmt(big[0].fromHrc)} at ${fmt(big[0].fromMm)} mm to ${fmt(big[0].toHrc)} at ${fmt(big[0].toMm)} mm).`
      : rises.length > 0
        ? `small rises up to ${fmt(largestRise)} HRC, within the ${tol} HRC measurement tolerance.`
        : 'the curve never rises.';
  return { check: 'curve_non_increasing', title, verdict, summary, threshold, values: { rises, largestRise } };
}

const fmt = (v: number): string => String(Number(v.toFixed(2)));
