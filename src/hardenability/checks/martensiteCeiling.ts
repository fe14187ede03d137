// Certificate check: no reading can be harder than fully martensitic steel of the same carbon.
// Ceiling: ASTM A255 initial hardness IH(C) (99.9 % martensite); see martensite.ts for sources.
// A reading above the ceiling by more than the tolerance (default 2 HRC: about the scatter of the
// ceiling relation plus Rockwell reading scatter; common practice) fails; within it, warns.

import { OutsideMethodError } from '../errors.ts';
import { martensiteBounds } from '../martensite.ts';
import { sortedReadings } from '../distances.ts';
import type { CheckEvidence, Reading } from '../types.ts';
import { describeDistance } from '../distances.ts';

export interface CeilingOptions {
  toleranceHrc?: number;
}

export function checkMartensiteCeiling(
  readings: readonly Reading[],
  carbon: number,
  options: CeilingOptions = {},
): CheckEvidence<{ carbon: number; ceilingHrc: number | null; hardestMm: number | null; hardestHrc: number | null; excess: number | null; carbonFlags: string[] }> {
  const tol = options.toleranceHrc ?? 2;
  const title = 'Quenched-end hardness not above fully martensitic steel of this carbon';
  const threshold = { toleranceHrc: tol, ceiling: 'ASTM A255 initial hardness IH(C)' };
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
  const verdict = excess > tol ? 'fail' : excess > 0 ? 'warn' : 'pass';
  const carbonFlags = bounds.outOfRange.map((f) => f.note);
  const c = ceiling.toFixed(1);
  const summary =
    verdict === 'pass'
      ? `hardest reading ${hardest.hrc} HRC at ${describeDistance(hardest.mm, hardest.label)} is at or below ${c} HRC, fully martensitic hardness for ${carbon} % C.`
      : `hardest reading ${hardest.hrc} HRC at ${describeDistance(hardest.mm, hardest.label)} is ${excess.toFixed(1)} HRC above ${c} HRC, fully martensitic hardness for ${carbon} % C${verdict === 'warn' ? ` (within the ${tol} HRC tolerance)` : ''}.`;
  return {
    check: 'martensite_ceiling',
    title,
    verdict,
    summary: carbonFlags.length ? `${summary} Note: ${carbonFlags.join('; ')}.` : summary,
    threshold,
    values: { carbon, ceilingHrc: ceiling, hardestMm: hardest.mm, hardestHrc: hardest.hrc, excess, carbonFlags },
  };
}
