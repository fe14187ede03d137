import { describe, expect, it } from 'vitest';
import { compileDistancePattern, distanceHeader, readDistanceHeader, readLayoutDistanceHeader } from '../../../src/ingest/distanceHeaders.ts';

describe('our own J-distance headers', () => {
  it('reads millimetres and sixteenths in their written forms', () => {
    // Position values are the numbers written in the header (ISO 642 mm, ASTM A255 sixteenths).
    expect(readDistanceHeader('J 1.5 mm')).toEqual({ kind: 'distance', position: { system: 'mm', at: 1.5 } });
    expect(readDistanceHeader('j1,5MM')).toEqual({ kind: 'distance', position: { system: 'mm', at: 1.5 } });
    expect(readDistanceHeader('J 4/16')).toEqual({ kind: 'distance', position: { system: 'sixteenths', at: 4 } });
    expect(readDistanceHeader('J4/16 in')).toEqual({ kind: 'distance', position: { system: 'sixteenths', at: 4 } });
    expect(readDistanceHeader('J 12 / 16"')).toEqual({ kind: 'distance', position: { system: 'sixteenths', at: 12 } });
  });

  it('refuses a J header without a unit, and zero', () => {
    const r = readDistanceHeader('J4');
    expect(r.kind).toBe('refused');
    expect(r.kind === 'refused' && r.reason).toContain('"J 4 mm"');
    expect(readDistanceHeader('J 0 mm').kind).toBe('refused');
  });

  it('leaves other headers alone and writes canonical headers back', () => {
    expect(readDistanceHeader('Jominy')).toEqual({ kind: 'not-distance' });
    expect(readDistanceHeader('grade')).toEqual({ kind: 'not-distance' });
    for (const p of [{ system: 'mm', at: 1.5 }, { system: 'sixteenths', at: 4 }] as const) {
      expect(readDistanceHeader(distanceHeader(p))).toEqual({ kind: 'distance', position: p });
    }
  });
});

describe('mill layout distance headers', () => {
  it('reads an explicit map and a pattern', () => {
    const pattern = '^HRC @ (\\d+)$';
    const specs = [
      { unit: 'sixteenths' as const, columns: { 'Jominy 1': 1 } },
      { unit: 'sixteenths' as const, pattern },
    ];
    const compiled = new Map([[pattern, compileDistancePattern(pattern)]]);
    expect(readLayoutDistanceHeader(' jominy  1 ', specs, compiled)).toEqual({ kind: 'distance', position: { system: 'sixteenths', at: 1 } });
    expect(readLayoutDistanceHeader('HRC @ 12', specs, compiled)).toEqual({ kind: 'distance', position: { system: 'sixteenths', at: 12 } });
    expect(readLayoutDistanceHeader('Remarks', specs, compiled)).toEqual({ kind: 'not-distance' });
  });

  it('needs exactly one capture group', () => {
    expect(() => compileDistancePattern('^J(\\d+)(mm)?$')).toThrow(/2 capture groups/);
    expect(() => compileDistancePattern('^J\\d+$')).toThrow(/0 capture groups/);
  });
});
