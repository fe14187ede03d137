import { describe, expect, it } from 'vitest';
import fc from 'fast-check';
import {
  A255_ELEMENTS,
  A255_VALIDITY,
  a255DividingFactors,
  a255Factor,
  a255IdealDiameter,
  predictA255Curve,
} from '../../../src/hardenability/astmA255.ts';
import type { A255Element } from '../../../src/hardenability/astmA255.ts';
import { justInchHardness, justQuenchedEndHardness, predictJust1969 } from '../../../src/hardenability/just1969.ts';
import { halfMartensiteHardness, initialHardness, martensiteBounds } from '../../../src/hardenability/martensite.ts';
import { OutsideMethodError } from '../../../src/hardenability/errors.ts';
import { iso642PositionsMm } from '../../../src/hardenability/distances.ts';
import type { Chemistry, PredictedCurve } from '../../../src/hardenability/types.ts';

const ISO = iso642PositionsMm(40);

describe('martensite hardness against carbon', () => {
  it('ASTM A255 initial hardness: IH(0.20) = 44.4, IH(0.40) = 56.3 HRC', () => {
    // Source: ASTM A255 initial-hardness polynomial evaluated at 0.20 and 0.40 % C (1 decimal).
    expect(initialHardness(0.2)).toBeCloseTo(44.4, 1);
    expect(initialHardness(0.4)).toBeCloseTo(56.3, 1);
  });

  it('0.2 % C martensite is about 45 HRC and 0.8 % C about 63 HRC (within 2 HRC)', () => {
    // Common practice (trade figures for as-quenched martensite).
    expect(Math.abs(martensiteBounds(0.2).fullyMartensiticHrc - 45)).toBeLessThanOrEqual(2);
    expect(Math.abs(martensiteBounds(0.8).fullyMartensiticHrc - 63)).toBeLessThanOrEqual(2);
    expect(martensiteBounds(0.8).outOfRange.length).toBeGreaterThan(0); // beyond the A255 range: flagged
  });

  it('50 % martensite is softer than full martensite and within the fit (Hodge & Orehoski 1946; fit from memory)', () => {
    for (const c of [0.1, 0.2, 0.3, 0.4, 0.5, 0.6]) {
      expect(halfMartensiteHardness(c)).toBeLessThan(initialHardness(c) - 5);
    }
    // Fit 19.03 + 71.44C - 32.58C^2 at 0.40 % C (from memory): 42.4 HRC.
    expect(halfMartensiteHardness(0.4)).toBeCloseTo(42.39, 2);
  });

  it('refuses carbon where the polynomials are not usable', () => {
    expect(() => initialHardness(0.95)).toThrow(OutsideMethodError);
    expect(() => initialHardness(0.01)).toThrow(OutsideMethodError);
  });
});

