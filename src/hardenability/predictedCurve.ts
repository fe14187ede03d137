// Shared finishing steps of the published curve predictors: validate requested distances, flag
// chemistry outside a validity table, and make the curve non-increasing by weighted PAVA
// (Barlow et al. 1972) when a regression formula is not monotone by itself.

import { isotonicRegression } from '../stats/isotonic.ts';
import { HardenabilityInputError } from './errors.ts';
import type { ChemicalElement, Chemistry, PredictedPoint, RangeFlag } from './types.ts';

export type ValidityTable = Partial<Record<ChemicalElement, { min?: number; max?: number; note: string }>>;

/** Sorted unique positive distances; throws on anything else. */
export function requestedDistances(distancesMm: readonly number[]): number[] {
  if (distancesMm.length === 0) throw new HardenabilityInputError('ask for at least one distance');
  for (const d of distancesMm) {
    if (!Number.isFinite(d) || d <= 0) throw new HardenabilityInputError(`requested distance ${d} mm is not positive`);
  }
  return [...new Set(distancesMm)].sort((a, b) => a - b);
}

/** Elements outside a validity table (missing elements are not flagged here). */
export function flagChemistry(chem: Chemistry, table: ValidityTable): RangeFlag[] {
  const flags: RangeFlag[] = [];
  for (const [el, r] of Object.entries(table) as [ChemicalElement, { min?: number; max?: number; note: string }][]) {
    const v = chem[el];
    if (v === undefined) continue;
    if ((r.min !== undefined && v < r.min) || (r.max !== undefined && v > r.max)) {
      flags.push({ quantity: el, value: v, min: r.min, max: r.max, note: r.note });
    }
  }
  return flags;
}

/** Refuse negative or non-finite chemistry. */
export function assertChemistry(chem: Chemistry): void {
  for (const [el, v] of Object.entries(chem)) {
    if (v !== undefined && (!Number.isFinite(v) || v < 0)) {
      throw new HardenabilityInputError(`${el} = ${v} wt% is not a valid content`);
    }
  }
}

/** Make raw predicted points (sorted by mm) non-increasing; mark the points PAVA moved. */
export function monotoneCurve(raw: readonly { mm: number; hrc: number }[]): { points: PredictedPoint[]; adjusted: boolean } {
  if (raw.length === 0) return { points: [], adjusted: false };
  const fit = isotonicRegression(
    raw.map((p) => p.hrc),
    { direction: 'non-increasing' },
  );
  const points = raw.map((p, i) => ({
    mm: p.mm,
    hrc: fit.fitted[i],
    adjustedForMonotonicity: Math.abs(fit.fitted[i] - p.hrc) > 1e-9,
  }));
  return { points, adjusted: !fit.alreadyMonotone };
}
