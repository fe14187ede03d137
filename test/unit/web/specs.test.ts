// The pages' chart specifications and small helpers. Every spec is compiled by vega-lite itself (the
// library the browser uses) so a spec that vega-lite rejects, or that has no data mark, fails here.
import { describe, expect, it } from 'vitest';
import { compile } from 'vega-lite';
import { scriptJson } from '../../../src/web/components/chart.tsx';
import { lowestPpkSpec } from '../../../src/web/specs/mills.ts';
import { curvesSpec } from '../../../src/web/specs/curves.ts';
import { chemistrySpec } from '../../../src/web/specs/chemistry.ts';
import { alertCountSpec } from '../../../src/web/specs/alerts.ts';
import { bandVersionsSpec } from '../../../src/web/specs/bandVersions.ts';
import { binWidth, histogramBins, histogramSpec, pagePpkSpec, probabilityPlotSpec, probabilityPoints, readingStep } from '../../../src/web/specs/capability.ts';
import { coefficientSpec, comparisonSpec, fittedVsReportedSpec, residualsByDateSpec } from '../../../src/web/specs/chemistryModel.ts';
import { bandsSpec, failingShareSpec } from '../../../src/web/specs/bandTrial.ts';
import { shortRule } from '../../../src/web/specs/controlChart.ts';
import { lowestPpk, trendWord } from '../../../src/web/data/millsOverview.ts';
import { normalQuantile } from '../../../src/stats/distributions.ts';
import { backTo } from '../../../src/web/pages/alerts.tsx';
import { readPoints } from '../../../src/web/pages/bandTrial.tsx';
import { ParamError } from '../../../src/web/params.ts';

const band = [
  { mm: 1.5, label: '1.5 mm', min: 41, max: 48 },
  { mm: 5, label: '5 mm', min: 36, max: 45 },
  { mm: 11, label: '11 mm', min: null, max: 37 },
];
const curves = [1.5, 5, 11].map((mm, i) => ({ curve: 't1', group: 'mill certificate', heat: 'H1', mm, label: `${mm} mm`, hrc: 45 - 4 * i, outside: false }));
const fitRows = [
  { heat: 'H1', castDate: '2025-01-02', reported: 41, fitted: 40.5, residual: 0.5 },
  { heat: 'H2', castDate: '2025-02-02', reported: 43, fitted: 43.4, residual: -0.4 },
];

const SPECS: Array<[string, object]> = [
  ['lowest Ppk', lowestPpkSpec([{ series: 'A · G', mill: 'A', grade: 'G', distance: '5 mm', ppk: 1.1, lower: 0.9, upper: 1.3 }])],
  ['curves with prediction', curvesSpec(band, curves, [{ mm: 1.5, label: '1.5 mm', hrc: 44, lower: 42, upper: 46 }], { title: 't' })],
  ['many curves, no band', curvesSpec([], curves, null, { title: 't', many: true })],
  ['chemistry', chemistrySpec([{ element: 'C', value: 0.2, min: 0.17, max: 0.22, position: 0.6, status: 'inside' }])],
  ['alert counts', alertCountSpec([{ rule: 'out_of_band', severity: 'critical', status: 'open', count: 2 }])],
  ['band versions', bandVersionsSpec([{ version: 'v1', mm: 1.5, label: 'J1', min: 40, max: 47 }])],
  ['histogram', histogramSpec([40, 41, 41, 42, 43], { mean: 41.4, sd: 1.1 }, { lsl: 38, usl: 45 }, 'h')],
  ['probability plot', probabilityPlotSpec([40, 41, 41, 42, 43], { mean: 41.4, sd: 1.1 }, 'p')],
  ['coefficients', coefficientSpec([{ term: 'C', estimate: 60, lower: 55, upper: 65 }])],
  ['fitted vs reported', fittedVsReportedSpec(fitRows)],
  ['residuals', residualsByDateSpec(fitRows, 0.8)],
  ['comparison', comparisonSpec([{ distance: '5 mm', mm: 5, which: 'published predictor', rmse: 1.2 }])],
  ['failing share', failingShareSpec([{ mill: 'A', band: 'proposed band', share: 0.1, failing: 3, heats: 30 }])],
  ['bands', bandsSpec([{ band: 'proposed band', mm: 1.5, label: 'J1', min: 40, max: 47 }])],
  [
    'Ppk by distance, several mills side by side',
    pagePpkSpec({
      grade: 'G',
      mill: null,
      distances: [
        {
          distanceMm: 5,
          label: '5 mm',
          n: 30,
          result: null,
          supply: { mills: ['A', 'B'].map((mill, i) => ({ mill, n: 15, weight: 0.5, cpk: 1 + i, ppk: 1 + i, cpkInterval: { lower: 0.8, upper: 1.2 }, ppkInterval: { lower: 0.8 + i, upper: 1.2 + i }, expectedPpm: 10, expectedPpmInterval: { lower: 1, upper: 30 }, observedPpm: 0 })) },
        },
      ],
    } as never),
  ],
];

