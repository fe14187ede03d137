import { describe, expect, it } from 'vitest';
import {
  bandInForce,
  bandLimitAt,
  bandPointKind,
  checkRestrictedWithin,
  validateBand,
} from '../../../src/hardenability/bands.ts';
import type { Band } from '../../../src/hardenability/bands.ts';
import { HardenabilityInputError } from '../../../src/hardenability/errors.ts';

// Source: EN 10084, 20MnCr5+H hardenability band (HRC at ISO 642 positions, mm).
const MM = [1.5, 3, 5, 7, 9, 11, 13, 15, 20, 25, 30, 35, 40];
const MAX = [49, 49, 48, 46, 43, 42, 41, 39, 37, 35, 34, 33, 32];
const MIN: (number | undefined)[] = [41, 39, 36, 33, 30, 28, 26, 25, 23, 21, undefined, undefined, undefined];

const band20MnCr5H = (over: Partial<Band> = {}): Band => ({
  grade: '20MnCr5+H',
  version: 1,
  effectiveFrom: '2020-01-01',
  status: 'active',
  kind: 'standard',
  points: MM.map((mm, i) => ({ mm, label: `${mm} mm`, minHrc: MIN[i], maxHrc: MAX[i] })),
  ...over,
});

describe('bands', () => {
  it('classifies two-sided, min-only and max-only points', () => {
    const b = band20MnCr5H();
    expect(bandPointKind(b.points[0])).toBe('two_sided');
    expect(bandPointKind(b.points[12])).toBe('max_only');
    expect(bandPointKind({ mm: 6.35, minHrc: 47 })).toBe('min_only'); // ASTM A255 §8.1 "J 4/16 in = 47 HRC min"
  });

  it('validates: sorted copy, and refuses min > max, empty points, repeated distances, bad dates', () => {
    const shuffled = band20MnCr5H({ points: [...band20MnCr5H().points].reverse() });
    expect(validateBand(shuffled).points[0].mm).toBe(1.5);
    expect(() => validateBand(band20MnCr5H({ points: [{ mm: 5, minHrc: 40, maxHrc: 38 }] }))).toThrow(/above maximum/);
    expect(() => validateBand(band20MnCr5H({ points: [] }))).toThrow(HardenabilityInputError);
    expect(() => validateBand(band20MnCr5H({ points: [{ mm: 5 }] }))).toThrow(/minimum, a maximum or both/);
    expect(() =>
      validateBand(band20MnCr5H({ points: [{ mm: 5, minHrc: 30 }, { mm: 5, maxHrc: 40 }] })),
    ).toThrow(/twice/);
    expect(() => validateBand(band20MnCr5H({ effectiveFrom: '2020-13-45' }))).toThrow(/YYYY-MM-DD/);
  });

  it('picks the version in force at a date (drafts never; ties by version)', () => {
    const v1 = band20MnCr5H({ version: 1, effectiveFrom: '2020-01-01', status: 'retired' });
    const v2 = band20MnCr5H({ version: 2, effectiveFrom: '2023-06-01', status: 'active' });
    const v3 = band20MnCr5H({ version: 3, effectiveFrom: '2024-01-01', status: 'draft' });
    const v4 = band20MnCr5H({ version: 4, effectiveFrom: '2023-06-01', status: 'active' });
    const all = [v3, v2, v1];
    expect(bandInForce(all, '2019-12-31')).toBeNull();
    expect(bandInForce(all, '2020-01-01')?.version).toBe(1);
    expect(bandInForce(all, '2023-05-31')?.version).toBe(1);
    expect(bandInForce(all, '2023-06-01')?.version).toBe(2);
    expect(bandInForce(all, '2025-01-01')?.version).toBe(2);
    expect(bandInForce([...all, v4], '2025-01-01')?.version).toBe(4);
    expect(() => bandInForce(all, '01/02/2024')).toThrow(/YYYY-MM-DD/);
  });

  it('reads a limit at a band point or linearly between points', () => {
    const b = band20MnCr5H();
    expect(bandLimitAt(b, 9, 'max')).toEqual({ value: 43, interpolated: false });
    expect(bandLimitAt(b, 10, 'min')).toEqual({ value: 29, interpolated: true });
    expect(bandLimitAt(b, 30, 'min')).toBeNull(); // the minimum stops at 25 mm
  });

  it('checks that a restricted band lies inside the standard band (SAE J1268 restricted hardenability)', () => {
    const standard = band20MnCr5H();
    // A narrowed band (limits moved inwards by 2 HRC) is inside; one point widened is not.
    const narrowed = band20MnCr5H({
      kind: 'restricted',
      points: standard.points.map((p) => ({
        ...p,
        minHrc: p.minHrc === undefined ? undefined : p.minHrc + 2,
        maxHrc: p.maxHrc === undefined ? undefined : p.maxHrc - 2,
      })),
    });
    expect(checkRestrictedWithin(narrowed, standard).inside).toBe(true);
    const widened = band20MnCr5H({
      kind: 'restricted',
      points: [
        { mm: 5, minHrc: 35, maxHrc: 46 },
        { mm: 10, minHrc: 30, maxHrc: 44 },
      ],
    });
    const report = checkRestrictedWithin(widened, standard);
    expect(report.inside).toBe(false);
    expect(report.points[0].inside).toBe(false);
    expect(report.points[0].note).toMatch(/below the standard minimum 36/);
    // At 10 mm the standard band is interpolated: min 29, max 42.5; 44 is above.
    expect(report.points[1].standardMax).toBe(42.5);
    expect(report.points[1].note).toMatch(/above the standard maximum 42.5/);
  });
});
