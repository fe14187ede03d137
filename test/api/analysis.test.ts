// Every analysis endpoint over HTTP (in-process), on PGlite or PostgreSQL (TEST_DATABASE_URL), with
// synthetic histories from a known model imported through the import pipeline.
import { afterAll, beforeAll, describe, expect, test } from 'vitest';
import { createTestApp, type TestApp } from '../helpers/testApp.ts';
import { BAND_8620H, importCertificates, syntheticHistory } from '../fixtures/analysisHistory.ts';
import { renderSvg } from '../../src/analysis/svgRender.ts';
import { buildPeriodReport, renderReportCsv, renderReportHtml, REPORT_CAUTION } from '../../src/analysis/report.ts';
import { refitModels } from '../../src/analysis/refit.ts';

let t: TestApp;
const anvil = syntheticHistory({ seed: 21, mill: 'ANVIL', count: 100, start: '2021-01-04', prefix: 'A' });
const SHIFT_AT = 50;
const corran = syntheticHistory({ seed: 23, mill: 'CORRAN', count: 80, start: '2022-01-03', prefix: 'C', shift: { from: SHIFT_AT, hrc: () => 5 } });
// A certificate repeating heat A-0005's curve and chemistry under another heat number (a possible copy).
const copy = { ...anvil.certificates[4], heatNumber: 'A-9005', castDate: '2021-12-30' };
// A grade with three heats only: predictions fall back to the published predictor.
const few = syntheticHistory({ seed: 25, mill: 'ANVIL', grade: '8622H', count: 3, start: '2023-02-01', prefix: 'F' });

beforeAll(async () => {
  t = await createTestApp();
  // 8620H chemistry limits: SAE J1268 / SAE J404 8620H (C .17–.23, Mn .60–.95, Si .15–.35, Ni .35–.75, Cr .35–.65, Mo .15–.25).
  await t.request('POST', '/api/v1/grades', {
    code: '8620H',
    distanceSystem: 'mm',
    chemistryLimits: [
      { element: 'C', min: 0.17, max: 0.23 },
      { element: 'Mn', min: 0.6, max: 0.95 },
      { element: 'Cr', min: 0.35, max: 0.65 },
      { element: 'Mo', min: 0.15, max: 0.25 },
    ],
  });
  await importCertificates(t.database.db, [...anvil.certificates, copy, ...corran.certificates, ...few.certificates]);
  const band = await t.request('POST', '/api/v1/grades/8620H/bands', { effectiveFrom: '2020-01-01', distanceSystem: 'mm', points: BAND_8620H });
  expect(band.status).toBe(201);
}, 300_000);
afterAll(async () => t?.close());

describe('OpenAPI document', () => {
  test('lists every analysis route; each description ends with the role it needs', async () => {
    const doc = (await t.request('GET', '/openapi.json')).body;
    const routes: Array<[string, string, string]> = [
      ['/api/v1/capability', 'get', 'viewer'],
      ['/api/v1/charts/{kind}', 'get', 'viewer'],
      ['/api/v1/baselines', 'get', 'viewer'],
      ['/api/v1/baselines', 'post', 'engineer'],
      ['/api/v1/models/fit', 'post', 'engineer'],
      ['/api/v1/models/{id}', 'get', 'viewer'],
      ['/api/v1/predict', 'post', ''],
      ['/api/v1/heats/{id}/review', 'get', 'viewer'],
      ['/api/v1/band-trials', 'post', ''],
    ];
    for (const [path, method, role] of routes) {
      const op = doc.paths[path]?.[method];
      expect(op, `${method} ${path}`).toBeDefined();
      expect(op.description).toMatch(new RegExp(`Role: ${role || '\\w+'}[^.]*\\.$`));
    }
  });
});

