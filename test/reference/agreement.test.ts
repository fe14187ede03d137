// Laboratory agreement and gauge studies against published and reference-library values:
// - Bland & Altman (1986), Lancet 327:307–310, Table 1 PEFR data and the values printed in the paper;
// - scipy 1.10 / statsmodels 0.13 (Debian python3 packages) in test/reference/agreement_reference.py,
//   versions recorded in agreement.json;
// - Lucas & Saccucci (1990), Technometrics 32:1–12, Table 3 (EWMA λ = 0.1, L = 2.814: ARL 10.3 at a 1σ shift).
import { readFileSync } from 'node:fs';
import { describe, expect, it } from 'vitest';
import { blandAltman } from '../../src/stats/blandAltman.ts';
import { gaugeStudy, type GaugeReading } from '../../src/stats/gaugeStudy.ts';
import { pairedBiasChart } from '../../src/stats/pairedBiasChart.ts';

const fx = JSON.parse(readFileSync(new URL('./agreement.json', import.meta.url), 'utf8'));

describe('Bland–Altman on the PEFR data of Bland & Altman (1986)', () => {
  const { wright, mini } = fx.pefr as { wright: number[]; mini: number[] };

  it('reproduces the values printed in the paper (Lancet 1986; limits at ±2 SD; paper rounds to 0.1)', () => {
    const r = blandAltman(wright, mini, { multiplier: 2 });
    expect(r.n).toBe(17);
    expect(r.bias).toBeCloseTo(-2.1, 1); // paper: mean difference −2.1 l/min
    expect(r.sd).toBeCloseTo(38.8, 1); // paper: SD of differences 38.8 l/min
    // Paper: limits of agreement −79.7 to 75.4 l/min, computed there from the rounded −2.1 and 38.8.
    expect(Math.abs(r.lowerLimit - -79.7)).toBeLessThan(0.1);
    expect(Math.abs(r.upperLimit - 75.4)).toBeLessThan(0.1);
    // Paper: 95 % CI of the lower limit −114.3 to −45.1 (SE √(3s²/n) = 16.3, t = 2.12, both rounded
    // in print, so agreement to 0.2 is what the printed figures allow).
    expect(Math.abs(r.lowerLimitInterval.lower - -114.3)).toBeLessThan(0.2);
    expect(Math.abs(r.lowerLimitInterval.upper - -45.1)).toBeLessThan(0.2);
    expect(r.limitSe).toBeCloseTo(16.3, 1);
  });

  for (const [name, multiplier] of [['twoSd', 2], ['z196', 1.96]] as const) {
    it(`matches scipy to 1e-9 (limits at ±${multiplier} SD; agreement_reference.py)`, () => {
      const ref = fx.pefr[name];
      const r = blandAltman(wright, mini, { multiplier });
      const close = (a: number, b: number) => expect(Math.abs(a - b)).toBeLessThan(1e-9 * Math.max(1, Math.abs(b)));
      close(r.bias, ref.bias);
      close(r.sd, ref.sd);
      close(r.biasInterval.lower, ref.biasLower);
      close(r.biasInterval.upper, ref.biasUpper);
      close(r.lowerLimit, ref.lowerLimit);
      close(r.upperLimit, ref.upperLimit);
      close(r.lowerLimitInterval.lower, ref.lowerLimitLower);
      close(r.upperLimitInterval.upper, ref.upperLimitUpper);
      expect(Math.abs(r.biasP - ref.biasP)).toBeLessThan(1e-8); // scipy.stats.ttest_rel
      close(r.byLevel!.slope, ref.slope); // scipy.stats.linregress
      close(r.byLevel!.intercept, ref.intercept);
      close(r.byLevel!.slopeSe, ref.slopeSe);
      expect(Math.abs(r.byLevel!.slopeP - ref.slopeP)).toBeLessThan(1e-8);
    });
  }

  it('takes the reference method\'s known repeatability out of the scatter (Var(d) = σa² + σb², ISO 5725-2)', () => {
    const r = blandAltman(wright, mini, { referenceRepeatabilitySd: 20 });
    expect(r.ownSd!).toBeCloseTo(Math.sqrt(r.sd ** 2 - 400), 10);
    expect(blandAltman(wright, mini, { referenceRepeatabilitySd: 50 }).ownSd).toBe(0);
    expect(() => blandAltman([1, 2], [1, 2])).toThrow(/at least 3 pairs/);
    expect(() => blandAltman([1, 2, 3], [1, 2])).toThrow(/pair up/);
  });
});

