// End-quench curve from composition by Just's regression equations.
// Source: E. Just (1969), "New formulas for calculating hardenability curves", Metal Progress 96(5),
// 87-88 (read from a scanned copy):
//   inch form  J(E) = 98 sqrt(C) - 0.025 E^2 sqrt(C) + 20 Cr + 6.4 Ni + 19 Mn + 34 Mo + 28 V
//                     - 24 sqrt(E) + 2.86 E - 7            (HRC; E in sixteenths of an inch)
//   The paper excludes the region near the quenched end (E < 4/16 in); we use 4 <= E <= 32.
//   Quenched end (rule of thumb in the same paper): J0 = 60 sqrt(C) + 20, for 0.2-0.6 % C.
//   Composition range legible in our copy: Cr 0-1.55, Mo 0-0.52, V 0-0.2 %. The carbon, manganese
//   and nickel limits are not legible there; we use C 0.10-0.60, Mn 0.20-1.90, Ni 0-3.50 % (from
//   memory, low confidence).
// Metric form with grain size K (ASTM E112 number), FROM MEMORY (low confidence, not checked
// against a published copy):
//   J(E) = 95 sqrt(C) - 0.00276 E^2 sqrt(C) + 20 Cr + 38 Mo + 14 Mn + 5.5 Ni + 6.1 Si + 39 V
//          + 96 P - 0.81 K - 12.28 sqrt(E) + 0.898 E - 13     (E in mm, about 6-80 mm)
// The regression is not monotone in E for low carbon (the 2.86 E term wins at large E), so the
// curve is made non-increasing by isotonic regression (PAVA), and the points moved are marked.

import { MM_PER_SIXTEENTH } from './distances.ts';
import { HardenabilityInputError, OutsideMethodError } from './errors.ts';
import { assertChemistry, flagChemistry, monotoneCurve, requestedDistances } from './predictedCurve.ts';
import type { ValidityTable } from './predictedCurve.ts';
import type { Chemistry, PredictedCurve } from './types.ts';

export const JUST_SOURCE = 'E. Just (1969), Metal Progress 96(5) 87-88';

const LEGIBLE = 'Just (1969), composition range of the data';
const MEMORY = 'from memory (not legible in our copy of Just 1969); low confidence';
export const JUST_VALIDITY: ValidityTable = {
  C: { min: 0.1, max: 0.6, note: MEMORY },
  Mn: { min: 0.2, max: 1.9, note: MEMORY },
  Ni: { max: 3.5, note: MEMORY },
  Cr: { max: 1.55, note: LEGIBLE },
  Mo: { max: 0.52, note: LEGIBLE },
  V: { max: 0.2, note: LEGIBLE },
};

export type JustForm = 'inch' | 'metric';

/** Distance range of each form, in mm. */
export const JUST_DISTANCE_RANGE_MM: Record<JustForm, { min: number; max: number }> = {
  inch: { min: 4 * MM_PER_SIXTEENTH, max: 32 * MM_PER_SIXTEENTH },
  metric: { min: 6, max: 80 },
};

/** Just's inch form at E sixteenths of an inch (no range check). */
export function justInchHardness(chem: Chemistry, sixteenths: number): number {
  const c = Math.sqrt(chem.C ?? 0);
  const e = sixteenths;
  return (
    98 * c - 0.025 * e * e * c + 20 * (chem.Cr ?? 0) + 6.4 * (chem.Ni ?? 0) + 19 * (chem.Mn ?? 0) +
    34 * (chem.Mo ?? 0) + 28 * (chem.V ?? 0) - 24 * Math.sqrt(e) + 2.86 * e - 7
  );
}

/** Just's metric form at E mm with grain size K (from memory; no range check). */
export function justMetricHardness(chem: Chemistry, mm: number, grainSize: number): number {
  const c = Math.sqrt(chem.C ?? 0);
  return (
    95 * c - 0.00276 * mm * mm * c + 20 * (chem.Cr ?? 0) + 38 * (chem.Mo ?? 0) + 14 * (chem.Mn ?? 0) +
    5.5 * (chem.Ni ?? 0) + 6.1 * (chem.Si ?? 0) + 39 * (chem.V ?? 0) + 96 * (chem.P ?? 0) - 0.81 * grainSize -
    12.28 * Math.sqrt(mm) + 0.898 * mm - 13
  );
}

/** Just's quenched-end rule of thumb J0 = 60 sqrt(C) + 20 (0.2-0.6 % C; refused outside). */
export function justQuenchedEndHardness(carbon: number): number {
  if (!(carbon >= 0.2 && carbon <= 0.6)) {
    throw new OutsideMethodError(`Just's quenched-end rule is stated for 0.2-0.6 % C (got ${carbon})`);
  }
  return 60 * Math.sqrt(carbon) + 20;
}

export interface JustOptions {
  distancesMm: readonly number[];
  /** Default 'inch' (the published form); 'metric' is from memory. */
  form?: JustForm;
  /** ASTM E112 grain size number, metric form only (required there). */
  grainSize?: number;
  /** Refuse (throw) instead of flagging chemistry outside the validity range. */
  strict?: boolean;
}

/** Just (1969) predicted end-quench curve at the requested distances (mm). */
export function predictJust1969(chem: Chemistry, options: JustOptions): PredictedCurve {
  assertChemistry(chem);
  if (chem.C === undefined) throw new HardenabilityInputError("carbon is needed for Just's equation");
  const form = options.form ?? 'inch';
  if (form === 'metric' && (options.grainSize === undefined || !Number.isFinite(options.grainSize))) {
    throw new HardenabilityInputError("Just's metric form needs the grain size (ASTM E112 number)");
  }
  const distances = requestedDistances(options.distancesMm);
  const outOfRange = flagChemistry(chem, JUST_VALIDITY);
  if (options.strict && outOfRange.length > 0) {
    throw new OutsideMethodError(
      `chemistry outside Just's range: ${outOfRange.map((f) => `${f.quantity} ${f.value}`).join(', ')}`,
    );
  }
  const warnings: string[] = [];
  for (const el of ['Mn', 'Cr', 'Ni', 'Mo', 'V'] as const) {
    if (chem[el] === undefined) warnings.push(`${el} not reported: taken as 0`);
  }
  if (form === 'metric') warnings.push("metric form of Just's equation is given from memory (low confidence)");
  const range = JUST_DISTANCE_RANGE_MM[form];
  const raw: { mm: number; hrc: number }[] = [];
  const omitted: { mm: number; reason: string }[] = [];
  for (const mm of distances) {
    if (mm < range.min - 1e-9 || mm > range.max + 1e-9) {
      omitted.push({ mm, reason: `outside ${range.min.toFixed(2)}-${range.max.toFixed(2)} mm, the distance range of the ${form} form` });
      continue;
    }
    const hrc =
      form === 'inch' ? justInchHardness(chem, mm / MM_PER_SIXTEENTH) : justMetricHardness(chem, mm, options.grainSize as number);
    raw.push({ mm, hrc });
  }
  const { points, adjusted } = monotoneCurve(raw);
  if (adjusted) warnings.push('the regression rose with distance here; curve made non-increasing by isotonic regression (PAVA)');
  return {
    method: `Just (1969) regression, ${form} form`,
    source: JUST_SOURCE,
    points,
    omitted,
    idealDiameter: null,
    outOfRange,
    warnings,
    outsideMethod: false,
  };
}