describe('capability', () => {
  test('one mill, all mills with a per-mill breakdown, and a grade without a band', async () => {
    const one = await t.request('GET', '/api/v1/capability?grade=8620H&mill=ANVIL&to=2021-12-31');
    expect(one.status).toBe(200);
    expect(one.body.distances).toHaveLength(8);
    // 100 heats of 2021 plus the repeated certificate A-9005 cast 2021-12-30.
    expect(one.body.distances[0]).toMatchObject({ distanceMm: 1.5, lsl: 41, usl: 48, n: 101 });
    expect(one.body.distances[0].result.intervals.ppk.lower).toBeLessThan(one.body.distances[0].result.ppk);
    const all = await t.request('GET', '/api/v1/capability?grade=8620H');
    expect(all.body.perMill.map((m: { mill: string }) => m.mill)).toEqual(['ANVIL', 'CORRAN']);
    // Two mills: no index over the mixture; the mills side by side and the heat-weighted supply PPM.
    expect(all.body.distances[0].result).toBeNull();
    expect(all.body.distances[0].supply.mills.map((m: { mill: string }) => m.mill)).toEqual(['ANVIL', 'CORRAN']);
    expect(all.body.distances[0].supply.method).toMatch(/heat-weighted/);
    // The interval method is stated and switchable.
    expect(one.body.distances[0].result.intervals.method.withinDf).toBe('effective');
    const textbook = await t.request('GET', '/api/v1/capability?grade=8620H&mill=ANVIL&to=2021-12-31&intervalDf=n-1');
    expect(textbook.body.distances[0].result.intervals.df.within).toBe(100);
    expect((await t.request('GET', '/api/v1/capability?grade=8620H&intervalDf=n')).status).toBe(400);
    const none = await t.request('GET', '/api/v1/capability?grade=8622H');
    expect(none.status).toBe(422);
    expect(none.body.error.code).toBe('no_band');
    expect((await t.request('GET', '/api/v1/capability?grade=8620H&from=2021-13-01')).status).toBe(400);
  });
});