describe('ASTM A255 calculation', () => {
  // Source: ASTM A255-10 worked example "4118 modified" (C .22 Mn .80 Si .18 Ni .10 Cr .43 Mo .25
  // Cu .10 V .05), with the multiplying factors as printed in the standard.
  const ex4118: Chemistry = { C: 0.22, Mn: 0.8, Si: 0.18, Ni: 0.1, Cr: 0.43, Mo: 0.25, Cu: 0.1, V: 0.05 };
  const printed: Record<A255Element, [number, number]> = {
    C: [0.119, 3], Mn: [3.667, 3], Si: [1.126, 3], Ni: [1.036, 3],
    Cr: [1.929, 3], Mo: [1.75, 2], Cu: [1.04, 2], V: [1.09, 2],
  };

  it('each factor equation reproduces the factor printed in the worked example, to its printed digits', () => {
    // Source: ASTM A255-10 worked example, factor table.
    for (const el of A255_ELEMENTS) {
      const [value, decimals] = printed[el];
      expect(Number(a255Factor(el, ex4118[el] as number).toFixed(decimals))).toBe(value);
    }
  });

  it('DI = 1.93 in without rounding the factors, and 1.95 in with the factors as printed', () => {
    // Source: ASTM A255-10 worked example: 1.95 in from the printed (rounded) factors; the
    // unrounded product is 1.93 in.
    const di = a255IdealDiameter(ex4118);
    expect(di.inches).toBeCloseTo(1.93, 2);
    expect(di.mm).toBeCloseTo(di.inches * 25.4, 12);
    const fromPrinted = A255_ELEMENTS.reduce((p, el) => p * printed[el][0], 1);
    expect(fromPrinted).toBeCloseTo(1.95, 2);
    expect(di.outOfRange).toEqual([]);
  });

  it('factor equations at the standard values (ASTM A255-10 multiplying-factor equations)', () => {
    // Source: ASTM A255-10 equations: f_Mn(1.0) = 1 + 3.3333, f_Mn(1.5) = 5.10*1.5 - 1.12,
    // f_C(0.50) = 0.171 + 0.0005 + 0.265*0.25 = 0.23775, f_C(0.60) = 0.115 + 0.1608 - 0.01368,
    // f_C(0.70) = 0.143 + 0.14, f_C(0.80) = 0.062 + 0.3272 - 0.0864.
    expect(a255Factor('Mn', 1.0)).toBeCloseTo(4.3333, 10);
    expect(a255Factor('Mn', 1.5)).toBeCloseTo(6.53, 10);
    expect(a255Factor('C', 0.5)).toBeCloseTo(0.23775, 10);
    expect(a255Factor('C', 0.6)).toBeCloseTo(0.26212, 10);
    expect(a255Factor('C', 0.7)).toBeCloseTo(0.283, 10);
    expect(a255Factor('C', 0.8)).toBeCloseTo(0.3028, 10);
    expect(a255Factor('Cr', 1.0)).toBeCloseTo(3.16, 10);
    expect(a255Factor('Mo', 0.5)).toBeCloseTo(2.5, 10);
    expect(a255Factor('Ni', 1.0)).toBeCloseTo(1.363, 10);
    expect(a255Factor('V', 0.1)).toBeCloseTo(1.173, 10);
  });

  it('property: DI grows with every alloying element inside the A255 range', () => {
    const chemArb = fc.record({
      C: fc.double({ min: 0.1, max: 0.7, noNaN: true }),
      Mn: fc.double({ min: 0.5, max: 1.6, noNaN: true }),
      Si: fc.double({ min: 0.15, max: 0.55, noNaN: true }),
      Ni: fc.double({ min: 0, max: 1.45, noNaN: true }),
      Cr: fc.double({ min: 0, max: 1.3, noNaN: true }),
      Mo: fc.double({ min: 0, max: 0.5, noNaN: true }),
      Cu: fc.double({ min: 0, max: 0.3, noNaN: true }),
      V: fc.double({ min: 0, max: 0.15, noNaN: true }),
    });
    fc.assert(
      fc.property(chemArb, fc.constantFrom('Mn', 'Si', 'Ni', 'Cr', 'Mo', 'Cu', 'V'), fc.double({ min: 0.01, max: 0.05, noNaN: true }), (chem, el, step) => {
        const more = { ...chem, [el]: (chem as Record<string, number>)[el] + step };
        return a255IdealDiameter(more).inches > a255IdealDiameter(chem).inches;
      }),
    );
  });

  it('coarser grain raises DI by about 8 % per number (Grossmann chart, medium confidence) and says so', () => {
    const d7 = a255IdealDiameter(ex4118);
    const d6 = a255IdealDiameter(ex4118, { grainSize: 6 });
    expect(d6.inches / d7.inches).toBeCloseTo(1.08, 10);
    expect(d6.warnings.join(' ')).toMatch(/grain size 6/);
    expect(a255IdealDiameter(ex4118, { grainSize: 3 }).outOfRange.map((f) => f.quantity)).toContain('grain size');
  });

  it('flags chemistry outside §1.3, refuses it when strict, refuses beyond the factor domain', () => {
    const highCr = { ...ex4118, Cr: 1.6 };
    expect(a255IdealDiameter(highCr).outOfRange.map((f) => f.quantity)).toEqual(['Cr']);
    expect(() => a255IdealDiameter(highCr, { strict: true })).toThrow(OutsideMethodError);
    expect(() => a255IdealDiameter({ ...ex4118, Mn: 2.1 })).toThrow(/outside 0-1.95/);
  });

  it('flags boron-treated steels as outside the method', () => {
    const b = predictA255Curve({ ...ex4118, B: 0.002 }, { distancesMm: ISO });
    expect(b.outsideMethod).toBe(true);
    expect(b.warnings.join(' ')).toMatch(/boron/);
    expect(() => a255IdealDiameter(ex4118, { boronTreated: true, strict: true })).toThrow(/boron/);
  });

  it('dividing factors: 1 at 1.5 mm, rising with distance, only for DI 25-55 mm (never clamped)', () => {
    const df = a255DividingFactors(45);
    expect(df.at(1.5)).toBe(1);
    expect(df.at(60)).toBeNull();
    for (let i = 1; i < df.knots.length; i++) expect(df.knots[i].df).toBeGreaterThanOrEqual(df.knots[i - 1].df);
    expect(() => a255DividingFactors(80)).toThrow(/outside 25-55 mm/);
    // A deep-hardening chemistry (DI about 200 mm): IH at the quenched end, every other distance omitted with the reason.
    const c = predictA255Curve({ C: 0.4, Mn: 1.2, Si: 0.3, Cr: 1.2, Mo: 0.4, Ni: 1.0 }, { distancesMm: ISO });
    expect(c.points.map((p) => p.mm)).toEqual([1.5]);
    expect(c.omitted.every((o) => /outside 25-55 mm/.test(o.reason))).toBe(true);
  });

  it('gives the curve at the requested distances, J1 = IH, omitting distances beyond 50 mm', () => {
    const c = predictA255Curve(ex4118, { distancesMm: [1.5, 6.35, 9, 60] });
    expect(c.points.map((p) => p.mm)).toEqual([1.5, 6.35, 9]);
    expect(c.points[0].hrc).toBeCloseTo(initialHardness(0.22), 12);
    expect(c.omitted).toEqual([{ mm: 60, reason: expect.stringMatching(/dividing factors/) }]);
    expect(c.idealDiameter?.inches).toBeCloseTo(1.93, 2);
  });
});

