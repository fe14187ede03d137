// The plant model says when a chemistry lies outside what it learnt from: a predictor outside its
// training range, or a combination whose leverage exceeds every training heat's (hidden extrapolation,
// Montgomery, Peck & Vining, Introduction to Linear Regression Analysis, 5th ed., §3.8); and it never
// predicts a mean above the fully martensitic hardness of the carbon (ASTM A255 IH + 1 HRC, martensite.ts).
import { describe, expect, it } from 'vitest';
import { fitChemistryModel, type StoredModel } from '../../../src/analysis/chemistryModel.ts';
import { extrapolationCheck, leverageOf, predictWithModel } from '../../../src/analysis/prediction.ts';
import { fitOls } from '../../../src/stats/ols.ts';
import { initialHardness } from '../../../src/hardenability/martensite.ts';
import type { HeatCurve } from '../../../src/db/series.ts';
import { createRng } from '../../../src/stats/random.ts';
import { DISTANCES_MM, drawHeat } from '../../fixtures/analysisHistory.ts';

function history(n: number, seed: number): HeatCurve[] {
  const rng = createRng(seed);
  return Array.from({ length: n }, (_, i) => {
    const heat = drawHeat(rng);
    return {
      heatId: i + 1, heatNumber: `X-${i}`, mill: 'M', castDate: '2024-01-01', grainSize: heat.x.grainSize, chemistry: heat.x,
      testId: i + 1, source: 'mill_certificate', lotNumber: null,
      readings: new Map(DISTANCES_MM.map((d, j) => [d, heat.hrc[j]])),
    } as HeatCurve;
  });
}

function stored(curves: HeatCurve[]): StoredModel {
  const { residualCorrelation, heatCount, predictors, ...fits } = fitChemistryModel(curves);
  return { id: 1, grade: 'G', mill: null, version: 1, trainedFrom: null, trainedTo: null, source: 'mill_certificate', predictors, fits, residualCorrelation, heatCount, createdBy: null, createdAt: '2024-01-01T00:00:00Z' };
}

const model = stored(history(120, 11));
// Mid-range chemistry of the synthetic history (test/fixtures/analysisHistory.ts draws C 0.18-0.23, Mo 0.16-0.24, ...).
const centre = { C: 0.205, Mn: 0.8, Si: 0.25, Ni: 0.55, Cr: 0.52, Mo: 0.2 };

describe('plant-model extrapolation', () => {
  it('keeps each predictor range and the largest training leverage, which equals the OLS hat values', () => {
    const mo = model.fits.trainingRanges!.find((r) => r.name === 'Mo')!;
    expect(mo.min).toBeGreaterThanOrEqual(0.16);
    expect(mo.max).toBeLessThanOrEqual(0.24);
    // Recomputed with the hat matrix of an independent fit of the same data at 7 mm.
    const fit7 = model.fits.distances.find((f) => f.distanceMm === 7)!;
    const curves = history(120, 11);
    const x = curves.map((c) => ['C', 'Mn', 'Si', 'Ni', 'Cr', 'Mo'].map((e) => (c.chemistry as Record<string, number>)[e]).concat([c.grainSize!]));
    const ols = fitOls(x, curves.map((c) => c.readings.get(7)!), { names: ['C', 'Mn', 'Si', 'Ni', 'Cr', 'Mo', 'grainSize'], diagnostics: true });
    expect(fit7.maxLeverage).toBeCloseTo(Math.max(...ols.diagnostics!.leverage), 10);
    // And leverageOf(x_i) reproduces a training heat's hat value h_ii = x_iᵀ(XᵀX)⁻¹x_i.
    expect(leverageOf(fit7, [1, ...x[0]])).toBeCloseTo(ols.diagnostics!.leverage[0], 8);
  });

  it('a mid-range heat is not an extrapolation', () => {
    const r = predictWithModel(model, { chemistry: centre, grainSize: 7 }, null);
    expect(r.extrapolation).toMatchObject({ known: true, outsideRange: [], beyondLeverage: [], extrapolating: false });
  });

  it('Mo 0.60 on a model trained on 0.16-0.24 is flagged, in the API notes too, and the mean is capped at IH(C) + 1', () => {
    const r = predictWithModel(model, { chemistry: { ...centre, Mo: 0.6 }, grainSize: 7 }, null);
    expect(r.extrapolation!.extrapolating).toBe(true);
    expect(r.extrapolation!.outsideRange.map((o) => o.name)).toEqual(['Mo']);
    expect(r.notes.join(' ')).toMatch(/outside the model's training data: Mo 0\.6 \(trained on 0\.1\d+–0\.2\d+\)/);
    const ceiling = initialHardness(0.205) + 1;
    for (const p of r.points) expect(p.hrc).toBeLessThanOrEqual(ceiling + 1e-9);
    expect(r.points.some((p) => p.cappedAtMartensite)).toBe(true);
  });

  it('hidden extrapolation: each element inside its range, the combination unlike any heat', () => {
    // Every element at a corner of its range at once: inside each range, far from the cloud of heats.
    const ranges = Object.fromEntries(model.fits.trainingRanges!.map((r) => [r.name, r]));
    const corner = { C: ranges.C.max, Mn: ranges.Mn.min, Si: ranges.Si.max, Ni: ranges.Ni.min, Cr: ranges.Cr.max, Mo: ranges.Mo.min };
    const check = extrapolationCheck(model, { chemistry: corner, grainSize: ranges.grainSize.max }, [1, corner.C, corner.Mn, corner.Si, corner.Ni, corner.Cr, corner.Mo, ranges.grainSize.max]);
    expect(check.outsideRange).toEqual([]);
    expect(check.beyondLeverage.length).toBe(model.fits.distances.length);
    const r = predictWithModel(model, { chemistry: corner, grainSize: ranges.grainSize.max }, null);
    expect(r.notes.join(' ')).toMatch(/hidden extrapolation/);
  });

  it('a model stored before ranges were kept says it cannot tell', () => {
    const old = structuredClone(model);
    delete old.fits.trainingRanges;
    for (const f of old.fits.distances) delete f.maxLeverage;
    const r = predictWithModel(old, { chemistry: centre, grainSize: 7 }, null);
    expect(r.extrapolation).toMatchObject({ known: false, extrapolating: false });
    expect(r.notes.join(' ')).toMatch(/refit it/);
  });
});
