import { readFileSync } from 'node:fs';
import { describe, expect, it } from 'vitest';
import { checkCurveNonIncreasing, curveRises } from '../../../src/hardenability/checks/curveShape.ts';
import { checkMartensiteCeiling } from '../../../src/hardenability/checks/martensiteCeiling.ts';
import { checkChemistryLimits } from '../../../src/hardenability/checks/chemistryLimits.ts';
import { findPossibleCopies } from '../../../src/hardenability/checks/copies.ts';
import type { HeatRecord } from '../../../src/hardenability/checks/copies.ts';
import { checkAgainstPrediction, familyWiseZ, perComparisonAlpha } from '../../../src/hardenability/checks/prediction.ts';
import { createRng } from '../../../src/stats/random.ts';
import type { Reading } from '../../../src/hardenability/types.ts';

const ISO = [1.5, 3, 5, 7, 9, 11, 13, 15, 20, 25, 30, 35, 40];
const curve = (hrc: number[]): Reading[] => ISO.slice(0, hrc.length).map((mm, i) => ({ mm, hrc: hrc[i] }));
const good = [46, 45, 43, 40, 37, 35, 33, 31, 29, 27, 26, 25, 24];

describe('curve non-increasing within tolerance', () => {
  it('passes a falling curve and a 1 HRC wobble (within 2 HRC, common practice)', () => {
    expect(checkCurveNonIncreasing(curve(good)).verdict).toBe('pass');
    const wobble = [...good];
    wobble[8] = 32; // 29 -> 32 after 31 at 15 mm: a 1 HRC rise
    const r = checkCurveNonIncreasing(curve(wobble));
    expect(r.verdict).toBe('pass');
    expect(r.values.largestRise).toBe(1);
    expect(r.summary).toMatch(/within the 2 HRC/);
  });

  it('fails a rise beyond the tolerance and names the two readings', () => {
    const bad = [...good];
    bad[6] = 30; // dip at 13 mm ...
    bad[8] = 33; // ... then 33 at 20 mm: 3 above the lowest nearer reading
    const r = checkCurveNonIncreasing(curve(bad));
    expect(r.verdict).toBe('fail');
    expect(r.values.largestRise).toBe(3);
    expect(r.summary).toMatch(/30 at 13 mm to 33 at 20 mm/);
    expect(checkCurveNonIncreasing(curve(bad), { toleranceHrc: 3 }).verdict).toBe('pass');
  });

  it('rises are measured from the lowest reading nearer the quenched end', () => {
    expect(curveRises(curve([40, 35, 37, 36]))).toEqual([
      { fromMm: 3, fromHrc: 35, toMm: 5, toHrc: 37, rise: 2 },
      { fromMm: 3, fromHrc: 35, toMm: 7, toHrc: 36, rise: 1 },
    ]);
  });
});

