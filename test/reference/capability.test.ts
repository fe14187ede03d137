// Capability on supply data against fixtures from Debian's scipy / statsmodels
// (test/reference/capability_fixtures.py writes test/reference/capability-fixtures.json; versions inside).
import { readFileSync } from 'node:fs';
import { describe, expect, it } from 'vitest';
import { clopperPearson } from '../../src/stats/binomialBounds.ts';
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
