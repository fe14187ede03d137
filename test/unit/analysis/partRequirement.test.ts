// The pure part estimate (no database) and the CLI command that prints it.
import { describe, expect, it, vi } from 'vitest';
import { Command } from 'commander';
import { bandMinimumAt, estimatePart, wilsonInterval } from '../../../src/analysis/partRequirement.ts';
import { register } from '../../../src/cliCommands/partBand.ts';

describe('band minimum at a standard position', () => {
  it('is written at the first ISO 642 or ASTM A255 position at or beyond the distance (farther is softer: the safe side)', () => {
    // ISO 642 positions 1.5, 3, 5, 7, 9, 11, 13, 15, 20, 25 ... mm; A255 J1..J16, 18, 20 ... sixteenths.
    expect(bandMinimumAt(22.4, 40, 'mm')!.distanceMm).toBe(25);
    expect(bandMinimumAt(25, 40, 'mm')!.distanceMm).toBe(25);
    expect(bandMinimumAt(9.6, 30, 'sixteenths')!.label).toBe('J7'); // 9.6 mm = 6.05/16 in
    expect(bandMinimumAt(9.6, 30, 'sixteenths')!.statement).toBe('at least 30 HRC at J7 (11.1 mm)');
    expect(bandMinimumAt(81, 30, 'mm')).toBeNull();
  });
  it('Wilson score interval matches the published worked value', () => {
    // Newcombe (1998), Statistics in Medicine 17:857, Table I example 81/263: Wilson 0.2553 to 0.3662.
    const [lo, hi] = wilsonInterval(81, 263)!;
    expect(lo).toBeCloseTo(0.2553, 4);
    expect(hi).toBeCloseTo(0.3662, 4);
  });
});

describe('estimatePart', () => {
  it('45 mm bar, oil, centre, 40 HRC: a distance inside the H range and a band minimum beyond it', () => {
    const r = estimatePart({ diameterMm: 45, quench: { medium: 'oil' }, location: 'centre', requiredHrc: 40 });
    expect(r.severity.low).toBe(0.25);
    expect(r.severity.high).toBe(0.3);
    expect(r.fastest.distanceMm!).toBeLessThan(r.middle.distanceMm!);
    expect(r.middle.distanceMm!).toBeLessThan(r.slowest.distanceMm!);
    expect(r.bandMinimum!.distanceMm).toBeGreaterThanOrEqual(r.slowest.distanceMm!);
    expect(r.bandMinimum!.statement).toMatch(/^at least 40 HRC at \d+ mm$/);
    expect(r.profile.map((p) => p.fraction)).toEqual([0, 0.1, 0.2, 0.3, 0.4, 0.5, 0.6, 0.7, 0.8, 0.9, 1]);
    expect(r.limits.join(' ')).toMatch(/Long round bar only/);
  });
  it('the three criteria: equal rate at 500 °C sits nearer the quenched end than equal rate at 700 °C (45 mm bar, oil, centre)', () => {
    const at = (criterion: 'rate700' | 'rate500' | 't85') => estimatePart({ diameterMm: 45, quench: { medium: 'oil' }, location: 'centre', requiredHrc: 40, criterion }).middle.distanceMm!;
    expect(at('rate500')).toBeLessThan(at('rate700'));
    expect(at('t85')).toBeGreaterThan(0);
  });
  it('a location outside the radius or a hardness out of range is refused', () => {
    expect(() => estimatePart({ diameterMm: 45, quench: { medium: 'oil' }, location: 1.2, requiredHrc: 40 })).toThrow(/fraction of the radius/);
    expect(() => estimatePart({ diameterMm: 45, quench: { medium: 'oil' }, location: 'centre', requiredHrc: 80 })).toThrow(/between 10 and 70/);
    expect(() => estimatePart({ diameterMm: 45, quench: { medium: 'brine', agitation: 'good' }, location: 'centre', requiredHrc: 40 })).toThrow(/no typical H for brine/);
  });
});

describe('endquench part-band', () => {
  it('prints the distance, the band minimum and the limits', async () => {
    const program = new Command().exitOverride();
    register(program);
    const lines: string[] = [];
    const spy = vi.spyOn(console, 'log').mockImplementation((s: string) => void lines.push(s));
    try {
      await program.parseAsync(['node', 'endquench', 'part-band', '--diameter', '45', '--medium', 'oil', '--location', 'centre', '--hrc', '40']);
    } finally {
      spy.mockRestore();
    }
    const out = lines.join('\n');
    expect(out).toMatch(/equivalent end-quench distance: \d+\.\d mm/);
    expect(out).toMatch(/band minimum implied: at least 40 HRC at \d+ mm/);
    expect(out).toMatch(/to be confirmed by testing parts/);
  });
});