describe('charts and baselines', () => {
  test.each(['individuals', 'ewma', 'cusum'])('%s chart: points, centre, limits, signals; phase I on the window', async (kind) => {
    // The individuals chart carries by default the run rules the alerts run (none by default): ask for the
    // rules to see them, which marks the chart as a looser view than the alerts.
    const rules = kind === 'individuals' ? '&rules=1,2,5,6' : '';
    const r = await t.request('GET', `/api/v1/charts/${kind}?grade=8620H&mill=CORRAN&distance=9${rules}`);
    expect(r.body.view).toBe(kind === 'individuals' ? 'looser' : 'alerts');
    expect(r.status).toBe(200);
    expect(r.body.points).toHaveLength(80);
    expect(r.body.points[0]).toMatchObject({ heatNumber: 'C-0001', castDate: '2022-01-03' });
    expect(r.body.limitsFrom.type).toBe('phase_one_on_window');
    expect(typeof r.body.centre).toBe('number');
    for (const p of r.body.points) expect(p.ucl).toBeGreaterThan(p.lcl);
    // A 5 HRC step at heat 51 (about 2 SD at 9 mm) is signalled somewhere after it.
    expect(r.body.signals.flatMap((s: { points: number[] }) => s.points).some((i: number) => i >= SHIFT_AT)).toBe(true);
  });

  test('by default a chart uses the settings of the alert rules: no run rule the alerts do not run, the alerts’ EWMA and CUSUM limits', async () => {
    const ind = await t.request('GET', '/api/v1/charts/individuals?grade=8620H&mill=CORRAN&distance=9');
    expect(ind.body).toMatchObject({ view: 'alerts', parameters: { rules: [], movingRange: false } });
    expect(ind.body.signals).toEqual([]);
    // The defaults of src/alerts/rules/settings.ts (Lucas & Saccucci 1990 and Brook & Evans 1972 designs named there).
    const ewma = await t.request('GET', '/api/v1/charts/ewma?grade=8620H&mill=CORRAN&distance=9');
    expect(ewma.body.parameters).toMatchObject({ lambda: 0.05, L: 3.5 });
    const cusum = await t.request('GET', '/api/v1/charts/cusum?grade=8620H&mill=CORRAN&distance=9');
    expect(cusum.body.parameters).toMatchObject({ k: 0.5, h: 8 });
    const narrower = await t.request('GET', '/api/v1/charts/cusum?grade=8620H&mill=CORRAN&distance=9&h=5');
    expect(narrower.body.view).toBe('looser');
  });

  test('format=vega-lite answers a Vega-Lite v6 spec that renders to SVG', async () => {
    const r = await t.request('GET', '/api/v1/charts/individuals?grade=8620H&mill=CORRAN&distance=9&format=vega-lite');
    expect(r.body.$schema).toBe('https://vega.github.io/schema/vega-lite/v6.json');
    expect(r.body.data.values).toHaveLength(80);
    expect(await renderSvg(r.body)).toMatch(/^<svg[^>]*>/);
  });

  test('bad requests: no distance, unknown kind, a distance never measured', async () => {
    expect((await t.request('GET', '/api/v1/charts/cusum?grade=8620H&mill=CORRAN')).status).toBe(400);
    expect((await t.request('GET', '/api/v1/charts/pareto?grade=8620H&mill=CORRAN&distance=9')).status).toBe(400);
    expect((await t.request('GET', '/api/v1/charts/cusum?grade=8620H&mill=CORRAN&distance=J16')).status).toBe(422);
  });

  test('POST /baselines freezes limits (who and why); charts then use them and say which; T² signals after the shift', async () => {
    const bad = await t.request('POST', '/api/v1/baselines', { grade: '8620H', mill: 'CORRAN', from: '2022-01-01', to: '2022-05-31' });
    expect(bad.status).toBe(400);
    const r = await t.request('POST', '/api/v1/baselines', { grade: '8620H', mill: 'CORRAN', from: '2022-01-01', to: '2022-05-31', reason: 'first five months, no known change' });
    expect(r.status).toBe(201);
    expect(r.body.baselines).toHaveLength(8);
    expect(r.body.baselines[0]).toMatchObject({ mill: 'CORRAN', grade: '8620H', windowFrom: '2022-01-01', windowTo: '2022-05-31', reason: 'first five months, no known change', createdBy: 'local' });
    const list = await t.request('GET', '/api/v1/baselines?grade=8620H&mill=CORRAN');
    expect(list.body).toHaveLength(8);
    const at9 = r.body.baselines.find((b: { distanceMm: number }) => b.distanceMm === 9);
    const chart = await t.request('GET', '/api/v1/charts/individuals?grade=8620H&mill=CORRAN&distance=9');
    expect(chart.body.limitsFrom).toMatchObject({ type: 'frozen_baseline', baselineId: at9.id });
    expect(chart.body.centre).toBeCloseTo(at9.limits.center, 12);
    expect(chart.body.points.filter((p: { phase: string }) => p.phase === 'baseline')).toHaveLength(50);
    // A second baseline for the same series retires the first.
    await t.request('POST', '/api/v1/baselines', { grade: '8620H', mill: 'CORRAN', from: '2022-01-01', to: '2022-04-30', reason: 'shorter window', distances: [9] });
    const again = await t.request('GET', '/api/v1/baselines?grade=8620H&mill=CORRAN&includeRetired=true');
    expect(again.body).toHaveLength(9);
    expect(again.body.filter((b: { retiredAt: string | null }) => b.retiredAt !== null).map((b: { id: number }) => b.id)).toEqual([at9.id]);
    const t2 = await t.request('GET', '/api/v1/charts/t2?grade=8620H&mill=CORRAN');
    expect(t2.status).toBe(200);
    expect(t2.body.limitsFrom.type).toBe('frozen_baseline');
    expect(t2.body.distancesMm).toEqual([1.5, 3, 5, 7, 9, 11, 13, 15]);
    const shifted = t2.body.points.filter((p: { index: number }) => p.index >= SHIFT_AT);
    const signalled = new Set<number>(t2.body.signals[0].points);
    const mean = (xs: Array<{ plotted: number }>) => xs.reduce((a, p) => a + p.plotted, 0) / xs.length;
    // Phase I drops baseline heats above the Beta limit before freezing and lists them (none need be here).
    expect(t2.body.limitsFrom).toEqual(expect.objectContaining({ excludedHeats: expect.any(Array), converged: true }));
    const dropped = new Set<string>(t2.body.limitsFrom.excludedHeats);
    const reference = t2.body.points.filter((p: { phase: string; heatNumber: string }) => p.phase === 'baseline' && !dropped.has(p.heatNumber));
    // Phase I identity on the heats in the estimate: Σ (x_i − x̄)ᵀ S⁻¹ (x_i − x̄) = tr(S⁻¹ (m − 1) S) = (m − 1) p,
    // so the mean T² is p(m − 1)/m.
    expect(mean(reference)).toBeCloseTo((8 * (reference.length - 1)) / reference.length, 9);
    // A uniform 5 HRC step lies along the curve's main direction of variation (chemistry moves every
    // distance together), where T² is least sensitive; it still triples the mean T² and raises signals.
    expect(mean(shifted)).toBeGreaterThan(2 * mean(reference));
    expect([...signalled].every((i) => (i as number) >= SHIFT_AT)).toBe(true);
  });
});