describe('gauge R&R by ANOVA against statsmodels (agreement_reference.py)', () => {
  const caseOf = (name: string) => fx.gauge[name] as { readings: GaugeReading[]; ss: Record<string, number>; reml: Record<string, number>; interactionP?: number; partP?: number };
  const rel = (a: number, b: number) => Math.abs(a - b) / Math.max(Math.abs(b), 1e-12);

  it('crossed design with a real interaction: sums of squares (anova_lm) and variance components (MixedLM REML)', () => {
    const c = caseOf('crossed');
    const g = gaugeStudy(c.readings);
    expect([g.parts, g.operators, g.replicates]).toEqual([10, 3, 3]);
    const line = (s: string) => g.anova.find((a) => a.source === s)!;
    expect(rel(line('part').ss, c.ss.part)).toBeLessThan(1e-10);
    expect(rel(line('operator').ss, c.ss.operator)).toBeLessThan(1e-10);
    expect(rel(line('part×operator').ss, c.ss.interaction)).toBeLessThan(1e-10);
    expect(rel(line('repeatability').ss, c.ss.error)).toBeLessThan(1e-10);
    expect(Math.abs(line('part×operator').p! - c.interactionP!)).toBeLessThan(1e-9);
    expect(g.interactionPooled).toBe(false);
    // REML by a numerical optimiser (statsmodels warns of slow convergence): agreement to 1e-4 relative.
    expect(rel(g.components.repeatability.variance, c.reml.error)).toBeLessThan(1e-4);
    expect(rel(g.components.interaction.variance, c.reml.po)).toBeLessThan(1e-3);
    expect(rel(g.components.operator.variance, c.reml.operator)).toBeLessThan(1e-3);
    expect(rel(g.components.part.variance, c.reml.part)).toBeLessThan(1e-3);
    const grr = g.components.repeatability.variance + g.components.operator.variance + g.components.interaction.variance;
    expect(g.components.gaugeRR.variance).toBeCloseTo(grr, 12);
    // AIAG MSA 4th ed.: ndc = ⌊1.41 σ_P/σ_GRR⌋; E177: r = 2.8 s_r.
    expect(g.distinctCategories).toBe(Math.floor((1.41 * g.components.part.sd) / g.components.gaugeRR.sd));
    expect(g.repeatabilityLimit).toBeCloseTo(1.96 * Math.SQRT2 * g.components.repeatability.sd, 12);
  });

  it('pools an interaction with p above 0.25 (AIAG) and then matches REML of the additive model', () => {
    const c = caseOf('pooled');
    expect(c.interactionP!).toBeGreaterThan(0.25);
    const g = gaugeStudy(c.readings);
    expect(g.interactionPooled).toBe(true);
    expect(g.anova.map((a) => a.source)).toEqual(['part', 'operator', 'repeatability', 'total']);
    expect(rel(g.components.repeatability.variance, c.reml.error)).toBeLessThan(1e-4);
    expect(rel(g.components.operator.variance, c.reml.operator)).toBeLessThan(1e-3);
    expect(rel(g.components.part.variance, c.reml.part)).toBeLessThan(1e-3);
    // Switching pooling off keeps the interaction line.
    expect(gaugeStudy(c.readings, { poolAbove: 1 }).interactionPooled).toBe(false);
  });

  it('one laboratory with duplicate tests: one-way ANOVA (anova_lm), s_r² = Σd²/(2k)', () => {
    const c = caseOf('oneOperator');
    const g = gaugeStudy(c.readings);
    expect(g.operators).toBe(1);
    const line = (s: string) => g.anova.find((a) => a.source === s)!;
    expect(rel(line('part').ss, c.ss.part)).toBeLessThan(1e-10);
    expect(rel(line('repeatability').ss, c.ss.error)).toBeLessThan(1e-10);
    expect(Math.abs(line('part').p! - c.partP!)).toBeLessThan(1e-9);
    const byPart = new Map<string, number[]>();
    for (const r of c.readings) byPart.set(r.part, [...(byPart.get(r.part) ?? []), r.value]);
    const sumD2 = [...byPart.values()].reduce((s, [a, b]) => s + (a - b) ** 2, 0);
    expect(g.components.repeatability.variance).toBeCloseTo(sumD2 / (2 * byPart.size), 12);
  });

  it('Montgomery Example 8.7 (Houf & Berman 1988 thermal impedance, 10 parts × 3 operators × 3): mean squares and variance components', () => {
    const c = caseOf('houf');
    const g = gaugeStudy(c.readings);
    const line = (s: string) => g.anova.find((a) => a.source === s)!;
    // Sums of squares against statsmodels anova_lm (agreement_reference.py).
    expect(rel(line('part').ss, c.ss.part)).toBeLessThan(1e-10);
    expect(rel(line('part×operator').ss, c.ss.interaction)).toBeLessThan(1e-10);
    expect(rel(line('repeatability').ss, c.ss.error)).toBeLessThan(1e-10);
    expect(g.interactionPooled).toBe(false); // interaction p ≈ 5e-7 (statsmodels)
    // Printed in Montgomery's example (values from memory, matching the statsmodels mean squares above to
    // the printed digits): MS 437.33, 19.63, 2.70, 0.51; σ²_P 48.29, σ²_O 0.56, σ²_PO 0.73, σ² 0.51,
    // gauge σ² 1.80.
    expect(line('part').ms).toBeCloseTo(437.33, 2);
    expect(line('operator').ms).toBeCloseTo(19.63, 2);
    expect(line('part×operator').ms).toBeCloseTo(2.7, 2);
    expect(line('repeatability').ms).toBeCloseTo(0.51, 2);
    expect(g.components.part.variance).toBeCloseTo(48.29, 2);
    expect(g.components.operator.variance).toBeCloseTo(0.56, 2);
    expect(g.components.interaction.variance).toBeCloseTo(0.73, 2);
    expect(g.components.gaugeRR.variance).toBeCloseTo(1.8, 1);
  });

  it('refuses an unbalanced study with the cell named', () => {
    const c = caseOf('crossed');
    expect(() => gaugeStudy(c.readings.slice(1))).toThrow(/balanced: part P1, operator O1 has 2/);
  });
});

describe('paired-bias chart', () => {
  it('signals a planted shift only after it, and reports its out-of-control ARLs by the Markov chain (Lucas & Saccucci 1990)', () => {
    // Ten pairs on target, then the bias moves by 2.5 σ (the in-control ±0.5 pattern is our own input).
    const values = [...Array.from({ length: 10 }, (_, i) => (i % 2 ? 0.5 : -0.5)), ...Array.from({ length: 8 }, () => 2.5)];
    const chart = pairedBiasChart(values, { target: 0, sigma: 1, lambda: 0.1, L: 2.814 });
    expect(chart.signals.every((i) => i >= 10)).toBe(true);
    expect(chart.firstSignal).not.toBeNull();
    // Lucas & Saccucci (1990) Table 3, λ = 0.1, L = 2.814: ARL 10.3 for a one-sigma shift.
    expect(Math.abs(chart.arlAtShift.oneSigma - 10.3)).toBeLessThan(0.15);
    expect(chart.arlAtShift.twoSigma).toBeLessThan(chart.arlAtShift.oneSigma);
  });
});
