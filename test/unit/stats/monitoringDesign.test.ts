// Designing limits for a stated in-control ARL (src/stats/monitoringDesign.ts).
import { describe, expect, it } from 'vitest';
import { cusumLimitForArl, ewmaLimitForArl, ewmaLimitForEstimated, splitArl, targetArlHeats } from '../../../src/stats/monitoringDesign.ts';
import { ewmaArl } from '../../../src/stats/runLength.ts';
import { createRng } from '../../../src/stats/random.ts';

describe('from a false-alarm budget to an ARL', () => {
  it('one false alarm in three years at 150 heats a year is an in-control ARL of 450 heats (definition of the ARL; Montgomery, Introduction to SQC, §5.3.3)', () => {
    expect(targetArlHeats({ heatsPerYear: 150, yearsPerFalseAlarm: 3 })).toBe(450);
    expect(() => targetArlHeats({ heatsPerYear: 0, yearsPerFalseAlarm: 3 })).toThrow(/heatsPerYear/);
  });
  it('shares of a scheme add as reciprocals, 1/ARL = Σ 1/ARL_i (Lucas & Crosier 1982, Technometrics 24, two-sided CUSUM)', () => {
    const [a, b] = splitArl(450, [0.5, 0.5]);
    expect(a).toBe(900);
    expect(1 / a + 1 / b).toBeCloseTo(1 / 450, 15);
    expect(() => splitArl(450, [0.5, 0.4])).toThrow(/sum to 1/);
  });
});

describe('limits for a target ARL', () => {
  it('EWMA λ = 0.1 for ARL0 500 gives L = 2.814 (Lucas & Saccucci 1990, Technometrics 32(1), Table 3)', () => {
    const d = ewmaLimitForArl({ lambda: 0.1, targetArl: 500 });
    expect(Math.abs(d.L - 2.814)).toBeLessThan(0.005);
    expect(d.arl).toBeCloseTo(500, -1);
  });
  it('CUSUM k = 0.5 for a two-sided ARL0 465 gives h = 5 (Montgomery, Introduction to SQC, §9.1 CUSUM ARL table)', () => {
    const d = cusumLimitForArl({ k: 0.5, targetArl: 465 });
    expect(Math.abs(d.h - 5)).toBeLessThan(0.02);
  });
  it('refuses a target no limit reaches', () => {
    expect(() => ewmaLimitForArl({ lambda: 0.1, targetArl: 1e12 })).toThrow(/beyond reach/);
  });
});

describe('limits widened for an estimated reference (Gandy & Kvaløy 2013 guaranteed conditional performance)', () => {
  it('the conditional in-control ARL meets the target for about the guaranteed share of simulated references', () => {
    const m = 50;
    const lambda = 0.1;
    const targetArl = 900;
    const d = ewmaLimitForEstimated({ lambda, targetArl, m, guarantee: 0.9 });
    expect(d.L).toBeGreaterThan(d.knownL);
    expect(d.shortfallShare).toBeCloseTo(0.1, 2);
    // Independent check: draw references of m normal heats (not the design's parametric draws), estimate
    // the centre and the sample SD, and solve each conditional ARL with the Markov chain (Lucas &
    // Saccucci 1990): a chart on (x − μ̂)/σ̂ with limit L is a chart on N(−(μ̂ − μ)/σ, 1) data at L·σ̂/σ.
    const rng = createRng(99);
    const draws = 120;
    let met = 0;
    for (let r = 0; r < draws; r++) {
      const xs = Array.from({ length: m }, () => rng.normal());
      const mean = xs.reduce((s, x) => s + x, 0) / m;
      const sd = Math.sqrt(xs.reduce((s, x) => s + (x - mean) ** 2, 0) / (m - 1));
      if (ewmaArl({ lambda, L: d.L * sd, shift: mean, states: 101 }) >= targetArl) met++;
    }
    // 90 % guaranteed; binomial SD over 120 references is 2.7 %, so allow 4 SD.
    expect(met / draws).toBeGreaterThan(0.9 - 0.11);
    // With the known-parameter limit far fewer references meet the target (Jones, Champ & Rigdon 2001).
    let metKnown = 0;
    const rng2 = createRng(99);
    for (let r = 0; r < draws; r++) {
      const xs = Array.from({ length: m }, () => rng2.normal());
      const mean = xs.reduce((s, x) => s + x, 0) / m;
      const sd = Math.sqrt(xs.reduce((s, x) => s + (x - mean) ** 2, 0) / (m - 1));
      if (ewmaArl({ lambda, L: d.knownL * sd, shift: mean, states: 101 }) >= targetArl) metKnown++;
    }
    expect(metKnown / draws).toBeLessThan(0.7);
  });
  it('refuses a reference too small to design from', () => {
    expect(() => ewmaLimitForEstimated({ lambda: 0.1, targetArl: 900, m: 3 })).toThrow(/too small/);
  });
});