describe('models and prediction', () => {
  let modelId: number;
  test('POST /models/fit stores a versioned model per distance with the published comparison on the same heats', async () => {
    const r = await t.request('POST', '/api/v1/models/fit', { grade: '8620H', to: '2021-12-31' });
    expect(r.status).toBe(201);
    modelId = r.body.id;
    expect(r.body).toMatchObject({ grade: '8620H', mill: null, version: 1, trainedTo: '2021-12-31', heatCount: 101 });
    for (const fit of r.body.fits.distances) {
      expect(fit.coefficients.map((c: { name: string }) => c.name)).toEqual(['(Intercept)', 'C', 'Mn', 'Si', 'Ni', 'Cr', 'Mo', 'grainSize']);
      expect(fit.coefficients[1]).toEqual(expect.objectContaining({ standardError: expect.any(Number), p: expect.any(Number) }));
      // The published predictor answers at the quenched end and from 4/16 in (6.35 mm) on, not between.
      const answers = fit.distanceMm <= 1.6 || fit.distanceMm >= 6.35;
      expect(fit.comparison.heatIds).toEqual(answers ? fit.heatIds : []);
      if (answers) expect(fit.comparison.plantCvRmse).toBeCloseTo(fit.cvRmse, 12);
      else expect(fit.comparison.plantCvRmse).toBeNull();
    }
    const second = await t.request('POST', '/api/v1/models/fit', { grade: '8620H', mill: 'ANVIL', predictors: ['C', 'Mn', 'Cr', 'Mo'] });
    expect(second.body).toMatchObject({ mill: 'ANVIL', version: 1, predictors: ['C', 'Mn', 'Cr', 'Mo'] });
    expect((await t.request('GET', `/api/v1/models/${modelId}`)).body.fits.distances).toHaveLength(8);
    expect((await t.request('GET', '/api/v1/models/99999')).status).toBe(404);
    expect((await t.request('POST', '/api/v1/models/fit', { grade: '8622H' })).status).toBe(422);
    expect((await t.request('POST', '/api/v1/models/fit', { grade: '8620H', predictors: ['Xx'] })).status).toBe(400);
  });

  test('POST /predict: non-increasing curve with 95 % intervals, point and whole-band probabilities, the model named', async () => {
    const chemistry = { C: 0.2, Mn: 0.8, Si: 0.25, Ni: 0.55, Cr: 0.5, Mo: 0.2, P: 0.012, S: 0.02 };
    const r = await t.request('POST', '/api/v1/predict', { grade: '8620H', mill: 'CORRAN', chemistry, grainSize: 7 });
    expect(r.status).toBe(200);
    expect(r.body.answeredBy).toMatchObject({ type: 'plant_model', modelId, version: 1, mill: null });
    const pts = r.body.points;
    for (let i = 1; i < pts.length; i++) expect(pts[i].hrc).toBeLessThanOrEqual(pts[i - 1].hrc);
    for (const p of pts) expect(p.lower).toBeLessThan(p.hrc);
    // A joint probability cannot exceed any of its marginals (Fréchet bound).
    const smallest = Math.min(...pts.map((p: { probabilityInBand: number }) => p.probabilityInBand));
    expect(r.body.wholeBand.probability).toBeLessThanOrEqual(smallest + 3 * r.body.wholeBand.standardError);
    expect(r.body.wholeBand).toMatchObject({ correlation: 'residual_correlation_of_model', draws: 20000 });
    const same = await t.request('POST', '/api/v1/predict', { grade: '8620H', mill: 'CORRAN', chemistry, grainSize: 7 });
    expect(same.body.wholeBand.probability).toBe(r.body.wholeBand.probability);
    const byMill = await t.request('POST', '/api/v1/predict', { grade: '8620H', mill: 'ANVIL', chemistry, grainSize: 7 });
    expect(byMill.body.answeredBy.mill).toBe('ANVIL');
    expect((await t.request('POST', '/api/v1/predict', { grade: '8620H', chemistry: { Mn: 0.8 }, grainSize: 7 })).status).toBe(400);
  });

  test('a grade with too little history is answered by the published predictor, which says so', async () => {
    const r = await t.request('POST', '/api/v1/predict', { grade: '8622H', chemistry: { C: 0.22, Mn: 0.8, Si: 0.25, Ni: 0.5, Cr: 0.5, Mo: 0.2 }, grainSize: 7 });
    expect(r.status).toBe(200);
    expect(r.body.answeredBy.type).toBe('published_predictor');
    expect(r.body.answeredBy.reason).toMatch(/3 heat\(s\).*published predictor answers/);
    expect(r.body.answeredBy.methods).toEqual(expect.arrayContaining(['ASTM A255 initial hardness at the quenched end', 'Just (1969) regression, inch form']));
    expect(r.body.points.every((p: { lower: number | null }) => p.lower === null)).toBe(true);
    // Three heats are too few to bias-correct the published curve (5 needed): no correction is applied.
    expect(r.body.answeredBy.biasCorrection.heats).toBe(3);
    expect(r.body.answeredBy.biasCorrection.perDistance.every((d: { applied: boolean }) => !d.applied)).toBe(true);
  });

  test('refit makes the next versions', async () => {
    const outcomes = await refitModels(t.database.db, { grade: '8620H' });
    expect(outcomes.map((o) => [o.mill, o.version, o.problem])).toEqual([[null, 2, null], ['ANVIL', 2, null], ['CORRAN', 1, null]]);
  });
});