describe('J1 against the martensite ceiling', () => {
  it('0.20 % C: 47.8 HRC passes, 48 is worth a look, 51.5 fails (IH(0.20) = 44.4 HRC, ASTM A255 as transcribed; tolerances 3.5 and 7 HRC read off published bands)', () => {
    const p = checkMartensiteCeiling(curve([47.8, 42]), 0.2);
    expect(p.verdict).toBe('pass');
    expect(p.values.ceilingHrc).toBeCloseTo(44.4, 1);
    expect(checkMartensiteCeiling(curve([48, 42]), 0.2).verdict).toBe('warn');
    const f = checkMartensiteCeiling(curve([51.5, 42]), 0.2);
    expect(f.verdict).toBe('fail');
    expect(f.summary).toMatch(/7\.1 HRC above 44\.4 HRC/);
  });

  // Band-edge heats: chemistry at the grade's carbon limits, quenched-end reading at the band's limit.
  // Bands at the quenched end (J1 / 1.5 mm): SAE J1268 8620H 41-48 (C .17-.23) and EN 10084 20MnCr5+H
  // 41-49 (C .17-.22), high confidence; SAE J1268 4140H 53-60 (C .37-.44), 5120H 40-48 (C .17-.23),
  // EN 10084 16MnCr5+H 39-47 (C .14-.19), EN 10083-3 42CrMo4+H 53-61 (C .38-.45), from memory.
  const BAND_ENDS: Array<[grade: string, cMin: number, cMax: number, min: number, max: number]> = [
    ['8620H', 0.17, 0.23, 41, 48],
    ['20MnCr5+H', 0.17, 0.22, 41, 49],
    ['4140H', 0.37, 0.44, 53, 60],
    ['5120H', 0.17, 0.23, 40, 48],
    ['16MnCr5+H', 0.14, 0.19, 39, 47],
    ['42CrMo4+H', 0.38, 0.45, 53, 61],
  ];
  for (const [grade, cMin, cMax, min, max] of BAND_ENDS) {
    it(`${grade}: a heat inside the band at the quenched end is not flagged at its carbon limits, and never failed`, () => {
      // Highest carbon, band maximum; lowest carbon, band minimum: pass.
      expect(checkMartensiteCeiling([{ mm: 1.5, hrc: max }], cMax).verdict).toBe('pass');
      expect(checkMartensiteCeiling([{ mm: 1.5, hrc: min }], cMin).verdict).toBe('pass');
      // Lowest carbon reading the band's maximum: inside the band, at most worth a look.
      expect(checkMartensiteCeiling([{ mm: 1.5, hrc: max }], cMin).verdict).not.toBe('fail');
    });
  }

  it('is not applicable where the ceiling relation is not usable', () => {
    expect(checkMartensiteCeiling(curve([60]), 1.0).verdict).toBe('not_applicable');
  });
});

describe('chemistry against grade limits', () => {
  // Source: SAE J1268 8620H chemistry: C .17-.23 Mn .60-.95 Si .15-.35 Ni .35-.75 Cr .35-.65 Mo .15-.25.
  const limits = {
    C: { min: 0.17, max: 0.23 }, Mn: { min: 0.6, max: 0.95 }, Si: { min: 0.15, max: 0.35 },
    Ni: { min: 0.35, max: 0.75 }, Cr: { min: 0.35, max: 0.65 }, Mo: { min: 0.15, max: 0.25 },
  };
  it('passes a heat inside, fails one outside, warns within an agreed tolerance or when unreported', () => {
    const chem = { C: 0.2, Mn: 0.8, Si: 0.25, Ni: 0.5, Cr: 0.5, Mo: 0.2 };
    expect(checkChemistryLimits(chem, limits).verdict).toBe('pass');
    const out = checkChemistryLimits({ ...chem, Mn: 0.98 }, limits);
    expect(out.verdict).toBe('fail');
    expect(out.values.rows.find((r) => r.element === 'Mn')?.excess).toBeCloseTo(0.03, 12);
    expect(out.summary).toMatch(/Mn 0.98/);
    expect(checkChemistryLimits({ ...chem, Mn: 0.98 }, limits, { tolerances: { Mn: 0.04 } }).verdict).toBe('warn');
    const { Mo: _mo, ...noMo } = chem;
    expect(checkChemistryLimits(noMo, limits).verdict).toBe('warn');
  });
});

