// Whole-curve figures: distance at a hardness, distance of 50 % martensite, DI from the curve.
import { describe, expect, it } from 'vitest';
import { curveFigures, distanceAtHardness, IDEAL_QUENCH_CENTRE, idealQuenchCentreDistance } from '../../../src/hardenability/curveFigures.ts';
import { a255IdealDiameter } from '../../../src/hardenability/astmA255.ts';
import { halfMartensiteHardness } from '../../../src/hardenability/martensite.ts';

const curve = (mm: number[], hrc: number[]) => mm.map((d, i) => ({ mm: d, hrc: hrc[i] }));

describe('distanceAtHardness', () => {
  it('on a straight curve the monotone cubic is the line: 1 HRC per mm from 48.5 HRC at 1.5 mm crosses 40 at 10 mm (worked by hand)', () => {
    const c = distanceAtHardness(curve([1.5, 5, 15, 25], [48.5, 45, 35, 25]), 40);
    expect(c.status).toBe('crossed');
    if (c.status === 'crossed') expect(c.mm).toBeCloseTo(10, 6);
  });

  it('a reading exactly at the hardness is the crossing; off-range curves say which side', () => {
    expect(distanceAtHardness(curve([1.5, 5, 9], [45, 40, 33]), 40)).toEqual({ status: 'crossed', mm: 5 });
    expect(distanceAtHardness(curve([1.5, 5], [38, 35]), 40)).toEqual({ status: 'below_at_first', firstMm: 1.5 });
    expect(distanceAtHardness(curve([1.5, 25], [58, 52]), 40)).toEqual({ status: 'above_to_last', lastMm: 25 });
  });

  it('leaves readings off the scale out', () => {
    const c = distanceAtHardness([{ mm: 1.5, hrc: 45 }, { mm: 9, hrc: 30 }, { mm: 25, hrc: 20, censored: 'below' }], 25);
    expect(c).toEqual({ status: 'above_to_last', lastMm: 9 });
  });
});

describe('DI from the measured curve', () => {
  it('the written table matches the heat-conduction solver it came from (within 0.05 mm)', () => {
    for (const row of [IDEAL_QUENCH_CENTRE[0], IDEAL_QUENCH_CENTRE[6], IDEAL_QUENCH_CENTRE[10]]) {
      expect(idealQuenchCentreDistance(row.diameterMm)).toBeCloseTo(row.jMm, 1);
    }
  }, 60_000);

  it('EN 10084 20MnCr5+H band centre at mid carbon: DI within 20 % of the ASTM A255 DI of mid-range chemistry', () => {
    // Band (our reference notes, B5): mid-points of min/max at 1.5..25 mm.
    const mm = [1.5, 3, 5, 7, 9, 11, 13, 15, 20, 25];
    const mid = [45, 44, 42, 39.5, 36.5, 35, 33.5, 32, 30, 28];
    const f = curveFigures(curve(mm, mid), 0.195);
    expect(f.halfMartensite!.hrc).toBeCloseTo(halfMartensiteHardness(0.195), 12);
    const a255 = a255IdealDiameter({ C: 0.195, Mn: 1.25, Si: 0.25, Cr: 1.15 }).mm;
    expect(f.idealDiameter.mm).not.toBeNull();
    expect(Math.abs(f.idealDiameter.mm! / a255 - 1)).toBeLessThan(0.2);
    // Both are approximations (the 50 % martensite relation is from memory, ±2 HRC): this checks the
    // chain, not either figure to its last digit.
  });

  it('a deeper curve gives a larger DI; a curve that never falls to 50 % martensite says DI is beyond it', () => {
    const mm = [1.5, 5, 9, 15, 25];
    const shallow = curveFigures(curve(mm, [45, 40, 32, 27, 24]), 0.2).idealDiameter.mm!;
    const deeper = curveFigures(curve(mm, [45, 43, 38, 33, 29]), 0.2).idealDiameter.mm!;
    expect(deeper).toBeGreaterThan(shallow);
    const through = curveFigures(curve(mm, [56, 55, 54, 52, 50]), 0.4);
    expect(through.idealDiameter.mm).toBeNull();
    expect(through.idealDiameter.reason).toMatch(/stays above/);
  });
});
