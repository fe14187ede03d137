import { describe, expect, test } from 'vitest';
import { assessCurves, peerRepeatability, reportingStep } from '../../../src/analysis/millDataQuality.ts';
import type { HeatCurve } from '../../../src/db/series.ts';
import { createRng } from '../../../src/stats/random.ts';

const DISTANCES = [1.5, 3, 5, 7, 9, 11, 13, 15, 20, 25];

/** A smooth invented curve (not a published one): a logistic fall from `top` towards `floor`. */
const trueCurve = (top: number) => DISTANCES.map((d) => 24 + (top - 24) / (1 + Math.exp((d - 8) / 3)));

function mill(name: string, seed: number, noiseSd: number, step: number, heats = 60): HeatCurve[] {
  const rng = createRng(seed);
  return Array.from({ length: heats }, (_, i) => {
    const shape = trueCurve(44 + 2 * rng.normal());
    return {
      heatId: seed * 1000 + i,
      heatNumber: `${name}-${i}`,
      mill: name,
      castDate: '2025-01-01',
      grainSize: 7,
      chemistry: {},
      testId: seed * 1000 + i,
      source: 'mill_certificate' as const,
      lotNumber: null,
      readings: new Map(DISTANCES.map((d, k) => [d, Math.round((shape[k] + noiseSd * rng.normal()) / step) * step])),
    };
  });
}

describe('reporting step', () => {
  test('the coarsest grid all readings lie on', () => {
    expect(reportingStep([40, 38, 36])).toBe(2);
    expect(reportingStep([41, 38, 36])).toBe(1);
    expect(reportingStep([41.5, 38, 36])).toBe(0.5);
    expect(reportingStep([41.3])).toBe(0);
  });
});

describe('mill data quality', () => {
  // Simulated labs: honest ones read with 1 HRC scatter (an assumption of this test, stated here),
  // the suspicious one reports a noise-free curve rounded to even numbers.
  const honestA = mill('A', 1, 1.0, 1);
  const honestB = mill('B', 2, 1.0, 0.5);
  const edited = mill('C', 3, 0, 2);

  test('a mill reporting noise-free curves rounded to even numbers is flagged on both counts', () => {
    const r = assessCurves('C', 'G', edited, peerRepeatability([honestA, honestB]));
    expect(r.stepHrc).toBe(2);
    expect(r.repeatabilityFrom).toBe('other_mills');
    expect(r.evenReadings.verdict).toBe('fail');
    expect(r.smoothness.verdict).toBe('fail');
    expect(r.verdict).toBe('fail');
  });

  test('honest mills pass against each other', () => {
    for (const [name, own, peers] of [
      ['A', honestA, [honestB]],
      ['B', honestB, [honestA]],
    ] as const) {
      const r = assessCurves(name, 'G', own, peerRepeatability(peers));
      expect(r.verdict, name).toBe('pass');
      expect((r.smoothness.values as { ratio: number }).ratio).toBeGreaterThan(0.8);
    }
  });

  test('the peer yardstick recovers the simulated repeatability (1 HRC) within the local-fit misfit', () => {
    const s = peerRepeatability([honestA])!;
    expect(s).toBeGreaterThan(0.9);
    expect(s).toBeLessThan(1.3);
  });

  test('readings written as 20 HRC (the bottom of the scale) do not count as an even preference', () => {
    const floored = honestA.map((c) => ({ ...c, readings: new Map([...c.readings].map(([d, v]) => [d, Math.max(v, 20)] as [number, number])) }));
    const deep = floored.map((c) => ({ ...c, readings: new Map([...c.readings, [40, 20], [45, 20], [50, 20]] as Array<[number, number]>) }));
    expect(assessCurves('A', 'G', deep, null).evenReadings.verdict).toBe('pass');
  });

  test('without other mills the library default repeatability is used and said', () => {
    expect(assessCurves('A', 'G', honestA, null).repeatabilityFrom).toBe('default');
  });
});
