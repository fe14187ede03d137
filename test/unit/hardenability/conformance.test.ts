import { describe, expect, it } from 'vitest';
import { heatConformance, roundE29, testConformance } from '../../../src/hardenability/conformance.ts';
import type { Band } from '../../../src/hardenability/bands.ts';
import type { EndQuenchTest, TestSource } from '../../../src/hardenability/types.ts';
import { sixteenthsToMm } from '../../../src/hardenability/distances.ts';

// Source: EN 10084, 20MnCr5+H hardenability band (ISO 642 positions, mm).
const band: Band = {
  grade: '20MnCr5+H',
  version: 1,
  effectiveFrom: '2020-01-01',
  status: 'active',
  kind: 'standard',
  points: [
    { mm: 1.5, minHrc: 41, maxHrc: 49 },
    { mm: 3, minHrc: 39, maxHrc: 49 },
    { mm: 5, minHrc: 36, maxHrc: 48 },
    { mm: 7, minHrc: 33, maxHrc: 46 },
    { mm: 9, minHrc: 30, maxHrc: 43 },
    { mm: 11, minHrc: 28, maxHrc: 42 },
    { mm: 13, minHrc: 26, maxHrc: 41 },
    { mm: 15, minHrc: 25, maxHrc: 39 },
    { mm: 20, minHrc: 23, maxHrc: 37 },
    { mm: 25, minHrc: 21, maxHrc: 35 },
    { mm: 30, maxHrc: 34 },
    { mm: 35, maxHrc: 33 },
    { mm: 40, maxHrc: 32 },
  ],
};
const ISO = [1.5, 3, 5, 7, 9, 11, 13, 15, 20, 25, 30, 35, 40];
const good = [46, 45, 43, 40, 37, 35, 33, 31, 29, 27, 26, 25, 24];

const test = (id: string, source: TestSource, testDate: string, hrc: number[], mm = ISO): EndQuenchTest => ({
  id,
  source,
  testDate,
  readings: mm.map((d, i) => ({ mm: d, hrc: hrc[i] })),
});

