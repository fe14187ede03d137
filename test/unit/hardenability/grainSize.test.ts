// Grain size as certificates state it (ASTM E112 numbers, ranges, bounds, "fine"); how each is used is
// our rule, stated in src/hardenability/grainSize.ts. "Fine" = ASTM 5 or finer is common practice.
import { describe, expect, it } from 'vitest';
import { parseGrainSize } from '../../../src/hardenability/grainSize.ts';

describe('parseGrainSize', () => {
  it('a number is itself', () => {
    expect(parseGrainSize(7)).toEqual({ value: 7, stated: null, note: null });
    expect(parseGrainSize(' 7 ')).toEqual({ value: 7, stated: null, note: null });
    expect(parseGrainSize('7,5').value).toBe(7.5);
  });

  it('a range is used at its midpoint and kept as written', () => {
    for (const text of ['5-8', '5 – 8', '5 to 8', 'ASTM 5-8']) {
      const g = parseGrainSize(text);
      expect(g.value).toBe(6.5);
      expect(g.stated).toBe(text);
      expect(g.note).toMatch(/midpoint 6\.5/);
    }
  });

  it('a bound or "fine" gives no single number', () => {
    for (const text of ['≥5', '>= 5', '5 or finer', 'min 5', 'fine', 'Fine grain', 'FG', '≤4', '4 or coarser']) {
      const g = parseGrainSize(text);
      expect(g.value).toBeNull();
      expect(g.stated).toBe(text);
      expect(g.note).toMatch(/not reported/);
    }
  });

  it('refuses what is not a grain size, with the reason', () => {
    expect(() => parseGrainSize('medium')).toThrow(/not an ASTM E112 number, a range/);
    expect(() => parseGrainSize('8-5')).toThrow(/lower number to the higher/);
    expect(() => parseGrainSize(22)).toThrow(/-1 to 15/);
  });
});
