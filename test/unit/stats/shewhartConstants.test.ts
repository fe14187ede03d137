import { describe, expect, it } from 'vitest';
import { c4, d2, d3, shewhartConstants, ConstantsInputError } from '../../../src/stats/shewhartConstants.ts';

// Printed control-chart constants: ASTM E2587 Table 1 / Montgomery, Introduction to Statistical
// Quality Control, Appendix VI (the two agree for these n).
const printed: Record<number, [number, number, number, number, number, number, number, number, number]> = {
  //   d2     d3     c4      A2     A3     D3     D4     B3     B4
  2: [1.128, 0.853, 0.7979, 1.880, 2.659, 0, 3.267, 0, 3.267],
  3: [1.693, 0.888, 0.8862, 1.023, 1.954, 0, 2.574, 0, 2.568],
  4: [2.059, 0.88, 0.9213, 0.729, 1.628, 0, 2.282, 0, 2.266],
  5: [2.326, 0.864, 0.94, 0.577, 1.427, 0, 2.114, 0, 2.089],
  6: [2.534, 0.848, 0.9515, 0.483, 1.287, 0, 2.004, 0.03, 1.97],
  7: [2.704, 0.833, 0.9594, 0.419, 1.182, 0.076, 1.924, 0.118, 1.882],
  8: [2.847, 0.82, 0.965, 0.373, 1.099, 0.136, 1.864, 0.185, 1.815],
  9: [2.97, 0.808, 0.9693, 0.337, 1.032, 0.184, 1.816, 0.239, 1.761],
  10: [3.078, 0.797, 0.9727, 0.308, 0.975, 0.223, 1.777, 0.284, 1.716],
  25: [3.931, 0.708, 0.9896, 0.153, 0.606, 0.459, 1.541, 0.565, 1.435],
};
// Half a unit of the last printed digit (3 decimals; 4 for c4).
const HALF3 = 0.0005 + 1e-12;
const HALF4 = 0.00005 + 1e-12;

describe('Shewhart constants against the printed tables (ASTM E2587; Montgomery App. VI)', () => {
  for (const [nStr, row] of Object.entries(printed)) {
    const n = Number(nStr);
    it(`n = ${n}`, () => {
      const c = shewhartConstants(n);
      const [pd2, pd3, pc4, pA2, pA3, pD3, pD4, pB3, pB4] = row;
      expect(Math.abs(c.d2 - pd2)).toBeLessThanOrEqual(HALF3);
      expect(Math.abs(c.d3 - pd3)).toBeLessThanOrEqual(HALF3);
      expect(Math.abs(c.c4 - pc4)).toBeLessThanOrEqual(HALF4);
      expect(Math.abs(c.A2 - pA2)).toBeLessThanOrEqual(HALF3);
      expect(Math.abs(c.A3 - pA3)).toBeLessThanOrEqual(HALF3);
      expect(Math.abs(c.D3 - pD3)).toBeLessThanOrEqual(HALF3);
      // D4(3) is printed 2.574 although 1 + 3·d3/d2 = 2.57459 (the table rounds from rounded d2, d3).
      expect(Math.abs(c.D4 - pD4)).toBeLessThanOrEqual(n === 3 ? 0.0008 : HALF3);
      expect(Math.abs(c.B3 - pB3)).toBeLessThanOrEqual(HALF3);
      expect(Math.abs(c.B4 - pB4)).toBeLessThanOrEqual(HALF3);
    });
  }

  // n = 11..24, d2 / d3 / c4 from Montgomery App. VI — from memory (no printed copy at hand);
  // the scipy cross-check in test/reference/spc.test.ts covers these n to 1e-8.
  const memory: Record<number, [number, number, number]> = {
    11: [3.173, 0.787, 0.9754], 12: [3.258, 0.778, 0.9776], 13: [3.336, 0.77, 0.9794],
    14: [3.407, 0.763, 0.981], 15: [3.472, 0.756, 0.9823], 16: [3.532, 0.75, 0.9835],
    17: [3.588, 0.744, 0.9845], 18: [3.64, 0.739, 0.9854], 19: [3.689, 0.734, 0.9862],
    20: [3.735, 0.729, 0.9869], 21: [3.778, 0.724, 0.9876], 22: [3.819, 0.72, 0.9882],
    23: [3.858, 0.716, 0.9887], 24: [3.895, 0.712, 0.9892],
  };
  it('n = 11..24 (from memory of Montgomery App. VI; d3(19) printing slip 0.734 vs 0.73348)', () => {
    for (const [nStr, [pd2, pd3, pc4]] of Object.entries(memory)) {
      const n = Number(nStr);
      expect(Math.abs(d2(n) - pd2), `d2(${n})`).toBeLessThanOrEqual(HALF3);
      expect(Math.abs(d3(n) - pd3), `d3(${n})`).toBeLessThanOrEqual(n === 19 ? 0.0008 : HALF3);
      expect(Math.abs(c4(n) - pc4), `c4(${n})`).toBeLessThanOrEqual(HALF4);
    }
  });
});

describe('closed forms', () => {
  // d2(2) = 2/√π, d2(3) = 3/√π, d3(2) = √(2 − 4/π): exact results for the range of 2 and 3 normals
  // (David & Nagaraja, Order Statistics, §4.6); c4(2) = √(2/π), c4(3) = √π/2 from Γ(1/2) = √π.
  it('matches the exact values to 1e-12', () => {
    expect(d2(2)).toBeCloseTo(2 / Math.sqrt(Math.PI), 12);
    expect(d2(3)).toBeCloseTo(3 / Math.sqrt(Math.PI), 12);
    expect(d3(2)).toBeCloseTo(Math.sqrt(2 - 4 / Math.PI), 11);
    expect(c4(2)).toBeCloseTo(Math.sqrt(2 / Math.PI), 13);
    expect(c4(3)).toBeCloseTo(Math.sqrt(Math.PI) / 2, 13);
  });
  it('E2(2) = 3/d2(2) = 2.6587 (ASTM E2587 prints 2.66)', () => {
    expect(shewhartConstants(2).E2).toBeCloseTo(2.6587, 4);
  });
  it('derived constants follow their definitions (ASTM E2587)', () => {
    const c = shewhartConstants(12);
    expect(c.A2).toBeCloseTo(3 / (c.d2 * Math.sqrt(12)), 14);
    expect(c.D4 - 1).toBeCloseTo((3 * c.d3) / c.d2, 14);
    expect(c.B4 - 1).toBeCloseTo((3 * Math.sqrt(1 - c.c4 ** 2)) / c.c4, 14);
  });
  it('large n stays finite and monotone (d2 grows, d3 and 1 − c4 shrink)', () => {
    const a = shewhartConstants(200);
    const b = shewhartConstants(1000);
    expect(b.d2).toBeGreaterThan(a.d2);
    expect(b.d3).toBeLessThan(a.d3);
    expect(b.c4).toBeGreaterThan(a.c4);
    expect(b.c4).toBeLessThan(1);
  });
  it('caches: the same object is returned', () => {
    expect(shewhartConstants(7)).toBe(shewhartConstants(7));
  });
  it('rejects n < 2 and non-integers', () => {
    expect(() => shewhartConstants(1)).toThrow(ConstantsInputError);
    expect(() => d2(2.5)).toThrow(ConstantsInputError);
  });
});
