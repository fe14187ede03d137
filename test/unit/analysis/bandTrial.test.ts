import { describe, expect, it } from 'vitest';
import { bandOutcome, jointExpectedShare, suggestBand } from '../../../src/analysis/bandTrial.ts';
import type { HeatCurve } from '../../../src/analysis/seriesData.ts';
import { normalCdf } from '../../../src/stats/distributions.ts';
import { createRng } from '../../../src/stats/random.ts';

const curve = (i: number, readings: Array<[number, number]>): HeatCurve => ({
  heatId: i + 1,
  heatNumber: `H${i + 1}`,
  mill: 'EAST',
  castDate: `2023-${String(1 + Math.floor(i / 28) % 12).padStart(2, '0')}-${String(1 + (i % 28)).padStart(2, '0')}`,
  grainSize: null,
  chemistry: {},
  testId: i + 1,
  source: 'mill_certificate',
  lotNumber: null,
  readings: new Map(readings),
});

const band = (points: Array<{ mm: number; minHrc?: number; maxHrc?: number }>) => ({ grade: 'TEST', version: 1, effectiveFrom: '2020-01-01', status: 'active' as const, kind: 'standard' as const, points });

describe('band trial: whole-curve expected share from the joint distribution', () => {
  it('five distances moving together: the joint share is about one distance’s tail, where the sum of tails is five times it', () => {
    const rng = createRng(3);
    // Every distance = common + small own noise: correlation ≈ 0.99 (chemistry moves the whole curve).
    const curves = Array.from({ length: 400 }, (_, i) => {
      const c = rng.normal();
      return curve(i, [1.5, 5, 9, 13, 20].map((mm, j) => [mm, 40 - j * 3 + 1.5 * c + 0.15 * rng.normal()] as [number, number]));
    });
    const b = band([1.5, 5, 9, 13, 20].map((mm, j) => ({ mm, minHrc: 40 - j * 3 - 2.5 })));
    const joint = jointExpectedShare(curves, b)!;
    const outcome = bandOutcome(curves, b);
    const sumOfTails = outcome.perDistance.reduce((a, d) => a + d.expectedPpm!, 0) / 1e6;
    // One distance's tail: Φ(−2.5/σ), σ = √(1.5² + 0.15²) ≈ 1.507 → ≈ 0.049 (standard normal table).
    const single = normalCdf(-2.5 / Math.sqrt(1.5 ** 2 + 0.15 ** 2));
    expect(joint.share).toBeGreaterThan(single * 0.7);
    expect(joint.share).toBeLessThan(single * 2);
    expect(sumOfTails).toBeGreaterThan(3 * joint.share);
    expect(Math.abs(joint.share - outcome.failingShare)).toBeLessThan(0.03);
    expect(joint.lower).toBeLessThan(joint.share);
    expect(joint.upper).toBeGreaterThan(joint.share);
  });
});

describe('band trial: suggested band from tolerance limits', () => {
  it('holds the share in sample and out of sample on a stable normal history; the method is stated', () => {
    const rng = createRng(9);
    const curves = Array.from({ length: 240 }, (_, i) => curve(i, [[1.5, 44 + 1.2 * rng.normal()], [9, 30 + 2 * rng.normal()]]));
    const s = suggestBand(curves, band([{ mm: 1.5, minHrc: 40, maxHrc: 48 }, { mm: 9, minHrc: 24 }]), 0.9, 0.95)!;
    expect(s.heldShare).toBeGreaterThanOrEqual(0.9);
    expect(s.outOfSample!.checkedOn).toBe(80);
    expect(s.outOfSample!.heldShare).toBeGreaterThanOrEqual(0.9);
    expect(s.simulatedShare!).toBeGreaterThanOrEqual(0.9);
    expect(s.method).toMatch(/ISO 16269-6/);
    // One-sided point stays one-sided.
    expect(s.points[1].maxHrc).toBeNull();
    // Too few complete curves: no suggestion.
    expect(suggestBand(curves.slice(0, 5), band([{ mm: 1.5, minHrc: 40 }]), 0.9)).toBeNull();
  });
});
