import { describe, expect, it } from 'vitest';
import fc from 'fast-check';
import { brinellHardness, rockwellCFromDepth, vickersHardness } from '../../../src/hardenability/hardness.ts';
import { e140Rows, hrcToHv, hvToHrc } from '../../../src/hardenability/e140.ts';
import { HardenabilityInputError, OutsideTableError } from '../../../src/hardenability/errors.ts';

describe('hardness definitions', () => {
  it('Vickers: HV = 0.1891 F / d^2 (ISO 6507-1)', () => {
    // Source: ISO 6507-1 constant 0.102 x 2 sin 68 deg = 0.1891 (4 significant digits).
    const hv = vickersHardness(98.07, 0.4);
    expect(hv.value / ((0.1891 * 98.07) / 0.16)).toBeCloseTo(1, 3);
    expect(hv.scale).toBe('HV');
    // Mean of the two diagonals is used.
    expect(vickersHardness(98.07, 0.39, 0.41).value).toBeCloseTo(hv.value, 12);
    // ISO 6507-1: diagonals differing by more than 5 % are flagged.
    expect(vickersHardness(98.07, 0.38, 0.42).warnings.join(' ')).toMatch(/5 %/);
  });

  it('Brinell: HBW 10/3000 with a 4.00 mm indentation is 229 (ISO 6506-1 formula; Brinell tables, common practice)', () => {
    // 3000 kgf = 29420 N; HBW = 0.102 x 2F / (pi D (D - sqrt(D^2 - d^2))).
    const hb = brinellHardness(29420, 10, 4.0);
    expect(hb.value).toBeCloseTo(228.8, 1);
    expect(Math.round(hb.value)).toBe(229);
    expect(hb.warnings).toEqual([]);
    // ISO 6506-1: d/D outside 0.24-0.6 is flagged.
    expect(brinellHardness(29420, 10, 2.0).warnings.join(' ')).toMatch(/0.24-0.6/);
    expect(() => brinellHardness(29420, 10, 10)).toThrow(HardenabilityInputError);
  });

  it('Rockwell C: HRC = 100 - h/0.002 mm (ISO 6508-1)', () => {
    // Source: ISO 6508-1: h = 0.080 mm gives 60 HRC; h = 0.160 mm gives 20 HRC.
    expect(rockwellCFromDepth(0.08).value).toBeCloseTo(60, 10);
    expect(rockwellCFromDepth(0.16).value).toBeCloseTo(20, 10);
    expect(rockwellCFromDepth(0.17).warnings.join(' ')).toMatch(/20-70/);
    expect(() => rockwellCFromDepth(-0.01)).toThrow(HardenabilityInputError);
  });
});

describe('ASTM E140 Table 1 conversion (non-austenitic steels)', () => {
  it('reproduces table rows', () => {
    // Source: ASTM E140 Table 1: 68 HRC = 940 HV, 60 HRC = 697 HV, 50 HRC = 513 HV, 20 HRC = 238 HV.
    expect(hrcToHv(68).value).toBe(940);
    expect(hrcToHv(60).value).toBe(697);
    expect(hrcToHv(50)).toMatchObject({ value: 513, method: 'table row' });
    expect(hvToHrc(238).value).toBe(20);
    expect(e140Rows()).toHaveLength(49);
  });

  it('interpolates linearly between rows and says which table and method were used', () => {
    // Source: ASTM E140 Table 1 rows 49 HRC = 498 HV and 50 HRC = 513 HV: 505 HV -> 49 + 7/15.
    const r = hvToHrc(505);
    expect(r.value).toBeCloseTo(49 + 7 / 15, 12);
    expect(r.method).toBe('linear interpolation between adjacent rows');
    expect(r.table).toMatch(/ASTM E140 Table 1/);
  });

  it('refuses values outside the table', () => {
    expect(() => hvToHrc(237)).toThrow(OutsideTableError);
    expect(() => hvToHrc(941)).toThrow(OutsideTableError);
    expect(() => hrcToHv(19.9)).toThrow(OutsideTableError);
    expect(() => hrcToHv(68.1)).toThrow(OutsideTableError);
  });

  it('property: HRC -> HV -> HRC returns the input and the table is monotone', () => {
    fc.assert(fc.property(fc.double({ min: 20, max: 68, noNaN: true }), (h) => Math.abs(hvToHrc(hrcToHv(h).value).value - h) < 1e-9));
    const rows = e140Rows();
    rows.forEach((r, i) => i > 0 && expect(r.hv).toBeLessThan(rows[i - 1].hv));
  });
});
