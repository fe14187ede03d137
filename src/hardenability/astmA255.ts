// End-quench curve calculated from chemistry by the ASTM A255 method (after M. A. Grossmann,
// "Hardenability calculated from chemical composition", Trans. AIME 150 (1942) 227-259).
// Sources:
// - ASTM A255-10, calculation method: validity range (§1.3: C 0.10-0.70, Mn 0.50-1.65,
//   Si 0.15-0.60, Ni <= 1.50, Cr <= 1.35, Mo <= 0.55, Cu <= 0.35, V <= 0.20 wt%), multiplying-factor
//   equations (grain size 7) and their extended ranges for melting control (C <= 0.90,
//   Mn <= 1.95, Si <= 2.00, Ni <= 3.50, Cr <= 2.50, Cu <= 0.55, Mo <= 0.55, V <= 0.20), the initial
//   hardness polynomial IH(C), and distance hardness DH = IH / DF(DI, distance).
// - Dividing factors: the 5th-order polynomials in DI (mm) for 3..50 mm given with the metric form
//   of the method (transcribed from a secondary copy; not checked against the printed standard).
//   They behave (DF >= 1, rising with distance) only for DI about 25-55 mm, and even there they are not
//   trustworthy beyond the quenched end: on mid-range chemistry of EN 10084 16MnCr5+H (DI 39 mm) they
//   put 9 mm 3 HRC under the band minimum, where measured curves sit mid-band. So they are offered
//   only inside 25-55 mm, never clamped (outside, the distances are omitted with the reason), and the
//   published predictor (src/analysis/publishedPredictor.ts) does not use them: it takes from A255
//   the ideal diameter and the quenched-end hardness (DF = 1 at J1, i.e. IH) only. Between tabulated
//   distances DF is interpolated by Fritsch & Carlson (1980) monotone cubics.
// - Grain size other than 7: base (carbon) DI multiplied by 1.08^(7 - G), i.e. about 8 % higher
//   per number coarser, read from Grossmann's carbon/grain-size chart (medium confidence).
// - Boron steels: A255 needs a separate boron factor (not implemented): flagged outside the method.

import { monotoneCubic } from '../stats/monotoneInterpolation.ts';
import { OutsideMethodError, HardenabilityInputError } from './errors.ts';
import { QUENCHED_END_MAX_MM } from './distances.ts';
import { initialHardness } from './martensite.ts';
import { assertChemistry, flagChemistry, monotoneCurve, requestedDistances } from './predictedCurve.ts';
import type { ValidityTable } from './predictedCurve.ts';
import type { ChemicalElement, Chemistry, PredictedCurve, RangeFlag } from './types.ts';

export const A255_SOURCE =
  'ASTM A255-10, calculation of hardenability from chemical composition (Grossmann 1942)';

/** ASTM A255 §1.3: compositions for which the calculation applies (wt%). */
export const A255_VALIDITY: ValidityTable = {
  C: { min: 0.1, max: 0.7, note: 'ASTM A255 §1.3 calculation range' },
  Mn: { min: 0.5, max: 1.65, note: 'ASTM A255 §1.3 calculation range' },
  Si: { min: 0.15, max: 0.6, note: 'ASTM A255 §1.3 calculation range' },
  Ni: { max: 1.5, note: 'ASTM A255 §1.3 calculation range' },
  Cr: { max: 1.35, note: 'ASTM A255 §1.3 calculation range' },
  Mo: { max: 0.55, note: 'ASTM A255 §1.3 calculation range' },
  Cu: { max: 0.35, note: 'ASTM A255 §1.3 calculation range' },
  V: { max: 0.2, note: 'ASTM A255 §1.3 calculation range' },
};

/** Extended ranges over which the factor equations are defined at all (beyond: refused). */
export const A255_FACTOR_DOMAIN: Record<A255Element, { min: number; max: number }> = {
  C: { min: 0.01, max: 0.9 },
  Mn: { min: 0, max: 1.95 },
  Si: { min: 0, max: 2.0 },
  Ni: { min: 0, max: 3.5 },
  Cr: { min: 0, max: 2.5 },
  Mo: { min: 0, max: 0.55 },
  Cu: { min: 0, max: 0.55 },
  V: { min: 0, max: 0.2 },
};