describe('chart specifications', () => {
  it.each(SPECS)('%s compiles with vega-lite 6 and draws data marks', (_name, spec) => {
    const s = spec as { $schema: string; width: unknown };
    expect(s.$schema).toMatch(/vega-lite\/v6/);
    expect(s.width).toBe('container');
    const { spec: vega } = compile(spec as never);
    const marks = JSON.stringify(vega.marks ?? []);
    expect(marks).toMatch(/"type":"(symbol|line|rect|area|rule|text)"/);
  });
});

describe('data embedded in a page', () => {
  it('cannot close its script element or open a comment', () => {
    const out = scriptJson({ title: '</script><script>alert(1)</script><!--', line: '\u2028' });
    expect(out).not.toMatch(/<|>|\u2028/);
    expect(JSON.parse(out)).toEqual({ title: '</script><script>alert(1)</script><!--', line: '\u2028' });
  });
});

describe('histogram bins', () => {
  it('use the step the readings were reported in', () => {
    expect(readingStep([40, 41, 43])).toBe(1);
    expect(readingStep([40, 40.5, 43])).toBe(0.5);
    expect(readingStep([40.2, 41])).toBe(0.1);
    expect(binWidth([54, 55, 59])).toBe(1);
    expect(binWidth([20, 60])).toBe(2);
  });

  it('count every value once, in bins centred on the possible readings', () => {
    const values = [40, 41, 41, 42, 45, 45, 45];
    const bins = histogramBins(values, 1);
    expect(bins.reduce((s, b) => s + b.count, 0)).toBe(values.length);
    expect(bins[0]).toEqual({ from: 39.5, to: 40.5, count: 1 });
    expect(bins.find((b) => b.from === 44.5)?.count).toBe(3);
  });
});

describe('normal probability plot', () => {
  it('uses Blom (1958) plotting positions (i − 3/8)/(n + 1/4), symmetric about the median', () => {
    const pts = probabilityPoints([3, 1, 2]);
    expect(pts.map((p) => p.value)).toEqual([1, 2, 3]);
    // n = 3: (1 − 0.375)/3.25, 0.5, (3 − 0.375)/3.25 — arithmetic from the formula.
    expect(pts[0].p).toBeCloseTo(0.625 / 3.25, 12);
    expect(pts[1].z).toBeCloseTo(0, 12);
    expect(pts[0].z).toBeCloseTo(-pts[2].z, 12);
  });
});

