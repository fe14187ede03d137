// Hardness of martensite as a function of carbon: a physical ceiling for the quenched end.
// Sources: ASTM A255 (initial hardness IH, the HRC of 99.9 % martensite, as a 5th-order polynomial
// in carbon, stated for the calculation range C 0.10-0.70 %); J. M. Hodge & M. A. Orehoski (1946),
// "Relationship between hardenability and percentage martensite in some low-alloy steels",
// Trans. AIME 167, 627-642 (hardness of 50 % martensite against carbon; our quadratic is a fit to
// their table as reproduced in SAE J406, from memory, valid about 0.10-0.60 % C, +/- 2 HRC).

import { OutsideMethodError } from './errors.ts';
import type { RangeFlag } from './types.ts';

/** Carbon range where the polynomials are evaluated at all (outside: refused). */
export const MARTENSITE_CARBON_DOMAIN = { min: 0.05, max: 0.8 } as const;
/** Carbon range where the IH polynomial is stated (ASTM A255 calculation range). */
export const IH_VALID_CARBON = { min: 0.1, max: 0.7 } as const;
/** Carbon range of the 50 % martensite fit. */
export const HALF_MARTENSITE_VALID_CARBON = { min: 0.1, max: 0.6 } as const;

function assertCarbon(carbon: number): void {
  if (!Number.isFinite(carbon) || carbon < MARTENSITE_CARBON_DOMAIN.min || carbon > MARTENSITE_CARBON_DOMAIN.max) {
    throw new OutsideMethodError(
      `carbon ${carbon} % is outside ${MARTENSITE_CARBON_DOMAIN.min}-${MARTENSITE_CARBON_DOMAIN.max} %, where the martensite-hardness relations are not usable`,
    );
  }
}

/** ASTM A255 initial hardness (HRC of 99.9 % martensite) for a carbon content in wt%. */
export function initialHardness(carbon: number): number {
  assertCarbon(carbon);
  const c = carbon;
  return 33.087 + 50.723 * c + 33.662 * c ** 2 - 2.7048 * c ** 3 - 107.02 * c ** 4 + 43.523 * c ** 5;
}

// How far quenched-end readings and predictions sit from IH(C), read off published H-bands (SAE J1268
// 8620H, 4140H, 4340H, 5120H; EN 10084 20MnCr5+H, 16MnCr5+H; EN 10083-3 42CrMo4+H; the 8620H and
// 20MnCr5+H bands high confidence, the others from memory). Each band's quenched-end window spans its
// carbon range plus scatter: the midpoint of the window sits within 0.9 HRC of IH at the middle carbon
// (20MnCr5+H the most, +0.9), the maximum exceeds IH at the grade's maximum carbon by 1.6-3.4 HRC
// (20MnCr5+H +3.4), and exceeds IH at its minimum carbon by up to 6.4 HRC (20MnCr5+H).

/** An expected (mean) quenched-end hardness more than this above IH(C) is beyond every published band's centre. */
export const PREDICTION_ABOVE_IH_HRC = 1;
/** A reading this far above IH(C) is still inside a published band for a heat at the grade's maximum carbon. */
export const QUENCHED_END_WARN_ABOVE_IH_HRC = 3.5;
/** Beyond this over IH(C) a reading exceeds even a band maximum read against the grade's minimum carbon. */
export const QUENCHED_END_FAIL_ABOVE_IH_HRC = 7;

/**
 * The highest value a predicted (expected) hardness may take for a carbon content: IH(C) plus
 * PREDICTION_ABOVE_IH_HRC; null where the IH polynomial is not usable (carbon outside 0.05-0.80 %).
 */
export function predictionCeiling(carbon: number | undefined): number | null {
  if (carbon === undefined || !Number.isFinite(carbon) || carbon < MARTENSITE_CARBON_DOMAIN.min || carbon > MARTENSITE_CARBON_DOMAIN.max) return null;
  return initialHardness(carbon) + PREDICTION_ABOVE_IH_HRC;
}

/** HRC of 50 % martensite (Hodge & Orehoski 1946 table, quadratic fit; from memory). */
export function halfMartensiteHardness(carbon: number): number {
  assertCarbon(carbon);
  return 19.03 + 71.44 * carbon - 32.58 * carbon ** 2;
}

export interface MartensiteBounds {
  carbon: number;
  /** HRC of fully (99.9 %) martensitic steel: the ceiling for J1. */
  fullyMartensiticHrc: number;
  /** HRC of 50 % martensite. */
  halfMartensiticHrc: number;
  outOfRange: RangeFlag[];
}

/** Both bounds for a carbon content, with flags when outside the stated ranges. */
export function martensiteBounds(carbon: number): MartensiteBounds {
  const outOfRange: RangeFlag[] = [];
  if (carbon < IH_VALID_CARBON.min || carbon > IH_VALID_CARBON.max) {
    outOfRange.push({
      quantity: 'C (fully martensitic hardness)',
      value: carbon,
      ...IH_VALID_CARBON,
      note: 'outside the carbon range stated for the ASTM A255 initial-hardness polynomial',
    });
  }
  if (carbon < HALF_MARTENSITE_VALID_CARBON.min || carbon > HALF_MARTENSITE_VALID_CARBON.max) {
    outOfRange.push({
      quantity: 'C (50 % martensite hardness)',
      value: carbon,
      ...HALF_MARTENSITE_VALID_CARBON,
      note: 'outside the carbon range of the 50 % martensite fit',
    });
  }
  return {
    carbon,
    fullyMartensiticHrc: initialHardness(carbon),
    halfMartensiticHrc: halfMartensiteHardness(carbon),
    outOfRange,
  };
}