describe('possible copied certificates', () => {
  const chem = { C: 0.2, Mn: 0.81, Si: 0.24, Ni: 0.52, Cr: 0.49, Mo: 0.21, P: 0.012, S: 0.021 };
  const target: HeatRecord = { heatId: 'H1', millId: 'M1', readings: curve(good), chemistry: chem };

  it('finds an exact copy of the curve at another heat of the same mill, not at another mill', () => {
    const r = findPossibleCopies(target, [
      { heatId: 'H2', millId: 'M1', readings: curve(good) },
      { heatId: 'H3', millId: 'M2', readings: curve(good) },
      { heatId: 'H1', millId: 'M1', readings: curve(good) },
    ]);
    // The curve alone repeated: worth a look (a coarsely rounded curve can repeat by chance).
    expect(r.verdict).toBe('warn');
    expect(r.values.matches).toEqual([{ otherHeatId: 'H2', kind: 'curve_exact', compared: 13, largestDifference: 0 }]);
    expect(r.values.candidatesCompared).toBe(1);
  });

  it('the whole certificate of another heat repeated (curve and chemistry) fails', () => {
    const r = findPossibleCopies(target, [{ heatId: 'H2', millId: 'M1', readings: curve(good), chemistry: { ...chem } }]);
    expect(r.verdict).toBe('fail');
    expect(r.values.matches.map((m) => m.kind)).toEqual(['curve_exact', 'chemistry_exact']);
  });

  it('curve and chemistry repeated from two different heats is worth a look, not a copy of one certificate', () => {
    const r = findPossibleCopies(target, [
      { heatId: 'H2', millId: 'M1', readings: curve(good) },
      { heatId: 'H6', millId: 'M1', chemistry: { ...chem } },
    ]);
    expect(r.verdict).toBe('warn');
  });

  it('a near match within rounding is listed but passes; a real difference does not match', () => {
    const near = good.map((h, i) => (i === 3 ? h + 0.5 : h));
    const far = good.map((h, i) => (i === 3 ? h + 2 : h));
    const r = findPossibleCopies(target, [
      { heatId: 'H4', millId: 'M1', readings: curve(near) },
      { heatId: 'H5', millId: 'M1', readings: curve(far) },
    ]);
    expect(r.verdict).toBe('pass');
    expect(r.values.matches.map((m) => [m.otherHeatId, m.kind])).toEqual([['H4', 'curve_near']]);
  });

  it('matches chemistry exactly or within half a unit of the last digit, and needs enough elements', () => {
    const r = findPossibleCopies(target, [
      { heatId: 'H6', millId: 'M1', chemistry: { ...chem } },
      { heatId: 'H7', millId: 'M1', chemistry: { ...chem, Mn: 0.814 } },
      { heatId: 'H8', millId: 'M1', chemistry: { ...chem, Mn: 0.83 } },
      { heatId: 'H9', millId: 'M1', chemistry: { C: 0.2, Mn: 0.81 } },
    ]);
    expect(r.values.matches.map((m) => [m.otherHeatId, m.kind])).toEqual([
      ['H6', 'chemistry_exact'],
      ['H7', 'chemistry_near'],
    ]);
  });
});

