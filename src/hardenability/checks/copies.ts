// Certificate check: the same end-quench curve, or the same chemistry, already reported for another
// heat of the same mill (a possible copied certificate). Pure function over candidate heats passed
// in. Two heats really made apart rarely agree on every reading or every element; agreement to the
// last reported digit is evidence for a person to look at, not proof.
// "Exact": every common value identical. "Near": every common value within a rounding tolerance
// (default: half a unit of the usual reporting step, i.e. 0.5 HRC and 0.005 wt% for major elements).

import type { ChemicalElement, CheckEvidence, Chemistry, Reading } from '../types.ts';

export interface HeatRecord {
  heatId: string;
  millId: string;
  readings?: readonly Reading[];
  chemistry?: Chemistry;
}

export interface CopyOptions {
  /** Largest difference (HRC) still counted as "near". Default 0.5. */
  curveToleranceHrc?: number;
  /** Largest difference (wt%) per element still counted as "near". */
  chemistryTolerance?: Partial<Record<ChemicalElement, number>>;
  /** Fewest common distances for a curve comparison to count. Default 6. */
  minCommonReadings?: number;
  /** Fewest common elements for a chemistry comparison to count. Default 6. */
  minCommonElements?: number;
}

/** Default "near" tolerances: half a unit of the usual last reported digit (wt%). */
export const DEFAULT_CHEMISTRY_TOLERANCE: Record<ChemicalElement, number> = {
  C: 0.005, Mn: 0.005, Si: 0.005, Cr: 0.005, Ni: 0.005, Mo: 0.005, Cu: 0.005,
  P: 0.0005, S: 0.0005, V: 0.0005, Al: 0.0005, Ti: 0.0005, Nb: 0.0005,
  B: 0.00005, N: 0.00005,
};

export interface CopyMatch {
  otherHeatId: string;
  kind: 'curve_exact' | 'curve_near' | 'chemistry_exact' | 'chemistry_near';
  compared: number;
  /** Largest absolute difference over the compared values. */
  largestDifference: number;
}

function compareCurves(a: readonly Reading[], b: readonly Reading[]): { n: number; maxDiff: number } {
  let n = 0;
  let maxDiff = 0;
  for (const p of a) {
    const q = b.find((r) => Math.abs(r.mm - p.mm) <= 1e-6);
    if (!q) continue;
    n++;
    maxDiff = Math.max(maxDiff, Math.abs(p.hrc - q.hrc));
  }
  return { n, maxDiff };
}

export function findPossibleCopies(
  target: HeatRecord,
  candidates: readonly HeatRecord[],
  options: CopyOptions = {},
): CheckEvidence<{ matches: CopyMatch[]; candidatesCompared: number }> {
  const curveTol = options.curveToleranceHrc ?? 0.5;
  const chemTol = { ...DEFAULT_CHEMISTRY_TOLERANCE, ...options.chemistryTolerance };
  const minR = options.minCommonReadings ?? 6;
  const minE = options.minCommonElements ?? 6;
  const pool = candidates.filter((c) => c.millId === target.millId && c.heatId !== target.heatId);
  const matches: CopyMatch[] = [];
  for (const c of pool) {
    if (target.readings && c.readings) {
      const { n, maxDiff } = compareCurves(target.readings, c.readings);
      if (n >= minR && maxDiff <= curveTol + 1e-12) {
        matches.push({ otherHeatId: c.heatId, kind: maxDiff === 0 ? 'curve_exact' : 'curve_near', compared: n, largestDifference: maxDiff });
      }
    }
    if (target.chemistry && c.chemistry) {
      let n = 0;
      let maxDiff = 0;
      let allNear = true;
      for (const [el, v] of Object.entries(target.chemistry) as [ChemicalElement, number][]) {
        const w = c.chemistry[el];
        if (w === undefined || v === undefined) continue;
        n++;
        const d = Math.abs(v - w);
        maxDiff = Math.max(maxDiff, d);
        if (d > chemTol[el] + 1e-12) allNear = false;
      }
      if (n >= minE && allNear) {
        matches.push({ otherHeatId: c.heatId, kind: maxDiff === 0 ? 'chemistry_exact' : 'chemistry_near', compared: n, largestDifference: maxDiff });
      }
    }
  }
  // A whole certificate repeated (curve and chemistry of the same other heat) fails; one exact repeat
  // alone is worth a look (a coarsely rounded curve can repeat by chance); near matches alone pass
  // and stay listed.
  const exact = matches.filter((m) => m.kind.endsWith('_exact'));
  const byHeat = (kind: 'curve' | 'chemistry') => new Set(matches.filter((m) => m.kind.startsWith(kind)).map((m) => m.otherHeatId));
  const curveHeats = byHeat('curve');
  const whole = [...byHeat('chemistry')].some((id) => curveHeats.has(id));
  const verdict = whole ? 'fail' : exact.length ? 'warn' : 'pass';
  const summary = matches.length
    ? matches
        .map((m) => `${m.kind.replace('_', ' ')} with heat ${m.otherHeatId} (${m.compared} values, largest difference ${Number(m.largestDifference.toFixed(4))})`)
        .join('; ') + '.'
    : `no other heat of mill ${target.millId} among ${pool.length} compared has the same curve or chemistry.`;
  return {
    check: 'possible_copy',
    title: 'Curve or chemistry not already reported for another heat of the same mill',
    verdict,
    summary,
    threshold: { curveToleranceHrc: curveTol, minCommonReadings: minR, minCommonElements: minE },
    values: { matches, candidatesCompared: pool.length },
  };
}