describe('Mills overview helpers', () => {
  // Thresholds are our display rule (half-way to the EWMA limit; see src/web/data/millsOverview.ts), not a published one.
  it('reads the newest EWMA position as a trend word', () => {
    expect(trendWord(null, false)).toBe('too few heats');
    expect(trendWord(0.2, false)).toBe('steady');
    expect(trendWord(0.6, false)).toBe('rising');
    expect(trendWord(-0.7, false)).toBe('falling');
    expect(trendWord(1.2, false)).toBe('signal up');
    expect(trendWord(-0.1, true)).toBe('signal down');
  });

  it('finds the lowest Ppk over the distances that have a result, with an interval simultaneous over them', () => {
    const result = (ppk: number) => ({ ppk, n: 30, intervals: { ppk: { lower: ppk - 0.1, upper: ppk + 0.1 }, df: { overall: 29 } } });
    const lowest = lowestPpk([
      { distanceMm: 1.5, label: 'J1', lsl: 1, usl: 2, n: 30, result: result(1.4) as never, note: null },
      { distanceMm: 5, label: 'J3', lsl: 1, usl: 2, n: 30, result: result(0.9) as never, note: null },
      { distanceMm: 9, label: 'J6', lsl: 1, usl: 2, n: 1, result: null, note: 'too few' },
    ]);
    expect(lowest).toMatchObject({ distanceMm: 5, label: 'J3', ppk: 0.9, of: 2 });
    // Bissell (1990) half-width z·√(1/(9n) + Ĉ²/(2(n − 1))) at the Šidák level 0.95^(1/2) per distance
    // (Šidák 1967): z = Φ⁻¹(1 − (1 − √0.95)/2); the minimum's bounds are the smallest lower and upper bounds.
    const z = normalQuantile(1 - (1 - Math.sqrt(0.95)) / 2);
    const half = (c: number) => z * Math.sqrt(1 / 270 + (c * c) / 58);
    expect(lowest!.lower).toBeCloseTo(Math.min(0.9 - half(0.9), 1.4 - half(1.4)), 12);
    expect(lowest!.upper).toBeCloseTo(Math.min(0.9 + half(0.9), 1.4 + half(1.4)), 12);
    // Wider than the unadjusted 95 % interval of the one distance picked.
    expect(lowest!.lower).toBeLessThan(0.9 - normalQuantile(0.975) * Math.sqrt(1 / 270 + 0.81 / 58));
    expect(lowest!.intervalMethod).toMatch(/simultaneous over 2 distance/);
    expect(lowestPpk([])).toBeNull();
  });
});

describe('forms', () => {
  it('an alert form returns only to the alerts page, whatever it is sent', () => {
    expect(backTo('?status=open&mill=A', 'done')).toBe('/alerts?status=open&mill=A&done=done');
    expect(backTo('https://elsewhere.example/', 'x')).toBe('/alerts?done=x');
    expect(backTo('//elsewhere.example', 'x')).toBe('/alerts?done=x');
    expect(backTo(undefined, 'x')).toBe('/alerts?done=x');
  });

  it('reads a proposed band, skipping empty rows and naming the row of a mistake', () => {
    const labels = new Map([[1.5875, 'J1']]);
    expect(readPoints(['1.5875', '', '5'], ['40', '', ''], ['47', '', '38'], labels)).toEqual([
      { distanceMm: 1.5875, label: 'J1', minHrc: 40, maxHrc: 47 },
      { distanceMm: 5, label: '5 mm', minHrc: null, maxHrc: 38 },
    ]);
    expect(() => readPoints(['3'], ['45'], ['40'], labels)).toThrow(/Row 1 .* min 45 is above max 40/);
    expect(() => readPoints(['3'], [''], [''], labels)).toThrow(ParamError);
    expect(() => readPoints(['3', '3'], ['40', '41'], ['', ''], labels)).toThrow(/twice/);
    expect(() => readPoints([''], [''], [''], labels)).toThrow(/at least one point/);
  });

  it('labels signal rules briefly on the chart, in words rather than rule numbers', () => {
    expect(shortRule('nelson_5')).toBe('2 of 3 past 2σ');
    expect(shortRule('cusum_lower')).toBe('sum falling');
    for (let n = 1; n <= 8; n++) expect(shortRule(`nelson_${n}`)).not.toMatch(/\d$|N\d|rule/i);
    expect(shortRule('something_new')).toBe('something new');
  });
});
