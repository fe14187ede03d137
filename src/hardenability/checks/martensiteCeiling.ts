// Certificate check: the quenched end cannot be much harder than fully martensitic steel of the same
// carbon. IH(C) (ASTM A255 initial hardness, 99.9 % martensite; see martensite.ts) is the EXPECTED
// hardness of such steel, not a sharp upper bound: readings scatter about it, and published H-bands put
// their quenched-end maximum above it. The tolerances are read off those bands (martensite.ts): a
// reading up to 3.5 HRC over IH passes (a band's maximum at the grade's maximum carbon is at most 3.4
// over IH there); up to 7 HRC over it is worth a look (a heat reading its band's maximum at the grade's
// minimum carbon, at most 6.4 over); beyond that the curve is not plausible for its carbon.

import { OutsideMethodError } from '../errors.ts';
import { martensiteBounds, QUENCHED_END_FAIL_ABOVE_IH_HRC, QUENCHED_END_WARN_ABOVE_IH_HRC } from '../martensite.ts';
import { sortedReadings } from '../distances.ts';
import type { CheckEvidence, Reading } from '../types.ts';
import { describeDistance } from '../distances.ts';

export interface CeilingOptions {
  /** Excess over IH(C) that is worth a look (default QUENCHED_END_WARN_ABOVE_IH_HRC, 3.5 HRC). */
  warnAboveHrc?: number;
  /** Excess over IH(C) that the curve cannot be explained by (default QUENCHED_END_FAIL_ABOVE_IH_HRC, 7 HRC). */
  failAboveHrc?: number;
}

export function checkMartensiteCeiling(
  readings: readonly Reading[],
  carbon: number,
  options: CeilingOptions = {},
): CheckEvidence<{ carbon: number; ceilingHrc: number | null; hardestMm: number | null; hardestHrc: number | null; excess: number | null; carbonFlags: string[] }> {
  const warnAbove = options.warnAboveHrc ?? QUENCHED_END_WARN_ABOVE_IH_HRC;
  const failAbove = options.failAboveHrc ?? QUENCHED_END_FAIL_ABOVE_IH_HRC;
  const title = 'Quenched-end hardness plausible for the carbon content';
  const threshold = { warnAboveHrc: warnAbove, failAboveHrc: failAbove, reference: 'ASTM A255 initial hardness IH(C), fully martensitic; tolerances from published H-bands at their carbon limits' };
  const r = sortedReadings(readings);
  if (r.length === 0) {
    return { check: 'martensite_ceiling', title, verdict: 'not_applicable', summary: 'no readings', threshold, values: { carbon, ceilingHrc: null, hardestMm: null, hardestHrc: null, excess: null, carbonFlags: [] } };
  }
  let bounds;
  try {
    bounds = martensiteBounds(carbon);
  } catch (e) {
    if (e instanceof OutsideMethodError) {
      return { check: 'martensite_ceiling', title, verdict: 'not_applicable', summary: e.message, threshold, values: { carbon, ceilingHrc: null, hardestMm: null, hardestHrc: null, excess: null, carbonFlags: [] } };
    }
    throw e;
  }
  const hardest = r.reduce((m, p) => (p.hrc > m.hrc ? p : m), r[0]);
  const ceiling = bounds.fullyMartensiticHrc;
  const excess = hardest.hrc - ceiling;
  const verdict = excess > failAbove ? 'fail' : excess > warnAbove ? 'warn' : 'pass';
  const carbonFlags = bounds.outOfRange.map((f) => f.note);
  const c = ceiling.toFixed(1);
  const summary =
    `hardest reading ${hardest.hrc} HRC at ${describeDistance(hardest.mm, hardest.label)} is ` +
    (excess <= 0 ? `at or below` : `${excess.toFixed(1)} HRC above`) +
    ` ${c} HRC, the expected hardness of fully martensitic steel with ${carbon} % C` +
    (verdict === 'pass' ? '.' : verdict === 'warn' ? ` (more than ${warnAbove} HRC above: worth a look).` : ` (more than ${failAbove} HRC above: not plausible for this carbon).`);
  return {
    check: 'martensite_ceiling',
    title,
    verdict,
    summary: carbonFlags.length ? `${summary} Note: ${carbonFlags.join('; ')}.` : summary,
    threshold,
    values: { carbon, ceilingHrc: ceiling, hardestMm: hardest.mm, hardestHrc: hardest.hrc, excess, carbonFlags },
  };
}
