// Capability on supply data against fixtures from Debian's scipy / statsmodels
// (test/reference/capability_fixtures.py writes test/reference/capability-fixtures.json; versions inside).
import { readFileSync } from 'node:fs';
import { describe, expect, it } from 'vitest';
import { clopperPearson } from '../../src/stats/binomialBounds.ts';
import { supplyNonconforming } from '../../src/stats/supplyNonconforming.ts';
import { simulatedPercentText, simulatedProbabilityText } from '../../src/web/probabilityText.ts';

const fix = JSON.parse(readFileSync(new URL('./capability-fixtures.json', import.meta.url), 'utf8'));

describe('Clopper–Pearson bounds (statsmodels proportion_confint, method "beta")', () => {
  for (const c of fix.clopperPearson as Array<{ x: number; n: number; lower: number; upper: number }>) {
    it(`${c.x} of ${c.n}`, () => {
      const b = clopperPearson(c.x, c.n, 0.95);
      expect(Math.abs(b.lower - c.lower)).toBeLessThan(1e-9);
      expect(Math.abs(b.upper - c.upper)).toBeLessThan(1e-9);
    });
  }
});

describe('simulated probabilities in words', () => {
  it('all 20000 draws inside reads "> 99.981 %", not 100.0 % (lower bound 0.99981557, statsmodels)', () => {
    expect(simulatedProbabilityText(1, 20000)).toBe('> 99.981 %');
    expect(simulatedProbabilityText(0, 20000)).toBe('< 0.019 %');
  });
  it('otherwise the estimate with its bounds, decimals enough to show them apart from 100 %', () => {
    // 19990 of 20000: bounds 0.999081–0.999760 (statsmodels, fixture above).
    expect(simulatedProbabilityText(19990 / 20000, 20000)).toBe('99.950 % (95 % bounds 99.908–99.977 %)');
    expect(simulatedPercentText(clopperPearson(500, 1000))).toMatch(/^50\.0 % \(95 % bounds 46\.8–53\.2 %\)$/);
  });
});

describe('supply share outside the band (numpy/scipy generalized pivotal quantities, 400000 draws)', () => {
  const ref = fix.supply;
  const r = supplyNonconforming(ref.input, { lsl: ref.lsl, usl: ref.usl }, { draws: 40000, seed: 3 });
  it('point value: the heat-weighted sum of the mills’ normal-model shares (scipy norm.cdf), to 1e-12', () => {
    expect(Math.abs(r.fraction - ref.fraction)).toBeLessThan(1e-12);
    r.parts.forEach((p, i) => expect(Math.abs(p.fraction - ref.parts[i].fraction)).toBeLessThan(1e-12));
    expect(r.parts.map((p) => p.weight)).toEqual([120 / 210, 60 / 210, 30 / 210]);
  });
  it('interval: within 4 % of the reference quantiles (Monte Carlo error of 40000 seeded draws)', () => {
    expect(Math.abs(r.lower / ref.lower - 1)).toBeLessThan(0.04);
    expect(Math.abs(r.upper / ref.upper - 1)).toBeLessThan(0.04);
    r.parts.forEach((p, i) => {
      expect(Math.abs(p.lower / ref.parts[i].lower - 1)).toBeLessThan(0.06);
      expect(Math.abs(p.upper / ref.parts[i].upper - 1)).toBeLessThan(0.06);
    });
  });
});