describe('heat review', () => {
  test('conformance, certificate checks with evidence, predicted beside reported, chart signals', async () => {
    const heats = (await t.request('GET', '/api/v1/heats?mill=CORRAN&grade=8620H')).body.heats;
    const shifted = heats[SHIFT_AT + 6];
    const r = await t.request('GET', `/api/v1/heats/${shifted.id}/review`);
    expect(r.status).toBe(200);
    expect(r.body.heat.heatNumber).toBe(shifted.heatNumber);
    expect(r.body.tests[0].conformance.points).toHaveLength(8);
    // Whole-curve figures of each test: distance at 40 HRC, of 50 % martensite, and DI from the curve.
    expect(r.body.tests[0].figures).toMatchObject({ atHardness: { hrc: 40 }, halfMartensite: { crossing: { status: 'crossed' } } });
    expect(r.body.tests[0].figures.idealDiameter.mm).toBeGreaterThan(20);
    expect(['pass', 'fail']).toContain(r.body.verdict.verdict);
    expect(r.body.checks.map((c: { check: string }) => c.check)).toEqual(
      expect.arrayContaining(['curve_non_increasing', 'martensite_ceiling', 'chemistry_limits', 'prediction_residuals']),
    );
    for (const c of r.body.checks) expect(c).toEqual(expect.objectContaining({ verdict: expect.any(String), summary: expect.any(String), threshold: expect.any(Object), values: expect.any(Object) }));
    expect(r.body.prediction.answeredBy.type).toBe('plant_model');
    // Out of sample: the grade-wide model trained to 2021-12-31 answers for a heat cast in 2022.
    expect(r.body.prediction.answeredBy.trainedTo < shifted.castDate).toBe(true);
    // The residual check states its family-wise thresholds (Sidak over the distances compared).
    const residuals = r.body.checks.find((c: { check: string }) => c.check === 'prediction_residuals');
    expect(residuals.threshold).toMatchObject({ method: 'sidak', warnAlpha: 0.05, failAlpha: 0.001, distances: residuals.values.rows.length });
    // The 5 HRC step (about 2 SD at every distance) shows as the curve-level signal the drift alerts run
    // (docs/monitoring.md), against the frozen baseline window; the per-distance alert rules are off by default.
    expect(r.body.curveMonitoring).toMatchObject({ status: 'monitoring', level: { signal: 'high' } });
    expect(r.body.signals.some((s: { kind: string; rule: string }) => s.kind === 'curve' && s.rule === 'curve_level_high')).toBe(true);
    const anvilHeats = (await t.request('GET', '/api/v1/heats?mill=ANVIL&grade=8620H')).body.heats;
    const copied = anvilHeats.find((h: { heatNumber: string }) => h.heatNumber === 'A-9005');
    const review = await t.request('GET', `/api/v1/heats/${copied.id}/review`);
    const copies = review.body.checks.find((c: { values: { matches?: unknown[] } }) => Array.isArray(c.values.matches));
    expect(copies.verdict).not.toBe('pass');
    expect((await t.request('GET', '/api/v1/heats/999999/review')).status).toBe(404);
  });
});

