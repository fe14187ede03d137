import { describe, expect, it } from 'vitest';
import { applyIndividualsLimits, estimateIndividualsLimits, PhaseOneError } from '../../../src/stats/phaseOne.ts';

// A deterministic baseline of our own: bounded wiggle around 40 with two gross errors.
const base = Array.from({ length: 50 }, (_, i) => 40 + Math.sin(i * 1.7) + 0.5 * Math.cos(i * 0.9));
const dirty = base.slice();
dirty[15] += 12;
dirty[30] -= 10;

describe('phase I with iterative exclusion (Montgomery §5.4, §6.4: revise trial limits)', () => {
  const frozen = estimateIndividualsLimits(dirty);
  it('excludes the gross errors and converges', () => {
    expect(frozen.excluded).toEqual([15, 30]);
    expect(frozen.converged).toBe(true);
    expect(frozen.iterations).toBe(2);
    expect(frozen.usedN).toBe(48);
  });
  it('final estimate: mean of the kept points; MR-bar over consecutive kept pairs / d2(2) (d2(2) = 2/√π)', () => {
    const kept = dirty.filter((_, i) => i !== 15 && i !== 30);
    const center = kept.reduce((a, b) => a + b, 0) / kept.length;
    let s = 0;
    let c = 0;
    for (let i = 1; i < dirty.length; i++) {
      if ([15, 30].includes(i) || [15, 30].includes(i - 1)) continue;
      s += Math.abs(dirty[i] - dirty[i - 1]);
      c++;
    }
    expect(c).toBe(45);
    expect(frozen.center).toBeCloseTo(center, 12);
    expect(frozen.sigma).toBeCloseTo(s / c / (2 / Math.sqrt(Math.PI)), 12);
    expect(frozen.ucl).toBeCloseTo(frozen.center + 3 * frozen.sigma, 12);
  });
  it('is a plain serialisable object', () => {
    expect(JSON.parse(JSON.stringify(frozen))).toEqual(frozen);
  });
  it('stops at maxIterations and reports what is still flagged', () => {
    const capped = estimateIndividualsLimits(dirty, { maxIterations: 1 });
    expect(capped.converged).toBe(false);
    expect(capped.excluded).toEqual([]);
    expect(capped.stillFlagged.length).toBeGreaterThan(0);
  });
  it('fails clearly when too little baseline is left', () => {
    expect(() => estimateIndividualsLimits(base.slice(0, 5))).toThrow(PhaseOneError);
    expect(() => estimateIndividualsLimits(Array(20).fill(7))).toThrow(/moving ranges are all zero/);
  });
});

describe('phase II: frozen limits applied to new points', () => {
  const frozen = estimateIndividualsLimits(dirty);
  it('flags new points beyond the frozen limits and runs the Nelson rules at the frozen centre/sigma', () => {
    // A jump of 3.9σ exceeds the MR UCL D4(2)·d2(2)·σ = 3.686σ (ASTM E2587 constants).
    const fresh = [frozen.center, frozen.center + 3.9 * frozen.sigma, frozen.center, ...Array(9).fill(frozen.center + 0.5 * frozen.sigma)];
    const r = applyIndividualsLimits(frozen, fresh, { previous: dirty[49] });
    expect(r.outOfControl).toEqual([1]);
    expect(r.mrOutOfControl).toEqual([1, 2]);
    const rule2 = r.nelson.hits.find((h) => h.rule === 2)!;
    expect(rule2.indices).toEqual([11]);
  });
  it('a frozen object round-tripped through JSON gives the same answer', () => {
    const again = JSON.parse(JSON.stringify(frozen));
    const pts = [39, 41, 45, 36];
    expect(applyIndividualsLimits(again, pts)).toEqual(applyIndividualsLimits(frozen, pts));
  });
});
