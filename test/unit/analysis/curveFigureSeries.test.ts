// Limits a band implies for "J at H HRC": where its minimum and maximum curves fall to H.
import { describe, expect, it } from 'vitest';
import { bandLimitsAtHardness } from '../../../src/analysis/curveFigureSeries.ts';
import type { Band } from '../../../src/hardenability/bands.ts';

const base = { grade: 'G', version: 1, effectiveFrom: '2020-01-01', status: 'active' as const, kind: 'standard' as const };

describe('bandLimitsAtHardness', () => {
  it('a reading at a limit point is the crossing; a band that never reaches the hardness gives no limit on that side', () => {
    // SAE J1268 8620H at ISO positions (test/fixtures/analysisHistory.ts): the minimum falls to 31 at
    // 5 mm, the maximum to 35 at 9 mm; the maximum never falls to 20 within 15 mm.
    const band: Band = {
      ...base,
      points: [
        { mm: 1.5, minHrc: 41, maxHrc: 48 }, { mm: 3, minHrc: 37, maxHrc: 47 }, { mm: 5, minHrc: 31, maxHrc: 43 }, { mm: 7, minHrc: 25, maxHrc: 39 },
        { mm: 9, minHrc: 21, maxHrc: 35 }, { mm: 11, maxHrc: 32 }, { mm: 13, maxHrc: 30 }, { mm: 15, maxHrc: 29 },
      ],
    };
    expect(bandLimitsAtHardness(band, 31).lsl).toBe(5);
    expect(bandLimitsAtHardness(band, 35).usl).toBe(9);
    const at35 = bandLimitsAtHardness(band, 35);
    expect(at35.lsl!).toBeGreaterThan(3);
    expect(at35.lsl!).toBeLessThan(5);
    expect(bandLimitsAtHardness(band, 20)).toEqual({ lsl: null, usl: null });
  });

  it('on straight limit curves the crossing is the linear one (worked by hand)', () => {
    // min 40 - (mm - 1) and max 50 - (mm - 1): 35 HRC at 6 mm and at 16 mm.
    const mm = [1, 6, 11, 16, 21];
    const band: Band = { ...base, points: mm.map((d) => ({ mm: d, minHrc: 41 - d, maxHrc: 51 - d })) };
    const l = bandLimitsAtHardness(band, 35);
    expect(l.lsl).toBeCloseTo(6, 9);
    expect(l.usl).toBeCloseTo(16, 9);
  });
});
