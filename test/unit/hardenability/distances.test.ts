import { describe, expect, it } from 'vitest';
import fc from 'fast-check';
import {
  A255_POSITIONS_SIXTEENTHS,
  MM_PER_SIXTEENTH,
  convertCurve,
  describeDistance,
  distanceLabel,
  iso642PositionsMm,
  mmToSixteenths,
  parseDistanceLabel,
  sixteenthsToMm,
} from '../../../src/hardenability/distances.ts';
import { AmbiguousDistanceError, HardenabilityInputError } from '../../../src/hardenability/errors.ts';

describe('distance systems', () => {
  it('1/16 in is exactly 1.5875 mm (the inch is defined as 25.4 mm)', () => {
    // Source: international yard and pound agreement (1959): 1 in = 25.4 mm exactly.
    expect(MM_PER_SIXTEENTH).toBe(25.4 / 16);
    expect(sixteenthsToMm(16)).toBe(25.4);
  });

  it('ISO 642 positions: 1.5, 3, 5, 7, 9, 11, 13, 15 mm, then every 5 mm', () => {
    // Source: ISO 642 measuring positions.
    expect(iso642PositionsMm(40)).toEqual([1.5, 3, 5, 7, 9, 11, 13, 15, 20, 25, 30, 35, 40]);
    expect(iso642PositionsMm(80).at(-1)).toBe(80);
  });

  it('ASTM A255 / SAE J406 positions: J1..J16, then 18, 20, 22, 24, 28, 32', () => {
    // Source: ASTM A255 hardness measurement positions; SAE J406.
    expect(A255_POSITIONS_SIXTEENTHS.slice(0, 16)).toEqual(Array.from({ length: 16 }, (_, i) => i + 1));
    expect(A255_POSITIONS_SIXTEENTHS.slice(16)).toEqual([18, 20, 22, 24, 28, 32]);
  });

  it('accepts any distance on the specimen and nothing beyond it', () => {
    // Common practice: end-quench specimen 25 mm x 100 mm (ISO 642) or 1 in x 4 in = 101.6 mm (ASTM A255).
    expect(parseDistanceLabel('100 mm').mm).toBe(100);
    expect(parseDistanceLabel('J64').mm).toBeCloseTo(101.6, 12);
    expect(() => parseDistanceLabel('102 mm')).toThrow(/longer than the end-quench specimen/);
  });

  it('property: mm -> sixteenths -> mm returns the input', () => {
    fc.assert(
      fc.property(fc.double({ min: 0.01, max: 101.6, noNaN: true }), (mm) => {
        return Math.abs(sixteenthsToMm(mmToSixteenths(mm)) - mm) <= 1e-12 * mm;
      }),
    );
  });

  it('property: a label parsed back from its canonical form gives the same distance', () => {
    fc.assert(
      fc.property(
        fc.double({ min: 0.5, max: 64, noNaN: true }),
        fc.constantFrom<'mm' | 'sixteenths'>('mm', 'sixteenths'),
        (v, system) => {
          const value = Math.round(v * 100) / 100;
          const d = parseDistanceLabel(distanceLabel(value, system));
          return d.system === system && Math.abs(d.value - value) < 1e-12;
        },
      ),
    );
  });
});

describe('parseDistanceLabel', () => {
  const cases: [string, number, 'mm' | 'sixteenths', string][] = [
    ['J9', 9 * 1.5875, 'sixteenths', 'J9'],
    ['J 9/16', 9 * 1.5875, 'sixteenths', 'J9'],
    ['J1.5/16', 1.5 * 1.5875, 'sixteenths', 'J1.5/16'],
    // A decimal after J is not a sixteenth position (A255 positions are whole sixteenths): ISO 642's "J 1,5" is mm.
    ['J1.5', 1.5, 'mm', '1.5 mm'],
    ['J 1,5', 1.5, 'mm', '1.5 mm'],
    ['J 4/16 in', 4 * 1.5875, 'sixteenths', 'J4'],
    ['j 4/16"', 4 * 1.5875, 'sixteenths', 'J4'],
    ['9/16 inch', 9 * 1.5875, 'sixteenths', 'J9'],
    ['0.5 in', 8 * 1.5875, 'sixteenths', 'J8'],
    ['9 mm', 9, 'mm', '9 mm'],
    ['9mm', 9, 'mm', '9 mm'],
    ['1,5 mm', 1.5, 'mm', '1.5 mm'],
    ['  1.5  MM ', 1.5, 'mm', '1.5 mm'],
    ['J 11 mm', 11, 'mm', '11 mm'],
  ];
  for (const [text, mm, system, label] of cases) {
    it(`reads "${text}"`, () => {
      const d = parseDistanceLabel(text);
      expect(d.mm).toBeCloseTo(mm, 12);
      expect(d.system).toBe(system);
      expect(d.label).toBe(label);
    });
  }

  it('accepts the ASTM A255 index notation with its mm hint, and checks the hint', () => {
    // Source: ASTM A255 §8.1 example "J 4/16 in. (6.4 mm) = 47 HRC min"; 4 x 1.5875 = 6.35 -> 6.4.
    expect(parseDistanceLabel('J 4/16 in (6.4 mm)').mm).toBeCloseTo(6.35, 12);
    // Source: same example "J 7/16 in. (11.1 mm)"; 7 x 1.5875 = 11.1125.
    expect(parseDistanceLabel('J 7/16 in (11.1 mm)').value).toBe(7);
    expect(() => parseDistanceLabel('J 4/16 in (7 mm)')).toThrow(AmbiguousDistanceError);
  });

  it('refuses a decimal J-label when the caller says J means sixteenths', () => {
    expect(() => parseDistanceLabel('J1.5', { jPrefixUnit: 'sixteenths' })).toThrow(AmbiguousDistanceError);
    expect(parseDistanceLabel('J6', { jPrefixUnit: 'sixteenths' }).mm).toBeCloseTo(9.525, 12);
  });

  it('refuses a bare number unless the caller gives the unit', () => {
    expect(() => parseDistanceLabel('9')).toThrow(AmbiguousDistanceError);
    expect(parseDistanceLabel('9', { bareNumberUnit: 'mm' }).mm).toBe(9);
    expect(parseDistanceLabel('9', { bareNumberUnit: 'sixteenths' }).mm).toBeCloseTo(14.2875, 12);
  });

  it('lets the caller declare that "J9" on a metric certificate means 9 mm', () => {
    expect(parseDistanceLabel('J9', { jPrefixUnit: 'mm' }).mm).toBe(9);
  });

  it('refuses ambiguous commas, nonsense and distances beyond the specimen', () => {
    expect(() => parseDistanceLabel('1,500 mm')).toThrow(AmbiguousDistanceError);
    expect(() => parseDistanceLabel('nine mm')).toThrow(HardenabilityInputError);
    expect(() => parseDistanceLabel('')).toThrow(HardenabilityInputError);
    expect(() => parseDistanceLabel('0 mm')).toThrow(/positive/);
    // Source: ISO 642 / ASTM A255 specimen length 100 mm / 4 in (common practice).
    expect(() => parseDistanceLabel('120 mm')).toThrow(/longer than the end-quench specimen/);
    expect(() => parseDistanceLabel('J 70')).toThrow(/longer/);
  });
});