export type A255Element = 'C' | 'Mn' | 'Si' | 'Ni' | 'Cr' | 'Mo' | 'Cu' | 'V';
export const A255_ELEMENTS: readonly A255Element[] = ['C', 'Mn', 'Si', 'Ni', 'Cr', 'Mo', 'Cu', 'V'];

/** Multiplying factor of one element (C: base DI in inches at grain size 7). */
export function a255Factor(element: A255Element, pct: number): number {
  const dom = A255_FACTOR_DOMAIN[element];
  if (!Number.isFinite(pct) || pct < dom.min || pct > dom.max) {
    throw new OutsideMethodError(
      `${element} = ${pct} % is outside ${dom.min}-${dom.max} %, where the ASTM A255 multiplying factor is defined`,
    );
  }
  switch (element) {
    case 'C':
      if (pct <= 0.39) return 0.54 * pct;
      if (pct <= 0.55) return 0.171 + 0.001 * pct + 0.265 * pct ** 2;
      if (pct <= 0.65) return 0.115 + 0.268 * pct - 0.038 * pct ** 2;
      if (pct <= 0.75) return 0.143 + 0.2 * pct;
      return 0.062 + 0.409 * pct - 0.135 * pct ** 2;
    case 'Mn':
      return pct <= 1.2 ? 1 + 3.3333 * pct : 5.1 * pct - 1.12;
    case 'Si':
      return 1 + 0.7 * pct;
    case 'Ni':
      return pct <= 1.5 ? 1 + 0.363 * pct : 0.3211 + 1.4501 * pct - 0.6119 * pct ** 2 + 0.1253 * pct ** 3;
    case 'Cr':
      return 1 + 2.16 * pct;
    case 'Mo':
      return 1 + 3.0 * pct;
    case 'Cu':
      return 1 + 0.365 * pct;
    case 'V':
      return 1 + 1.73 * pct;
  }
}

/** Base-DI multiplier for an ASTM E112 grain size number other than 7 (Grossmann's chart, ~8 %/number). */
export const grainSizeMultiplier = (grainSize: number): number => 1.08 ** (7 - grainSize);
/** Grain sizes for which the adjustment is offered (outside: flagged). */
export const GRAIN_SIZE_RANGE = { min: 5, max: 9 } as const;

export interface A255IdealDiameter {
  inches: number;
  mm: number;
  factors: Record<A255Element, number>;
  grainSize: number;
  grainSizeMultiplier: number;
  outOfRange: RangeFlag[];
  warnings: string[];
  /** True for boron-treated steel: the method without a boron factor does not apply. */
  outsideMethod: boolean;
}

export interface A255Options {
  /** ASTM E112 grain size number (default 7, the method's basis). */
  grainSize?: number;
  /** Set when the grade is boron-treated (e.g. "15B30"); boron >= 0.0005 % also triggers it. */
  boronTreated?: boolean;
  /** Refuse (throw) instead of flagging chemistry outside the validity range. */
  strict?: boolean;
}

/** Boron content from which a steel is treated as boron-treated (wt%; common practice). */
export const BORON_TREATED_FROM = 0.0005;

