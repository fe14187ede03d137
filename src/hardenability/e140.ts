// Conversion between Vickers and Rockwell C hardness for non-austenitic steels.
// Source: ASTM E140, Table 1 (non-austenitic steels), rows HRC 68 down to 20 with their HV values.
// Between rows we interpolate linearly (our choice; the table gives no rule); outside the table
// the conversion is refused. Converted values are approximate: the result names the table used.

import { OutsideTableError, HardenabilityInputError } from './errors.ts';

export const E140_TABLE_NAME = 'ASTM E140 Table 1 (non-austenitic steels)';

/** HRC 68, 67, ..., 20 and the corresponding HV (ASTM E140 Table 1). */
const HRC_ROWS: readonly number[] = Array.from({ length: 49 }, (_, i) => 68 - i);
const HV_ROWS: readonly number[] = [
  940, 900, 865, 832, 800, 772, 746, 720, 697, 674, 653, 633, 613, 595, 577, 560, 544, 528, 513, 498,
  484, 471, 458, 446, 434, 423, 412, 402, 392, 382, 372, 363, 354, 345, 336, 327, 318, 310, 302, 294,
  286, 279, 272, 266, 260, 254, 248, 243, 238,
];

export interface ConvertedHardness {
  value: number;
  from: 'HV' | 'HRC';
  to: 'HV' | 'HRC';
  table: string;
  method: 'table row' | 'linear interpolation between adjacent rows';
}

/** Rows of the table, for display and tests. */
export const e140Rows = (): { hrc: number; hv: number }[] => HRC_ROWS.map((hrc, i) => ({ hrc, hv: HV_ROWS[i] }));

function lookup(x: number, xs: readonly number[], ys: readonly number[]): { value: number; exact: boolean } {
  // xs strictly decreasing.
  for (let i = 0; i < xs.length; i++) {
    if (x === xs[i]) return { value: ys[i], exact: true };
    if (i > 0 && x < xs[i - 1] && x > xs[i]) {
      const t = (x - xs[i]) / (xs[i - 1] - xs[i]);
      return { value: ys[i] + t * (ys[i - 1] - ys[i]), exact: false };
    }
  }
  throw new OutsideTableError(`${x} is outside the table`);
}

/** HV -> HRC by ASTM E140 Table 1; refused outside 238-940 HV. */
export function hvToHrc(hv: number): ConvertedHardness {
  if (!Number.isFinite(hv)) throw new HardenabilityInputError(`HV ${hv} is not a number`);
  if (hv < HV_ROWS[HV_ROWS.length - 1] || hv > HV_ROWS[0]) {
    throw new OutsideTableError(`${hv} HV is outside ${HV_ROWS[HV_ROWS.length - 1]}-${HV_ROWS[0]} HV, the range of ${E140_TABLE_NAME}`);
  }
  const r = lookup(hv, HV_ROWS, HRC_ROWS);
  return { value: r.value, from: 'HV', to: 'HRC', table: E140_TABLE_NAME, method: r.exact ? 'table row' : 'linear interpolation between adjacent rows' };
}

/** HRC -> HV by ASTM E140 Table 1; refused outside 20-68 HRC. */
export function hrcToHv(hrc: number): ConvertedHardness {
  if (!Number.isFinite(hrc)) throw new HardenabilityInputError(`HRC ${hrc} is not a number`);
  if (hrc < 20 || hrc > 68) throw new OutsideTableError(`${hrc} HRC is outside 20-68 HRC, the range of ${E140_TABLE_NAME}`);
  const r = lookup(hrc, HRC_ROWS, HV_ROWS);
  return { value: r.value, from: 'HRC', to: 'HV', table: E140_TABLE_NAME, method: r.exact ? 'table row' : 'linear interpolation between adjacent rows' };
}