describe("Just's equations (1969)", () => {
  it('inch form at E = 8/16 in for 0.40 C 0.80 Mn 1.00 Cr 0.20 Mo (the formula as published)', () => {
    // Source: Just (1969), Metal Progress 96(5), inch form worked by hand:
    // 61.981 - 1.012 + 20 + 15.2 + 6.8 - 67.882 + 22.88 - 7 = 50.97 HRC.
    const expected = 98 * Math.sqrt(0.4) - 0.025 * 64 * Math.sqrt(0.4) + 20 * 1 + 19 * 0.8 + 34 * 0.2 - 24 * Math.sqrt(8) + 2.86 * 8 - 7;
    expect(justInchHardness({ C: 0.4, Mn: 0.8, Cr: 1.0, Mo: 0.2 }, 8)).toBeCloseTo(expected, 12);
    expect(expected).toBeCloseTo(50.97, 2);
  });

  it('quenched-end rule J0 = 60 sqrt(C) + 20, only for 0.2-0.6 % C', () => {
    // Source: Just (1969): at 0.36 % C, 60*0.6 + 20 = 56.
    expect(justQuenchedEndHardness(0.36)).toBeCloseTo(56, 12);
    expect(() => justQuenchedEndHardness(0.1)).toThrow(OutsideMethodError);
  });

  it('omits distances nearer than 4/16 in, and keeps a low-carbon curve non-increasing by PAVA', () => {
    const c = predictJust1969({ C: 0.1, Mn: 0.4, Cr: 0, Ni: 0, Mo: 0, V: 0 }, { distancesMm: [1.5, 3, 5, ...iso642PositionsMm(50).slice(3)] });
    expect(c.omitted.map((o) => o.mm)).toEqual([1.5, 3, 5]);
    // For 0.10 % C the raw formula rises beyond about 20/16 in (2.86E beats the other terms).
    const raw = [30, 40, 50].map((mm) => justInchHardness({ C: 0.1, Mn: 0.4 }, mm / 1.5875));
    expect(raw[2]).toBeGreaterThan(raw[0]);
    expect(c.points.some((p) => p.adjustedForMonotonicity)).toBe(true);
    expect(c.warnings.join(' ')).toMatch(/PAVA/);
  });

  it('metric form needs grain size and says it is from memory', () => {
    expect(() => predictJust1969({ C: 0.2 }, { distancesMm: [10], form: 'metric' })).toThrow(/grain size/);
    const m = predictJust1969({ C: 0.2, Mn: 0.8, Cr: 0.5 }, { distancesMm: [10], form: 'metric', grainSize: 7 });
    expect(m.warnings.join(' ')).toMatch(/from memory/);
  });

  it('flags chemistry outside the range (Cr above 1.55 % from the paper) and refuses it when strict', () => {
    const chem = { C: 0.3, Mn: 0.8, Cr: 2.0 };
    expect(predictJust1969(chem, { distancesMm: [10] }).outOfRange.map((f) => f.quantity)).toEqual(['Cr']);
    expect(() => predictJust1969(chem, { distancesMm: [10], strict: true })).toThrow(OutsideMethodError);
  });
});

