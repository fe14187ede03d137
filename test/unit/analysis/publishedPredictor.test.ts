// The published predictor (ASTM A255 quenched end, Just 1969 beyond 4/16 in, capped at IH(C)) on
// mid-range chemistry of published H-bands: every value it gives lies inside the band. Bands and their
// chemistry ranges: SAE J1268 8620H and EN 10084 20MnCr5+H as tabled in our reference notes (high
// confidence); SAE J1268 4140H, 4340H, 5120H, EN 10084 16MnCr5+H and EN 10083-3 42CrMo4+H from memory
// (limits may be off by 1-2 HRC at a point), said beside each.
import { describe, expect, it } from 'vitest';
import { publishedCurve, QUENCHED_END_METHOD } from '../../../src/analysis/publishedPredictor.ts';
import { initialHardness } from '../../../src/hardenability/martensite.ts';
import type { Chemistry } from '../../../src/hardenability/types.ts';

const J = (sixteenths: number) => sixteenths * 1.5875;

interface PublishedBand {
  grade: string;
  source: string;
  chemistry: Chemistry;
  points: Array<[mm: number, min: number | null, max: number]>;
}

const BANDS: PublishedBand[] = [
  {
    grade: '8620H',
    source: 'SAE J1268 8620H, metric positions (our reference notes, B5)',
    chemistry: { C: 0.2, Mn: 0.775, Si: 0.25, Ni: 0.55, Cr: 0.5, Mo: 0.2 },
    points: [[1.5, 41, 48], [3, 37, 47], [5, 31, 43], [7, 25, 39], [9, 21, 35], [11, null, 32], [13, null, 30], [15, null, 29], [20, null, 26], [25, null, 24], [30, null, 23], [35, null, 23], [40, null, 23]],
  },
  {
    grade: '20MnCr5+H',
    source: 'EN 10084 20MnCr5+H (our reference notes, B5)',
    chemistry: { C: 0.195, Mn: 1.25, Si: 0.25, Cr: 1.15 },
    points: [[1.5, 41, 49], [3, 39, 49], [5, 36, 48], [7, 33, 46], [9, 30, 43], [11, 28, 42], [13, 26, 41], [15, 25, 39], [20, 23, 37], [25, 21, 35], [30, null, 34], [35, null, 33], [40, null, 32]],
  },
  {
    grade: '4140H',
    source: 'SAE J1268 4140H, from memory',
    chemistry: { C: 0.405, Mn: 0.875, Si: 0.25, Cr: 0.975, Mo: 0.2 },
    points: [[J(1), 53, 60], [J(4), 51, 59], [J(6), 50, 58], [J(8), 47, 57], [J(10), 42, 56], [J(12), 39, 55], [J(16), 35, 53], [J(20), 33, 51], [J(24), 32, 48], [J(28), 31, 46], [J(32), 30, 44]],
  },
  {
    grade: '5120H',
    source: 'SAE J1268 5120H, from memory',
    chemistry: { C: 0.2, Mn: 0.8, Si: 0.25, Cr: 0.8 },
    points: [[J(1), 40, 48], [J(4), 23, 36], [J(5), 20, 33], [J(6), null, 30], [J(8), null, 27], [J(10), null, 24]],
  },
  {
    grade: '16MnCr5+H',
    source: 'EN 10084 16MnCr5+H, from memory',
    chemistry: { C: 0.165, Mn: 1.15, Si: 0.25, Cr: 0.95 },
    points: [[1.5, 39, 47], [7, 28, 41], [9, 24, 39], [11, 21, 37], [13, null, 35], [15, null, 34], [20, null, 32], [25, null, 29]],
  },
  {
    grade: '42CrMo4+H',
    source: 'EN 10083-3 42CrMo4+H, from memory',
    chemistry: { C: 0.415, Mn: 0.75, Si: 0.25, Cr: 1.05, Mo: 0.225 },
    points: [[1.5, 53, 61], [7, 49, 60], [9, 43, 60], [11, 40, 59], [13, 37, 59], [15, 34, 58], [20, 32, 56], [25, 31, 53], [30, 30, 51], [35, 30, 48], [40, 29, 47]],
  },
];

const outside = (hrc: number, min: number | null, max: number) => (min !== null && hrc < min ? hrc - min : hrc > max ? hrc - max : 0);