describe('reported curve against a predicted one', () => {
  // Family-wise thresholds: scipy.stats.norm.isf of the Sidak / Bonferroni per-distance level (scipy 1.10.1),
  // generated by test/reference/multiplicity_reference.py.
  const ref = JSON.parse(readFileSync(new URL('../../reference/multiplicity.json', import.meta.url), 'utf8')) as {
    familyWise: Array<{ m: number; alpha: number; sidakZ: number; bonferroniZ: number }>;
  };
  const zStar = (m: number, alpha: number) => ref.familyWise.find((r) => r.m === m && r.alpha === alpha)!;

  it('thresholds are Sidak (default) or Bonferroni over the distances compared (scipy norm.isf)', () => {
    for (const r of ref.familyWise) {
      expect(familyWiseZ(r.alpha, r.m)).toBeCloseTo(r.sidakZ, 8);
      expect(familyWiseZ(r.alpha, r.m, 'bonferroni')).toBeCloseTo(r.bonferroniZ, 8);
    }
    // Sidak: 1 - (1 - a)^m = alpha exactly (Sidak 1967).
    expect(1 - (1 - perComparisonAlpha(0.05, 13)) ** 13).toBeCloseTo(0.05, 14);
    expect(() => perComparisonAlpha(0.05, 0)).toThrow(/positive integer/);
  });

  it('standardised residual z = (reported - mean) / sd at common distances, judged family-wise', () => {
    const prediction = ISO.slice(0, 5).map((mm, i) => ({ mm, mean: good[i], sd: 2 }));
    const reported = curve([46, 45, 43, 45, 37, 35]);
    const r = checkAgainstPrediction(reported, prediction);
    // At 7 mm: (45 - 40) / 2 = 2.5. Over 5 distances the Sidak warn threshold at overall 0.05 is 2.569
    // (scipy), so 2.5 passes; with a fixed per-distance |z| > 2 it would warn.
    expect(r.values.rows.find((x) => x.mm === 7)?.z).toBe(2.5);
    expect(r.threshold).toMatchObject({ method: 'sidak', warnAlpha: 0.05, failAlpha: 0.001, distances: 5 });
    expect(r.threshold.warnZ as number).toBeCloseTo(zStar(5, 0.05).sidakZ, 8);
    expect(r.threshold.failZ as number).toBeCloseTo(zStar(5, 0.001).sidakZ, 8);
    expect(r.verdict).toBe('pass');
    expect(checkAgainstPrediction(reported, prediction, { warnZ: 2, failZ: 3 }).verdict).toBe('warn');
    expect(r.values.notCompared).toEqual([11]);
    expect(r.values.rows).toHaveLength(5);
    // Sum of z^2 = 6.25 on 5 df; scipy.stats.chi2.sf(6.25, 5) = 0.282647 (scipy 1.10.1).
    expect(r.values.sumZ2).toBe(6.25);
    expect(r.values.pValue).toBeCloseTo(0.282647, 5);
    // z = 2.6 (just above 2.569) warns; z = 3.75 (above 3.719) fails.
    expect(checkAgainstPrediction(curve([46, 45, 43, 45.2, 37]), prediction).verdict).toBe('warn');
    expect(checkAgainstPrediction(curve([46, 45, 43, 47.5, 37]), prediction).verdict).toBe('fail');
    // Four distances compared: thresholds follow m = 4 (z = 3.5 is below the 3.662 fail threshold).
    const four = checkAgainstPrediction(curve([46, 45, 43, 47]), prediction);
    expect(four.threshold.failZ as number).toBeCloseTo(zStar(4, 0.001).sidakZ, 8);
    expect(four.verdict).toBe('warn');
    expect(checkAgainstPrediction(reported, prediction, { correction: 'bonferroni' }).threshold.warnZ as number).toBeCloseTo(zStar(5, 0.05).bonferroniZ, 8);
    expect(() => checkAgainstPrediction(reported, [{ mm: 1.5, mean: 40, sd: 0 }])).toThrow(/positive SD/);
    expect(() => checkAgainstPrediction(reported, prediction, { warnZ: 2 })).toThrow(/both/);
  });

  it('an honest certificate (independent N(0,1) residuals at 13 distances) is flagged in about 5 % of cases', () => {
    // Property of the Sidak threshold: P(max |z_j| > z*) = 1 - (1 - a)^13 = 0.05 for independent
    // residuals (Sidak 1967). 4000 seeded certificates: binomial SD of the rate 0.0034, so 3-7 % is
    // about +-6 SD. A fixed |z| > 2 flags 1 - 0.9545^13 = 45 % (same normal-tail arithmetic).
    const rng = createRng(20240917);
    const prediction = ISO.map((mm, i) => ({ mm, mean: good[i], sd: 1.5 }));
    const n = 4000;
    let flagged = 0;
    let failed = 0;
    let fixedFlagged = 0;
    for (let k = 0; k < n; k++) {
      const readings = ISO.map((mm, i) => ({ mm, hrc: good[i] + 1.5 * rng.normal() }));
      const v = checkAgainstPrediction(readings, prediction).verdict;
      if (v !== 'pass') flagged++;
      if (v === 'fail') failed++;
      if (checkAgainstPrediction(readings, prediction, { warnZ: 2, failZ: 3 }).verdict !== 'pass') fixedFlagged++;
    }
    expect(flagged / n).toBeGreaterThan(0.03);
    expect(flagged / n).toBeLessThan(0.07);
    // Fail at overall 0.001: expected 4 of 4000 (Poisson upper 99.9 % point about 12).
    expect(failed).toBeLessThan(12);
    expect(fixedFlagged / n).toBeGreaterThan(0.4);
    expect(fixedFlagged / n).toBeLessThan(0.5);
  });
});