describe('convertCurve', () => {
  // A measured curve in sixteenths (J1..J16 then 18..32), HRC values invented for the test.
  const hrc = [47, 46, 44, 41, 37, 34, 32, 30, 29, 28, 27, 26, 26, 25, 25, 24, 23, 23, 22, 22, 21, 21];
  const readings = A255_POSITIONS_SIXTEENTHS.map((s, i) => ({ mm: sixteenthsToMm(s), hrc: hrc[i] }));

  it('converts a J curve to ISO 642 positions, flagging interpolation and omitting what is outside', () => {
    const c = convertCurve(readings, 'mm');
    // Measured range J1 = 1.5875 mm to J32 = 50.8 mm: 1.5 mm is before, 55..80 mm beyond.
    expect(c.omitted.map((o) => [o.distance.mm, o.reason])).toEqual([
      [1.5, 'before_first_reading'],
      [55, 'beyond_last_reading'],
      [60, 'beyond_last_reading'],
      [65, 'beyond_last_reading'],
      [70, 'beyond_last_reading'],
      [75, 'beyond_last_reading'],
      [80, 'beyond_last_reading'],
    ]);
    expect(c.points.map((p) => p.mm)).toEqual([3, 5, 7, 9, 11, 13, 15, 20, 25, 30, 35, 40, 45, 50]);
    expect(c.points.every((p) => p.interpolated)).toBe(true);
    // Monotone interpolation stays between the neighbouring readings (Fritsch & Carlson 1980).
    const at9 = c.points.find((p) => p.mm === 9)!;
    expect(at9.hrc).toBeLessThanOrEqual(37); // J5 = 7.94 mm
    expect(at9.hrc).toBeGreaterThanOrEqual(34); // J6 = 9.53 mm
  });

  it('does not interpolate where a reading exists', () => {
    const c = convertCurve(readings, 'sixteenths');
    expect(c.points).toHaveLength(22);
    expect(c.points.every((p) => !p.interpolated)).toBe(true);
    expect(c.points.map((p) => p.hrc)).toEqual(hrc);
  });

  it('property: converting a non-increasing curve gives a non-increasing curve inside the reading range', () => {
    fc.assert(
      fc.property(fc.array(fc.integer({ min: 0, max: 4 }), { minLength: 13, maxLength: 13 }), (drops) => {
        let h = 60;
        const iso = iso642PositionsMm(40).map((mm, i) => ({ mm, hrc: (h -= drops[i]) }));
        const c = convertCurve(iso, 'sixteenths');
        return c.points.every((p, i) => i === 0 || p.hrc <= c.points[i - 1].hrc + 1e-9) &&
          c.points.every((p) => p.mm >= 1.5 && p.mm <= 40);
      }),
    );
  });

  it('refuses duplicate distances and too-short curves', () => {
    expect(() => convertCurve([{ mm: 1.5, hrc: 40 }], 'sixteenths')).toThrow(/two readings/);
    expect(() => convertCurve([{ mm: 1.5, hrc: 40 }, { mm: 1.5, hrc: 41 }], 'sixteenths')).toThrow(/same distance/);
  });
});

describe('distances in sentences', () => {
  it('names a whole sixteenth by its J position and exact mm (1/16 in = 1.5875 mm, ASTM A255)', () => {
    expect(describeDistance(3 * 1.5875)).toBe('J3 (4.76 mm)');
    expect(describeDistance(1.5875)).toBe('J1 (1.59 mm)');
  });
  it('keeps ISO 642 positions in mm, and a given label wins', () => {
    expect(describeDistance(1.5)).toBe('1.5 mm');
    // 8/16 in = 12.7 mm and 16/16 in = 25.4 mm are not whole or half millimetres either.
    expect(describeDistance(25.4)).toBe('J16 (25.4 mm)');
    expect(describeDistance(25)).toBe('25 mm');
    expect(describeDistance(6.35, 'J4')).toBe('J4');
  });
});
