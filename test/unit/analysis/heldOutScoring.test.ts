// Held-out scoring of the plant model: heats kept out of training are predicted and their 95 %
// prediction intervals checked. On data drawn from the fixture's known linear model with normal errors
// (test/fixtures/analysisHistory.ts), the OLS prediction interval ŷ ± t·s·√(1 + x₀ᵀ(XᵀX)⁻¹x₀) is exact
// (Montgomery, Peck & Vining, Introduction to Linear Regression Analysis, 5th ed., §3.5), so coverage
// should be near 0.95; shifted held-out heats must show it falling.
import { describe, expect, it } from 'vitest';
import { fitChemistryModel, holdOutRule } from '../../../src/analysis/chemistryModel.ts';
import type { HeatCurve } from '../../../src/db/series.ts';
import { createRng } from '../../../src/stats/random.ts';
import { DISTANCES_MM, drawHeat } from '../../fixtures/analysisHistory.ts';

function history(n: number, seed: number, shiftFrom = Infinity, shift = 0): HeatCurve[] {
  const rng = createRng(seed);
  return Array.from({ length: n }, (_, i) => {
    const heat = drawHeat(rng);
    const day = new Date(Date.UTC(2022, 0, 1) + i * 86_400_000).toISOString().slice(0, 10);
    return {
      heatId: i + 1, heatNumber: `H-${i}`, mill: i % 2 ? 'ODD' : 'EVEN', castDate: day, grainSize: heat.x.grainSize, chemistry: heat.x,
      testId: i + 1, source: 'mill_certificate', lotNumber: null,
      readings: new Map(DISTANCES_MM.map((d, j) => [d, heat.hrc[j] + (i >= shiftFrom ? shift : 0)])),
    } as HeatCurve;
  });
}

describe('held-out scoring', () => {
  const curves = history(700, 7);
  const cut = curves[300].castDate;

  it('trains without the held-out heats and covers about 95 % of them at each distance', () => {
    const model = fitChemistryModel(curves, { holdOut: holdOutRule({ holdOutFrom: cut }) });
    expect(model.heldOut).toMatchObject({ rule: `heats cast on or after ${cut}`, heats: 400 });
    for (const d of model.distances) {
      expect(d.heatIds.every((id) => id <= 300)).toBe(true);
      expect(d.heldOut!.n).toBe(400);
      // Binomial(400, 0.95): SD 0.011; 4 SD either side.
      expect(d.heldOut!.coverage95!).toBeGreaterThan(0.95 - 0.044);
      expect(d.heldOut!.coverage95!).toBeLessThan(0.95 + 0.044);
      // Held-out error near the cross-validated error of the same model (both estimate the error SD).
      expect(d.heldOut!.rmse! / d.cvRmse).toBeGreaterThan(0.8);
      expect(d.heldOut!.rmse! / d.cvRmse).toBeLessThan(1.25);
    }
  });

  it('a held-out set 3 HRC harder than the training heats shows the bias and the coverage falling', () => {
    const shifted = history(700, 7, 300, 3);
    const model = fitChemistryModel(shifted, { holdOut: holdOutRule({ holdOutFrom: cut }) });
    for (const d of model.distances) {
      expect(d.heldOut!.bias!).toBeGreaterThan(2.5);
      expect(d.heldOut!.bias!).toBeLessThan(3.5);
      expect(d.heldOut!.coverage95!).toBeLessThan(0.9);
    }
  });

  it('a mill held out; nothing held out is said plainly', () => {
    const model = fitChemistryModel(curves, { holdOut: holdOutRule({ holdOutMills: ['ODD'] }) });
    expect(model.heldOut).toMatchObject({ rule: 'heats of ODD', heats: 350 });
    expect(holdOutRule({})).toBeUndefined();
    expect(() => fitChemistryModel(curves, { holdOut: holdOutRule({ holdOutFrom: '2099-01-01' }) })).toThrow(/no heat is held out/);
  });
});