describe('predictors against published bands (sanity check, mid-range chemistry)', () => {
  // Source: SAE J1268 8620H band in metric positions (HRC; min only to 9 mm).
  const H8620 = { max: [48, 47, 43, 39, 35, 32, 30, 29, 26, 24, 23, 23, 23], min: [41, 37, 31, 25, 21] };
  // Source: EN 10084 20MnCr5+H band (min only to 25 mm).
  const MnCr5 = {
    max: [49, 49, 48, 46, 43, 42, 41, 39, 37, 35, 34, 33, 32],
    min: [41, 39, 36, 33, 30, 28, 26, 25, 23, 21],
  };
  // Mid-range chemistry of each grade (SAE J1268 8620H; EN 10084 20MnCr5).
  const mid8620: Chemistry = { C: 0.2, Mn: 0.775, Si: 0.25, Ni: 0.55, Cr: 0.5, Mo: 0.2 };
  const mid20MnCr5: Chemistry = { C: 0.195, Mn: 1.25, Si: 0.25, Cr: 1.15 };

  /** Signed miss of each point: 0 inside, negative below the min, positive above the max. */
  const misses = (c: PredictedCurve, band: { max: number[]; min: number[] }) =>
    c.points.map((p) => {
      const i = ISO.indexOf(p.mm);
      if (band.min[i] !== undefined && p.hrc < band.min[i]) return p.hrc - band.min[i];
      if (p.hrc > band.max[i]) return p.hrc - band.max[i];
      return 0;
    });

  it('8620H mid chemistry: A255 and Just curves lie inside the band', () => {
    expect(misses(predictA255Curve(mid8620, { distancesMm: ISO }), H8620).every((m) => m === 0)).toBe(true);
    expect(misses(predictJust1969(mid8620, { distancesMm: ISO }), H8620).every((m) => m === 0)).toBe(true);
  });

  it('20MnCr5+H mid chemistry: Just inside; A255 gives only the quenched end (DI 57.5 mm, outside its dividing factors)', () => {
    expect(misses(predictJust1969(mid20MnCr5, { distancesMm: ISO }), MnCr5).every((m) => m === 0)).toBe(true);
    const a = predictA255Curve(mid20MnCr5, { distancesMm: ISO });
    expect(a.points.map((p) => p.mm)).toEqual([1.5]);
    expect(misses(a, MnCr5)).toEqual([0]);
  });
});

describe('property: every predicted curve is non-increasing', () => {
  const chemArb = fc.record({
    C: fc.double({ min: 0.1, max: 0.6, noNaN: true }),
    Mn: fc.double({ min: 0.5, max: 1.6, noNaN: true }),
    Si: fc.double({ min: 0.15, max: 0.6, noNaN: true }),
    Ni: fc.double({ min: 0, max: 1.5, noNaN: true }),
    Cr: fc.double({ min: 0, max: 1.35, noNaN: true }),
    Mo: fc.double({ min: 0, max: 0.5, noNaN: true }),
    V: fc.double({ min: 0, max: 0.2, noNaN: true }),
    P: fc.double({ min: 0, max: 0.03, noNaN: true }),
  });
  const distArb = fc.array(fc.double({ min: 1.5, max: 80, noNaN: true }), { minLength: 1, maxLength: 20 });
  const nonIncreasing = (c: PredictedCurve) => c.points.every((p, i) => i === 0 || p.hrc <= c.points[i - 1].hrc + 1e-9);

  it('A255, Just inch form and Just metric form', () => {
    fc.assert(
      fc.property(chemArb, distArb, fc.integer({ min: 5, max: 9 }), (chem, d, g) => {
        return (
          nonIncreasing(predictA255Curve(chem, { distancesMm: d, grainSize: g })) &&
          nonIncreasing(predictJust1969(chem, { distancesMm: d })) &&
          nonIncreasing(predictJust1969(chem, { distancesMm: d, form: 'metric', grainSize: g }))
        );
      }),
    );
  });

  it('validity table of A255 matches §1.3', () => {
    // Source: ASTM A255-10 §1.3.
    expect(A255_VALIDITY.C).toMatchObject({ min: 0.1, max: 0.7 });
    expect(A255_VALIDITY.Mn).toMatchObject({ min: 0.5, max: 1.65 });
    expect(A255_VALIDITY.Cu).toMatchObject({ max: 0.35 });
  });
});