describe('published predictor on mid-range chemistry of published bands', () => {
  for (const band of BANDS) {
    it(`${band.grade}: every published value inside the band (${band.source})`, () => {
      const curve = publishedCurve(band.chemistry, 7, band.points.map((p) => p[0]));
      const misses = band.points
        .map(([mm, min, max]) => {
          const v = [...curve.points.values()].find((p) => Math.abs(p.mm - mm) < 1e-6);
          return v ? { mm, hrc: v.hrc, miss: outside(v.hrc, min, max) } : null;
        })
        .filter((m) => m !== null);
      // ISO positions 3 and 5 mm have no published value (between the quenched end and 4/16 in).
      expect(misses.length).toBe(band.points.filter(([mm]) => mm <= 1.6 || mm >= 6.35).length);
      expect(misses.filter((m) => m.miss !== 0)).toEqual([]);
    });
  }

  it('4340H (SAE J1268, from memory): inside to J12; Just (1969) reads up to about 2.5 HRC under the minimum from J16 out', () => {
    // Honest finding, kept visible: the nickel-rich deep-hardening grade sits at the edge of Just's data.
    const chem: Chemistry = { C: 0.405, Mn: 0.725, Si: 0.25, Ni: 1.775, Cr: 0.8, Mo: 0.25 };
    const points: Array<[number, number, number]> = [[J(1), 53, 60], [J(4), 53, 60], [J(8), 53, 60], [J(12), 52, 60], [J(16), 51, 60], [J(20), 49, 60], [J(24), 48, 59], [J(32), 46, 58]];
    const curve = publishedCurve(chem, 7, points.map((p) => p[0]));
    const miss = points.map(([mm, min, max]) => outside([...curve.points.values()].find((p) => Math.abs(p.mm - mm) < 1e-6)!.hrc, min, max));
    expect(miss.slice(0, 4)).toEqual([0, 0, 0, 0]);
    expect(Math.min(...miss)).toBeLessThan(0);
    expect(Math.min(...miss)).toBeGreaterThan(-2.5);
  });
});

describe('what the published predictor answers, and where it does not', () => {
  const mid4140: Chemistry = { C: 0.405, Mn: 0.875, Si: 0.25, Cr: 0.975, Mo: 0.2 };
  const at = (c: ReturnType<typeof publishedCurve>, mm: number) => [...c.points.values()].find((p) => Math.abs(p.mm - mm) < 1e-6)?.hrc;

  it('the quenched end (J1 and ISO 1.5 mm alike) is IH(C); nothing between it and 4/16 in', () => {
    const c = publishedCurve(mid4140, 7, [1.5, J(1), 3, 5, J(4)]);
    // ASTM A255 IH polynomial at 0.405 % C.
    expect(at(c, 1.5)).toBeCloseTo(initialHardness(0.405), 10);
    expect(c.points.get(1.5)?.method).toBe(QUENCHED_END_METHOD);
    expect(at(c, J(1))).toBeCloseTo(initialHardness(0.405), 10);
    expect(c.missing.map((m) => m.mm)).toEqual([3, 5]);
    expect(c.missing[0].reason).toMatch(/6\.35 mm/);
  });

  it('is capped at the fully martensitic hardness (0.6 % C high alloy), and gives nothing where no cap exists (52100-type 1.0 % C)', () => {
    const c = publishedCurve({ C: 0.6, Mn: 1.0, Si: 0.3, Cr: 1.5, Mo: 0.5, Ni: 1.0 }, 7, [J(4), J(8), J(16)]);
    for (const p of c.points.values()) expect(p.hrc).toBeLessThanOrEqual(initialHardness(0.6) + 1 + 1e-9);
    expect([...c.points.values()].some((p) => p.cappedAtMartensite)).toBe(true);
    expect(c.warnings.join(' ')).toMatch(/capped/);
    const bearing = publishedCurve({ C: 1.0, Mn: 0.35, Si: 0.25, Cr: 1.45 }, 7, [1.5, J(8)]);
    expect(bearing.points.size).toBe(0);
    expect(bearing.missing.map((m) => m.reason).join(' ')).toMatch(/carbon|C/);
  });

  it('moves with Cr and Mo, and tells 4140H from 4340H', () => {
    const base = publishedCurve(mid4140, 7, [J(12)]);
    const moreCr = publishedCurve({ ...mid4140, Cr: 1.15 }, 7, [J(12)]);
    const moreMo = publishedCurve({ ...mid4140, Mo: 0.25 }, 7, [J(12)]);
    // Just (1969): 20 HRC per % Cr, 34 per % Mo.
    expect(at(moreCr, J(12))! - at(base, J(12))!).toBeCloseTo(20 * 0.175, 6);
    expect(at(moreMo, J(12))! - at(base, J(12))!).toBeCloseTo(34 * 0.05, 6);
    const h4340 = publishedCurve({ C: 0.405, Mn: 0.725, Si: 0.25, Ni: 1.775, Cr: 0.8, Mo: 0.25 }, 7, [J(12)]);
    expect(Math.abs(at(h4340, J(12))! - at(base, J(12))!)).toBeGreaterThan(1);
  });

  it('refuses the curve of boron-treated steel beyond the quenched end, with the reason', () => {
    const c = publishedCurve({ C: 0.3, Mn: 1.2, Si: 0.25, Cr: 0.3, B: 0.002 }, 7, [1.5, 9, 15]);
    expect([...c.points.keys()]).toEqual([1.5]);
    expect(c.missing.map((m) => m.mm)).toEqual([9, 15]);
    expect(c.missing[0].reason).toMatch(/boron/);
  });

  it("keeps Just's composition-range flags", () => {
    const c = publishedCurve({ C: 0.2, Mn: 0.8, Si: 0.25, Cr: 1.8 }, 7, [9]);
    expect(c.warnings.join(' ')).toMatch(/Just \(1969\): Cr 1\.8 % outside/);
  });
});