/** Ideal critical diameter DI = base DI(C, grain size) x product of alloy factors. */
export function a255IdealDiameter(chem: Chemistry, options: A255Options = {}): A255IdealDiameter {
  assertChemistry(chem);
  if (chem.C === undefined) throw new HardenabilityInputError('carbon is needed for the ASTM A255 calculation');
  const grainSize = options.grainSize ?? 7;
  if (!Number.isFinite(grainSize) || grainSize < 1 || grainSize > 12) {
    throw new HardenabilityInputError(`grain size ${grainSize} is not a plausible ASTM E112 number`);
  }
  const warnings: string[] = [];
  const outOfRange = flagChemistry(chem, A255_VALIDITY);
  const factors = {} as Record<A255Element, number>;
  for (const el of A255_ELEMENTS) {
    const v = chem[el as ChemicalElement];
    if (v === undefined) warnings.push(`${el} not reported: taken as 0`);
    factors[el] = a255Factor(el, v ?? 0);
  }
  if (grainSize !== 7) {
    warnings.push(`grain size ${grainSize}: base DI scaled by 1.08^(7 - G) from Grossmann's chart (approximate)`);
  }
  if (grainSize < GRAIN_SIZE_RANGE.min || grainSize > GRAIN_SIZE_RANGE.max) {
    outOfRange.push({ quantity: 'grain size', value: grainSize, ...GRAIN_SIZE_RANGE, note: 'grain-size adjustment offered for 5-9 only' });
  }
  const outsideMethod = options.boronTreated === true || (chem.B ?? 0) >= BORON_TREATED_FROM;
  if (outsideMethod) {
    const msg = 'boron-treated steel: the A255 calculation needs a boron factor, which this library does not have';
    if (options.strict) throw new OutsideMethodError(msg);
    warnings.push(msg);
  }
  if (options.strict && outOfRange.length > 0) {
    throw new OutsideMethodError(
      `chemistry outside the ASTM A255 calculation range: ${outOfRange.map((f) => `${f.quantity} ${f.value}`).join(', ')}`,
    );
  }
  const gm = grainSizeMultiplier(grainSize);
  const inches = A255_ELEMENTS.reduce((p, el) => p * factors[el], gm);
  return { inches, mm: inches * 25.4, factors, grainSize, grainSizeMultiplier: gm, outOfRange, warnings, outsideMethod };
}

// Dividing-factor polynomials: DF(distance) = sum_i c_i DI^i, DI in mm, i = 0..5.
const DF_POLYNOMIALS: readonly (readonly [number, readonly number[]])[] = [
  [3, [0.170547, 0.173925, -0.0109281, 3.13863e-4, -4.32086e-6, 2.31674e-8]],
  [5, [3.03987, -0.0855161, 0.00138048, -9.98717e-6, 2.64963e-8, 5.46044e-12]],
  [7, [4.32366, -0.134451, 0.00228151, -1.9625e-5, 8.35338e-8, -1.38456e-10]],
  [9, [4.46324, -0.0992003, 0.00119387, -7.40686e-6, 2.26087e-8, -2.46815e-11]],
  [11, [4.40915, -0.0792024, 6.74319e-4, -1.97223e-6, -3.21758e-9, 2.08025e-11]],
  [13, [4.60261, -0.0820023, 7.18416e-4, -2.528e-6, 2.30089e-10, 1.25368e-11]],
  [15, [5.01595, -0.0957696, 9.5624e-4, -4.62213e-6, 8.92787e-9, -8.74859e-13]],
  [20, [5.51133, -0.10431, 1.15299e-3, -7.51801e-6, 2.75126e-8, -4.311e-11]],
  [25, [6.15369, -0.127486, 1.57885e-3, -1.12233e-5, 4.21359e-8, -6.4246e-11]],
  [30, [7.16001, -0.171328, 2.4282e-3, -1.91259e-5, 7.6732e-8, -1.21571e-10]],
  [35, [8.46964, -0.229424, 3.54915e-3, -2.97166e-5, 1.24831e-7, -2.0543e-10]],
  [40, [9.13657, -0.252296, 3.94419e-3, -3.33383e-5, 1.41462e-7, -2.35541e-10]],
  [45, [8.84696, -0.223317, 3.25787e-3, -2.6293e-5, 1.0819e-7, -1.76244e-10]],
  [50, [8.10202, -0.171039, 2.12643e-3, -1.52754e-5, 5.78179e-8, -8.7989e-11]],
];

/** DI range (mm) where the dividing-factor polynomials are well behaved. */
export const DF_DI_RANGE_MM = { min: 25, max: 55 } as const;
/** Distance range (mm) covered by the dividing factors. */
export const DF_DISTANCE_RANGE_MM = { min: 1.5, max: 50 } as const;

