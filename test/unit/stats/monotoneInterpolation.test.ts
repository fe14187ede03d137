import { describe, expect, it } from 'vitest';
import fc from 'fast-check';
import { readFileSync } from 'node:fs';
import { InterpolationInputError, monotoneCubic } from '../../../src/stats/monotoneInterpolation.ts';

interface RefCase {
  name: string;
  x: number[];
  y: number[];
  slopes: number[];
  query: number[];
  values: number[];
}
// Reference: Fritsch & Carlson (1980) slopes written out independently in Python and evaluated with
// scipy 1.10.1 scipy.interpolate.CubicHermiteSpline; generator test/reference/monotone_cubic_reference.py.
const ref = JSON.parse(readFileSync(new URL('../../reference/monotone_cubic.json', import.meta.url), 'utf8')) as {
  versions: Record<string, string>;
  cases: RefCase[];
};

describe('monotoneCubic (Fritsch & Carlson 1980)', () => {
  it('fixture records the library versions used', () => {
    expect(ref.versions.scipy).toBe('1.10.1');
  });

  for (const c of ref.cases) {
    it(`matches the reference slopes and scipy Hermite evaluation: ${c.name}`, () => {
      // Reference: scipy CubicHermiteSpline with Fritsch-Carlson slopes (fixture).
      const f = monotoneCubic(c.x, c.y);
      f.slopes.forEach((s, k) => expect(s).toBeCloseTo(c.slopes[k], 10));
      c.query.forEach((q, k) => expect(f.at(q)).toBeCloseTo(c.values[k], 10));
    });
  }

  it('is monotone on the RPN 14 data where an ordinary cubic spline overshoots (Fritsch & Carlson 1980, data from memory)', () => {
    const c = ref.cases.find((k) => k.name === 'rpn14')!;
    const f = monotoneCubic(c.x, c.y);
    let prev = -Infinity;
    for (let t = c.x[0]; t <= c.x[c.x.length - 1]; t += 0.01) {
      const v = f.at(t)!;
      expect(v).toBeGreaterThanOrEqual(prev - 1e-12);
      expect(v).toBeLessThanOrEqual(1);
      prev = v;
    }
  });

  it('never extrapolates: null outside the knot range, values at the end knots', () => {
    const f = monotoneCubic([1.5, 3, 5], [50, 47, 40]);
    expect(f.at(1.4999)).toBeNull();
    expect(f.at(5.0001)).toBeNull();
    expect(f.at(Number.NaN)).toBeNull();
    expect(f.at(1.5)).toBe(50);
    expect(f.at(5)).toBe(40);
    expect(f.covers(3)).toBe(true);
    expect(f.covers(6)).toBe(false);
  });

  it('rejects bad knots', () => {
    expect(() => monotoneCubic([1], [1])).toThrow(InterpolationInputError);
    expect(() => monotoneCubic([1, 1], [1, 2])).toThrow(/strictly increasing/);
    expect(() => monotoneCubic([1, 2], [1])).toThrow(/2 x values but 1 y/);
    expect(() => monotoneCubic([1, 2], [1, Number.POSITIVE_INFINITY])).toThrow(/finite/);
  });

  const knotsArb = fc
    .integer({ min: 2, max: 15 })
    .chain((n) =>
      fc.tuple(
        fc.array(fc.double({ min: 0.05, max: 10, noNaN: true }), { minLength: n, maxLength: n }),
        fc.array(fc.double({ min: 0, max: 8, noNaN: true }), { minLength: n, maxLength: n }),
        fc.double({ min: -50, max: 70, noNaN: true }),
      ),
    )
    .map(([gaps, drops, start]) => {
      const x: number[] = [];
      const y: number[] = [];
      let xi = 0;
      let yi = start;
      gaps.forEach((g, i) => {
        xi += g;
        yi -= drops[i];
        x.push(xi);
        y.push(yi);
      });
      return { x, y };
    });

  it('property: non-increasing data give a non-increasing interpolant that passes through the knots', () => {
    fc.assert(
      fc.property(knotsArb, ({ x, y }) => {
        const f = monotoneCubic(x, y);
        if (!x.every((xi, i) => f.at(xi) === y[i])) return false;
        const span = x[x.length - 1] - x[0];
        let prev = Infinity;
        for (let k = 0; k <= 400; k++) {
          const v = f.at(x[0] + (span * k) / 400)!;
          if (v > prev + 1e-9 * (1 + Math.abs(prev))) return false;
          prev = v;
        }
        return true;
      }),
    );
  });

  it('property: reproduces linear data exactly (three-point slopes are exact for a line)', () => {
    fc.assert(
      fc.property(knotsArb, fc.double({ min: -5, max: 5, noNaN: true }), ({ x }, slope) => {
        const y = x.map((xi) => 3 + slope * xi);
        const f = monotoneCubic(x, y);
        const mid = (x[0] + x[x.length - 1]) / 2;
        return Math.abs((f.at(mid) as number) - (3 + slope * mid)) < 1e-8 * (1 + Math.abs(3 + slope * mid));
      }),
    );
  });
});