describe('testConformance', () => {
  it('passes a curve inside the band with the margin to the nearer limit at every point', () => {
    const r = testConformance(test('t1', 'mill_certificate', '2024-03-01', good), band);
    expect(r.verdict).toBe('pass');
    // At 1.5 mm: 46 is 5 above min 41 and 3 below max 49 -> margin 3 to the max.
    expect(r.points[0]).toMatchObject({ hrc: 46, basis: 'measured', margin: 3, governingLimit: 'max' });
    // At 40 mm (max only): 32 - 24 = 8.
    expect(r.points[12]).toMatchObject({ margin: 8, governingLimit: 'max' });
    expect(r.minMargin).toBe(Math.min(...r.points.map((p) => p.margin as number)));
  });

  it('fails a point outside with a negative margin equal to the miss', () => {
    const low = [...good];
    low[4] = 28; // 9 mm: min 30
    const r = testConformance(test('t2', 'mill_certificate', '2024-03-01', low), band);
    expect(r.verdict).toBe('fail');
    expect(r.points[4]).toMatchObject({ verdict: 'fail', margin: -2, governingLimit: 'min' });
    expect(r.counts.fail).toBe(1);
  });

  it('a reading exactly on a limit conforms (margin 0)', () => {
    const edge = [...good];
    edge[0] = 49;
    const r = testConformance(test('t3', 'mill_certificate', '2024-03-01', edge), band);
    expect(r.points[0]).toMatchObject({ verdict: 'pass', margin: 0 });
  });

  it('interpolates a J-distance test at ISO band points, judges J1 at 1.5 mm, and says why uncovered points are not tested', () => {
    const js = [1, 2, 3, 4, 5, 6, 7, 8, 10, 12, 14, 16];
    const hrc = [46, 45, 43, 40, 37, 35, 33, 31, 29, 27, 26, 25];
    const r = testConformance(test('t4', 'receiving_inspection', '2024-03-02', hrc, js.map(sixteenthsToMm)), band);
    // J1 = 1.5875 mm and ISO 1.5 mm are one quenched-end position (ISO 642 / ASTM A255 placing tolerance).
    expect(r.points[0]).toMatchObject({ mm: 1.5, hrc: 46, basis: 'measured', verdict: 'pass' });
    expect(r.points[0].position).toMatch(/J1 \(1\.5875 mm\) judged at 1\.5 mm/);
    // Measured range J1 .. J16 = 25.4 mm: 30..40 mm are beyond it.
    expect(r.points.slice(10).every((p) => p.verdict === 'not_tested' && /beyond the test's last reading \(25\.4 mm\)/.test(p.reason!))).toBe(true);
    expect(r.points.slice(1, 10).every((p) => p.basis === 'interpolated')).toBe(true);
    expect(r.verdict).toBe('incomplete');
    expect(r.counts).toMatchObject({ notTested: 3, interpolated: 9 });
  });

  it('an ISO test meets a band written in sixteenths at J1 the same way', () => {
    const jBand: Band = { ...band, points: [{ mm: sixteenthsToMm(1), label: 'J1', minHrc: 41, maxHrc: 49 }, { mm: 9, minHrc: 30, maxHrc: 43 }] };
    const r = testConformance(test('t5', 'mill_certificate', '2024-03-01', good), jBand);
    expect(r.points[0]).toMatchObject({ hrc: 46, basis: 'measured', verdict: 'pass' });
    expect(r.counts.notTested).toBe(0);
  });
});

describe('rounding by ASTM E29', () => {
  // ASTM E29 §6.4 rounding method (to the nearest; a 5 followed only by zeros goes to the even digit),
  // clause recalled from memory; the examples are worked by hand.
  it('rounds to the places of the limit, halves to even', () => {
    expect(roundE29(35.4, 0)).toBe(35);
    expect(roundE29(35.5, 0)).toBe(36);
    expect(roundE29(34.5, 0)).toBe(34);
    expect(roundE29(34.51, 0)).toBe(35);
    expect(roundE29(34.45, 1)).toBe(34.4);
    expect(roundE29(34.55, 1)).toBe(34.6);
  });

  it('by default a reading of 35.4 meets a maximum of 35 (and says what was reported), 35.5 does not', () => {
    const at = (v: number, rounding?: Band['rounding']) => {
      const readings = [...good];
      readings[9] = v; // 25 mm: max 35
      return testConformance(test('r', 'mill_certificate', '2024-03-01', readings), { ...band, rounding }).points[9];
    };
    expect(at(35.4)).toMatchObject({ hrc: 35, reported: 35.4, verdict: 'pass', margin: 0 });
    expect(at(35.5)).toMatchObject({ hrc: 36, verdict: 'fail', margin: -1 });
    expect(at(35.4, 'as_reported')).toMatchObject({ hrc: 35.4, verdict: 'fail' });
    expect(at(35.4, 'as_reported').reported).toBeUndefined();
    expect(testConformance(test('r', 'mill_certificate', '2024-03-01', good), band).rounding).toBe('astm_e29');
  });
});

describe('heatConformance', () => {
  const millPass = test('mill', 'mill_certificate', '2024-03-01', good);
  const bad = [...good];
  bad[2] = 49; // 5 mm: max 48
  const receivingFail = test('recv', 'receiving_inspection', '2024-04-10', bad);
  const labPass = test('lab', 'outside_lab', '2024-05-01', good);

  it('default: receiving inspection overrides the mill certificate, and the disagreement is visible', () => {
    const h = heatConformance([millPass, receivingFail], band);
    expect(h.verdict).toBe('fail');
    expect(h.deciding.map((d) => d.testId)).toEqual(['recv']);
    expect(h.setAside.map((d) => d.testId)).toEqual(['mill']);
    expect(h.disagreement).toBe(true);
  });

  it('all tests must pass', () => {
    const h = heatConformance([millPass, labPass], band, { kind: 'all_must_pass' });
    expect(h.verdict).toBe('pass');
    expect(heatConformance([millPass, receivingFail, labPass], band, { kind: 'all_must_pass' }).verdict).toBe('fail');
  });

  it('latest test wins', () => {
    const h = heatConformance([millPass, receivingFail, labPass], band, { kind: 'latest_wins' });
    expect(h.verdict).toBe('pass');
    expect(h.deciding.map((d) => d.testId)).toEqual(['lab']);
    expect(h.disagreement).toBe(true);
  });

  it('a custom source order can put the outside lab first', () => {
    const h = heatConformance([receivingFail, labPass], band, {
      kind: 'source_precedence',
      order: ['outside_lab', 'receiving_inspection', 'mill_certificate'],
    });
    expect(h.verdict).toBe('pass');
  });

  it('no tests -> no verdict', () => {
    expect(heatConformance([], band).verdict).toBe('no_tests');
  });
});

describe('readings off the scale', () => {
  // Our rule, stated in conformance.ts: "<v" fails a minimum of v or more and meets any maximum of v or
  // more; ">v" fails a maximum of v or less; a limit beyond the bound cannot be decided by the reading.
  const at25 = (reading: { hrc: number; censored: 'below' | 'above' }, point: { minHrc?: number; maxHrc?: number }) =>
    testConformance({ id: 'c', source: 'mill_certificate', testDate: '2024-03-01', readings: [{ mm: 1.5, hrc: 45 }, { mm: 25, ...reading }] }, { ...band, points: [{ mm: 25, ...point }] }).points[0];

  it('"<20" fails a minimum of 20 or 21, meets a maximum of 35, and cannot decide a minimum of 18', () => {
    expect(at25({ hrc: 20, censored: 'below' }, { minHrc: 20, maxHrc: 35 })).toMatchObject({ verdict: 'fail', censored: 'below', margin: 0, governingLimit: 'min' });
    expect(at25({ hrc: 20, censored: 'below' }, { minHrc: 21, maxHrc: 35 })).toMatchObject({ verdict: 'fail', margin: -1 });
    expect(at25({ hrc: 20, censored: 'below' }, { maxHrc: 35 })).toMatchObject({ verdict: 'pass', margin: null });
    const open = at25({ hrc: 20, censored: 'below' }, { minHrc: 18, maxHrc: 35 });
    expect(open).toMatchObject({ verdict: 'not_tested' });
    expect(open.reason).toMatch(/<20 HRC is off the scale and cannot show whether the minimum of 18/);
  });

  it('">65" fails a maximum of 60 and meets a minimum of 50 with no maximum', () => {
    expect(at25({ hrc: 65, censored: 'above' }, { minHrc: 50, maxHrc: 60 })).toMatchObject({ verdict: 'fail', margin: -5, governingLimit: 'max' });
    expect(at25({ hrc: 65, censored: 'above' }, { minHrc: 50 })).toMatchObject({ verdict: 'pass' });
  });
});