const poly = (c: readonly number[], x: number): number => c.reduceRight((acc, ci) => acc * x + ci, 0);

export interface DividingFactors {
  diMm: number;
  /** DF at 1.5 mm (= 1) and at the tabulated distances. */
  knots: { mm: number; df: number }[];
  /** DF at a distance in 1.5..50 mm (monotone cubic between knots), or null outside. */
  at(mm: number): number | null;
}

/** Dividing factors for a DI (mm) inside DF_DI_RANGE_MM; outside it the polynomials do not apply (thrown). */
export function a255DividingFactors(diMm: number): DividingFactors {
  if (!Number.isFinite(diMm) || diMm <= 0) throw new HardenabilityInputError(`DI ${diMm} mm is not positive`);
  if (diMm < DF_DI_RANGE_MM.min || diMm > DF_DI_RANGE_MM.max) {
    throw new OutsideMethodError(
      `DI ${diMm.toFixed(1)} mm is outside ${DF_DI_RANGE_MM.min}-${DF_DI_RANGE_MM.max} mm, the only range where the dividing-factor polynomials behave`,
    );
  }
  const knots = [{ mm: 1.5, df: 1 }, ...DF_POLYNOMIALS.map(([mm, c]) => ({ mm, df: Math.max(1, poly(c, diMm)) }))];
  const f = monotoneCubic(
    knots.map((k) => k.mm),
    knots.map((k) => k.df),
  );
  return { diMm, knots, at: (mm) => f.at(mm) };
}

export interface A255CurveOptions extends A255Options {
  /** Distances (mm) at which to give the curve. */
  distancesMm: readonly number[];
}

export interface A255Curve extends PredictedCurve {
  initialHardnessHrc: number;
  factors: Record<A255Element, number>;
}


/**
 * The A255 calculated end-quench curve at the requested distances (mm): IH at the quenched end, IH/DF
 * beyond it where the dividing-factor polynomials apply (DI 25-55 mm); other distances are omitted with
 * the reason, never extrapolated or clamped.
 */
export function predictA255Curve(chem: Chemistry, options: A255CurveOptions): A255Curve {
  const distances = requestedDistances(options.distancesMm);
  const di = a255IdealDiameter(chem, options);
  const ih = initialHardness(chem.C as number);
  const warnings = [...di.warnings];
  const outOfRange = [...di.outOfRange];
  let dfs: DividingFactors | null = null;
  let noFactors = '';
  try {
    dfs = a255DividingFactors(di.mm);
  } catch (error) {
    if (!(error instanceof OutsideMethodError)) throw error;
    noFactors = error.message;
  }
  const raw: { mm: number; hrc: number }[] = [];
  const omitted: { mm: number; reason: string }[] = [];
  for (const mm of distances) {
    if (mm <= QUENCHED_END_MAX_MM) {
      raw.push({ mm, hrc: ih });
      continue;
    }
    const df = dfs?.at(mm) ?? null;
    if (dfs === null) omitted.push({ mm, reason: noFactors });
    else if (df === null) omitted.push({ mm, reason: `outside the ${DF_DISTANCE_RANGE_MM.min}-${DF_DISTANCE_RANGE_MM.max} mm covered by the dividing factors` });
    else raw.push({ mm, hrc: ih / df });
  }
  const { points, adjusted } = monotoneCurve(raw);
  if (adjusted) warnings.push('curve made non-increasing by isotonic regression (PAVA)');
  if (dfs) warnings.push('dividing factors from a secondary polynomial set, not checked against the printed standard');
  return {
    method: 'ASTM A255 calculated hardenability',
    source: A255_SOURCE,
    points,
    omitted,
    idealDiameter: { mm: di.mm, inches: di.inches },
    outOfRange,
    warnings,
    outsideMethod: di.outsideMethod,
    initialHardnessHrc: ih,
    factors: di.factors,
  };
}