describe('whole-curve figures over a series', () => {
  test('J at 35 HRC of every heat, charted, with capability against the limits the band implies', async () => {
    const r = await t.request('GET', '/api/v1/curve-figures?grade=8620H&mill=ANVIL&hrc=35');
    expect(r.status).toBe(200);
    expect(r.body).toMatchObject({ figure: 'j_at_hardness', hrc: 35, limits: { usl: 9 } });
    expect(r.body.limits.lsl).toBeLessThan(r.body.limits.usl);
    const heats = (await t.request('GET', '/api/v1/heats?mill=ANVIL&grade=8620H&limit=500')).body.total;
    expect(r.body.points.length + r.body.without).toBe(heats);
    expect(r.body.chart.ucl).toBeGreaterThan(r.body.chart.center);
    expect(r.body.capability.n).toBe(r.body.points.length);
    expect(r.body.caution).toMatch(/do not replace/);
    const di = await t.request('GET', '/api/v1/curve-figures?grade=8620H&mill=ANVIL&figure=ideal_diameter');
    expect(di.status).toBe(200);
    expect(di.body.limits).toBeNull();
    expect(di.body.capability).toBeNull();
    expect((await t.request('GET', '/api/v1/curve-figures?grade=8620H&figure=weight')).status).toBe(400);
  });
});

describe('band trials', () => {
  test('per mill: failing heats listed, share, Ppk and expected PPM per distance, current band, suggestion', async () => {
    const r = await t.request('POST', '/api/v1/band-trials', {
      grade: '8620H',
      distanceSystem: 'mm',
      points: BAND_8620H.map((p) => ({ ...p, max: p.at === 9 ? 31 : p.max })),
      mills: ['ANVIL', 'CORRAN'],
      share: 0.9,
    });
    expect(r.status).toBe(200);
    expect(r.body.mills.map((m: { mill: string }) => m.mill)).toEqual(['ANVIL', 'CORRAN']);
    const corranTrial = r.body.mills[1];
    expect(corranTrial.proposed.failingCount).toBe(corranTrial.proposed.failing.length);
    expect(corranTrial.proposed.failingShare).toBeCloseTo(corranTrial.proposed.failingCount / 80, 12);
    expect(corranTrial.proposed.failingCount).toBeGreaterThan(corranTrial.current.failingCount);
    expect(corranTrial.proposed.perDistance[4]).toMatchObject({ distanceMm: 9, minHrc: 21, maxHrc: 31, n: 80 });
    expect(corranTrial.suggestion.heldShare).toBeGreaterThanOrEqual(0.9);
    // Whole-curve share from the joint distribution (a share with simulation bounds, never a capped sum),
    // and a suggestion from tolerance limits with its confidence and an out-of-sample check.
    expect(corranTrial.proposed.expectedShare.share).toBeGreaterThanOrEqual(0);
    expect(corranTrial.proposed.expectedShare.upper).toBeLessThanOrEqual(1);
    expect(corranTrial.proposed).not.toHaveProperty('expectedPpmUpperBound');
    expect(corranTrial.suggestion).toMatchObject({ targetShare: 0.9, confidence: 0.95 });
    expect(corranTrial.suggestion.method).toMatch(/ISO 16269-6/);
    expect(corranTrial.suggestion.outOfSample.fittedOn + corranTrial.suggestion.outOfSample.checkedOn).toBe(corranTrial.suggestion.heatsCounted);
    const whole = await t.request('POST', '/api/v1/band-trials', { grade: '8620H', distanceSystem: 'mm', points: BAND_8620H, share: 1 });
    expect(whole.status).toBe(400);
    const invalid = await t.request('POST', '/api/v1/band-trials', { grade: '8620H', distanceSystem: 'mm', points: [{ at: 5, min: 40, max: 30 }] });
    expect(invalid.status).toBe(400);
  });
});

describe('period report', () => {
  test('HTML with SVG charts, CSV, alerts and suspicious certificates, with the caution', async () => {
    const report = await buildPeriodReport(t.database.db, { mill: 'ANVIL', from: '2021-01-01', to: '2021-12-31' });
    expect(report.grades.map((g) => g.grade)).toEqual(['8620H']);
    expect(report.suspicious.map((s) => s.heatNumber)).toEqual(expect.arrayContaining(['A-0005', 'A-9005']));
    const html = await renderReportHtml(report);
    // Capability, the curve-level level and shape charts the drift alerts run (docs/monitoring.md), then one per distance.
    expect(report.grades[0].curve?.charts.map((c) => c.kind)).toEqual(['ewma', 't2']);
    expect(html).toMatch(/Whole curve: what the drift alerts judge/);
    expect(html.match(/<svg/g)!.length).toBe(1 + 2 + report.grades[0].charts.length);
    expect(html).toContain(REPORT_CAUTION);
    const csv = renderReportCsv(report);
    expect(csv.split('\n')[0]).toMatch(/^section,mill,grade,distance_mm/);
    expect(csv.split('\n').filter((l) => l.startsWith('capability,')).length).toBe(8);
  });
});
