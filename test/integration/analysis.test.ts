// The analysis layer on a real database (PGlite by default; PostgreSQL with TEST_DATABASE_URL), over
// synthetic histories generated from a known model and imported through the import pipeline.
import { afterAll, beforeAll, describe, expect, test } from 'vitest';
import { createTestDatabase, type TestDatabase } from '../helpers/testDatabase.ts';
import { addBandVersion } from '../../src/db/referenceData.ts';
import { capabilityAtBand, capabilityStudy } from '../../src/analysis/capabilityStudy.ts';
import { controlChart, t2Chart, univariateChart, type UnivariateReference } from '../../src/analysis/controlCharts.ts';
import { freezeBaselines } from '../../src/analysis/baselines.ts';
import { bandTrial } from '../../src/analysis/bandTrial.ts';
import { fitAndStoreModel } from '../../src/analysis/chemistryModel.ts';
import { predictCurve, predictWithModel, predictWithPublished, publishedErrors, wholeBandProbability } from '../../src/analysis/prediction.ts';
import { publishedAt, publishedCurve } from '../../src/analysis/publishedPredictor.ts';
import type { HeatCurve } from '../../src/db/series.ts';
import { readFileSync } from 'node:fs';
import { loadSeriesCurves, pointsAt } from '../../src/analysis/seriesData.ts';
import { normalCdf } from '../../src/stats/distributions.ts';
import { roundE29 } from '../../src/hardenability/conformance.ts';
import { createRng } from '../../src/stats/random.ts';
import { BAND_8620H, DISTANCES_MM, drawHeat, importCertificates, syntheticHistory, TRUE_SLOPES, TRUE_SIGMA } from '../fixtures/analysisHistory.ts';

let db: TestDatabase;
const millA = syntheticHistory({ seed: 11, mill: 'ANVIL', count: 150, start: '2021-01-04', prefix: 'A' });
const millB = syntheticHistory({ seed: 12, mill: 'BRAMLEY', count: 110, start: '2021-01-05', prefix: 'B' });
// Mill CORRAN: a planted upward shift of 2 marginal SDs at every distance from heat 61 on (index 60).
const marginalSd9 = Math.sqrt(
  (60 * 0.025) ** 2 / 3 + (15 * 0.12) ** 2 / 3 + (5 * 0.08) ** 2 / 3 + (6 * 0.15) ** 2 / 3 + (16 * 0.1) ** 2 / 3 + (28 * 0.04) ** 2 / 3 + 0.8 ** 2 * 0.9 + TRUE_SIGMA ** 2,
);
const SHIFT_AT = 60;
const millC = syntheticHistory({ seed: 13, mill: 'CORRAN', count: 90, start: '2022-01-03', prefix: 'C', shift: { from: SHIFT_AT, hrc: () => 2 * marginalSd9 } });

beforeAll(async () => {
  db = await createTestDatabase();
  await importCertificates(db.db, [...millA.certificates, ...millB.certificates, ...millC.certificates]);
  await addBandVersion(db.db, '8620H', {
    effectiveFrom: '2020-01-01',
    status: 'active',
    kind: 'standard',
    points: BAND_8620H.map((p) => ({ distanceMm: p.at, label: `${p.at} mm`, minHrc: p.min, maxHrc: p.max })),
  });
}, 300_000);
afterAll(async () => db?.close());

const std = (v: number[]) => {
  const m = v.reduce((a, b) => a + b, 0) / v.length;
  return { m, s: Math.sqrt(v.reduce((a, b) => a + (b - m) ** 2, 0) / (v.length - 1)) };
};

describe('capability', () => {
  test('per band distance, with the band limits; per mill when no mill is asked for', async () => {
    const one = await capabilityStudy(db.db, { grade: '8620H', mill: 'ANVIL' });
    expect(one.distances.map((d) => d.distanceMm)).toEqual(DISTANCES_MM);
    const at5 = one.distances[2];
    expect([at5.lsl, at5.usl, at5.n]).toEqual([31, 43, 150]);
    // Ppk = min(USL − x̄, x̄ − LSL)/3s with the overall n − 1 SD (ISO 22514-2; NIST e-Handbook §6.1.6).
    const { m, s } = std(millA.heats.map((h) => h.hrc[2]));
    expect(at5.result!.ppk).toBeCloseTo(Math.min(43 - m, m - 31) / (3 * s), 10);
    // One-sided point (max only at 11 mm): Cp is not defined, Ppk = Ppu (ISO 22514-2).
    expect(one.distances[5].result!.cp).toBeNull();
    const all = await capabilityStudy(db.db, { grade: '8620H' });
    expect(all.perMill!.map((p) => [p.mill, p.heats])).toEqual([['ANVIL', 150], ['BRAMLEY', 110], ['CORRAN', 90]]);
    expect(all.distances[0].n).toBe(350);
    // All mills together: no index over the mixture (rational subgrouping, Montgomery §6.2.4; AIAG SPC
    // manual); each mill's own indices side by side and the heat-weighted supply share.
    const at5all = all.distances[2];
    expect(at5all.result).toBeNull();
    expect(at5all.note).toMatch(/3 mills: one index over a mixture/);
    const supply = at5all.supply!;
    expect(supply.mills.map((m) => [m.mill, m.n])).toEqual([['ANVIL', 150], ['BRAMLEY', 110], ['CORRAN', 90]]);
    const own = all.perMill!.map((p) => p.distances[2].result!);
    supply.mills.forEach((m, i) => {
      expect(m.ppk).toBeCloseTo(own[i].ppk, 12);
      expect(m.cpk).toBeCloseTo(own[i].cpk, 12);
      expect(m.weight).toBeCloseTo(own[i].n / 350, 12);
    });
    // Supply PPM = Σ w_m · PPM_m (the mixture's share outside; heat weights).
    expect(supply.expectedPpm).toBeCloseTo(own.reduce((a, r) => a + (r.n / 350) * r.expectedPpm.overall.total, 0), 6);
    expect(supply.expectedPpmInterval.lower).toBeLessThanOrEqual(supply.expectedPpm);
    expect(supply.expectedPpmInterval.upper).toBeGreaterThanOrEqual(supply.expectedPpm);
    expect(one.distances[2].supply).toBeNull();
    // The band applied is the one in force on the window's end (today when no end is given).
    const dated = await capabilityStudy(db.db, { grade: '8620H', mill: 'ANVIL', to: '2021-12-31' });
    expect(dated.bandInForceOn).toBe('2021-12-31');
    expect(dated.band.version).toBe(1);
    expect(all.bandInForceOn).toMatch(/^\d{4}-\d{2}-\d{2}$/);
  });

  test('two mills, one near each band limit: each mill keeps its own Cpk; the supply share is their heat-weighted sum', () => {
    const rng = createRng(31);
    const curve = (i: number, mill: string, hrc: number): HeatCurve => ({
      heatId: i + 1,
      heatNumber: `H${i + 1}`,
      mill,
      castDate: `2023-01-${String(1 + (i % 28)).padStart(2, '0')}`,
      grainSize: null,
      chemistry: {},
      testId: i + 1,
      source: 'mill_certificate',
      lotNumber: null,
      readings: new Map([[5, hrc]]),
    });
    // EAST N(34.1, 1): Cpk (34.1 − 31)/3 ≈ 1.03; WEST N(41, 1): Cpk (43 − 41)/3 ≈ 0.67 (ISO 22514-2 formulas).
    const curves = Array.from({ length: 400 }, (_, i) => (i % 2 === 0 ? curve(i, 'EAST', 34.1 + rng.normal()) : curve(i, 'WEST', 41 + rng.normal())));
    const band = { grade: 'TEST', version: 3, effectiveFrom: '2020-01-01', status: 'active' as const, kind: 'standard' as const, points: [{ mm: 5, minHrc: 31, maxHrc: 43 }] };
    const [d] = capabilityAtBand(curves, band);
    expect(d.result).toBeNull();
    const [east, west] = d.supply!.mills;
    // Within 4 standard errors (Bissell 1990: SE = half-width of the 95 % interval / 1.96).
    const near = (est: number, iv: { lower: number; upper: number }, truth: number) => Math.abs(est - truth) < (4 * (iv.upper - iv.lower)) / (2 * 1.96);
    expect(near(east.cpk, east.cpkInterval, 3.1 / 3) && near(east.ppk, east.ppkInterval, 3.1 / 3)).toBe(true);
    expect(near(west.cpk, west.cpkInterval, 2 / 3) && near(west.ppk, west.ppkInterval, 2 / 3)).toBe(true);
    // True share outside of the 50/50 mixture: ½Φ(−3.1) + ½Φ(−2) (plus negligible far tails) ≈ 12,340 PPM
    // (standard normal table values Φ(−3.1) = 0.000968, Φ(−2) = 0.02275).
    const truth = 1e6 * (0.5 * 0.000968 + 0.5 * 0.02275);
    expect(d.supply!.expectedPpmInterval.lower).toBeLessThan(truth);
    expect(d.supply!.expectedPpmInterval.upper).toBeGreaterThan(truth);
    // The same heats as one mill: an index over the mixture, which the supply view avoids.
    const [naive] = capabilityAtBand(curves.map((c) => ({ ...c, mill: 'ONE' })), band);
    expect(naive.result).not.toBeNull();
    expect(naive.supply).toBeNull();
  });
});

// Siegmund's approximation to the ARL of a one-sided tabular CUSUM: ARL = (e^{−2Δb} + 2Δb − 1)/(2Δ²),
// Δ = δ − k, b = h + 1.166; two-sided 1/ARL = 1/ARL⁺ + 1/ARL⁻ (Siegmund 1985, Sequential Analysis,
// Springer; as given in Montgomery, Introduction to Statistical Quality Control, §9.1.3).
function siegmundArl(delta: number, k: number, h: number): number {
  const one = (d: number) => {
    const b = h + 1.166;
    return Math.abs(d) < 1e-12 ? b * b : (Math.exp(-2 * d * b) + 2 * d * b - 1) / (2 * d * d);
  };
  return 1 / (1 / one(delta - k) + 1 / one(-delta - k));
}

describe('CUSUM detects a planted shift within the run length theory gives', () => {
  const reference: UnivariateReference = {
    frozen: { kind: 'individuals-mr', center: 0, sigma: 1, L: 3, ucl: 3, lcl: -3, mrCenter: 1.128, mrUcl: 3.686, baselineN: 0, usedN: 0, excluded: [], iterations: 1, converged: true, stillFlagged: [], rules: [1] },
    origin: { type: 'phase_one_on_window', window: { from: null, to: null }, excludedHeats: [], converged: true },
    baselineWindow: null,
  };
  test.each([1, 2])('mean run length at a %s-sigma shift matches Siegmund (k = 0.5, h = 5)', (delta) => {
    const rng = createRng(4000 + delta);
    const reps = 2000;
    let total = 0;
    for (let r = 0; r < reps; r++) {
      const series = Array.from({ length: 80 }, (_, i) => ({ heatId: i, heatNumber: `H${i}`, mill: 'M', castDate: '2024-01-01', value: delta + rng.normal() }));
      const chart = univariateChart('cusum', series, reference, { grade: 'G', mill: 'M', distanceMm: 9, label: null, source: 'mill_certificate' });
      const first = Math.min(...chart.signals.flatMap((s) => s.points), 79);
      total += first + 1;
    }
    const arl = siegmundArl(delta, 0.5, 5);
    // Siegmund: 10.34 at δ = 1 (Montgomery's Table 9.3, from memory: 10.4) and 3.89 at δ = 2 (table 4.01).
    expect(total / reps).toBeGreaterThan(arl * 0.95);
    expect(total / reps).toBeLessThan(arl * 1.08);
  });

  test('the imported series with a 2-SD shift: no signal before, a signal within twice the ARL after', async () => {
    const frozen = await freezeBaselines(db.db, { grade: '8620H', mill: 'CORRAN', from: '2022-01-01', to: '2022-04-30', reason: 'stable start', createdBy: 'test', distancesMm: [9] });
    expect(frozen.baselines).toHaveLength(1);
    const chart = await controlChart(db.db, { kind: 'cusum', grade: '8620H', mill: 'CORRAN', distanceMm: 9 });
    expect(chart.limitsFrom.type).toBe('frozen_baseline');
    const first = Math.min(...chart.signals.flatMap((s) => s.points));
    expect(first).toBeGreaterThanOrEqual(SHIFT_AT);
    const delta = (2 * marginalSd9) / chart.sigma!;
    const runLength = first - SHIFT_AT + 1;
    expect(runLength).toBeLessThanOrEqual(Math.ceil(2 * siegmundArl(delta, 0.5, 5)));
    expect(chart.signals.find((s) => s.points.includes(first))!.rule).toBe('cusum_upper');
  });
});

describe('T² phase I drops heats above the Beta limit before freezing', () => {
  // Phase I UCL ((m−1)²/m)·Beta(1 − α; p/2, (m − p − 1)/2) (Tracy, Young & Mason 1992) and phase II UCL
  // p(m+1)(m−1)/(m² − mp)·F(1 − α; p, m − p) (NIST e-Handbook §6.5.4.3.4), from scipy for m = 30 and 27,
  // p = 3, α = 0.0027 (test/reference/multiplicity.json).
  const ref = (JSON.parse(readFileSync(new URL('../reference/multiplicity.json', import.meta.url), 'utf8')) as { t2: Array<{ m: number; phaseOneUcl: number; phaseTwoUcl: number }> }).t2;
  const at = (m: number) => ref.find((r) => r.m === m)!;
  const distances = [5, 9, 15];
  const rng = createRng(2718);
  const PLANTED = [4, 13, 22];
  const curves: HeatCurve[] = Array.from({ length: 40 }, (_, i) => {
    // Curves move together (one common factor, like chemistry) plus independent scatter.
    const a = rng.normal();
    const v = [40 + 2 * a + 0.5 * rng.normal(), 33 + 2 * a + 0.5 * rng.normal(), 28 + 1.5 * a + 0.5 * rng.normal()];
    // Gross outliers against the correlation: +4, −4, +4 HRC (many SDs of the scatter across the factor).
    if (PLANTED.includes(i)) { v[0] += 4; v[1] -= 4; v[2] += 4; }
    const day = String(1 + (i % 28)).padStart(2, '0');
    return {
      heatId: i + 1, heatNumber: `T-${String(i).padStart(2, '0')}`, mill: 'M', castDate: `2023-${i < 30 ? '01' : '03'}-${day}`, grainSize: 7,
      chemistry: {}, testId: i + 1, source: 'mill_certificate', lotNumber: null, readings: new Map(distances.map((d, j) => [d, v[j]])),
    } as HeatCurve;
  });
  const meta = { grade: 'G', mill: 'M', source: 'mill_certificate' as const, window: { from: null, to: null } };

  test('three planted outliers in a 30-heat baseline are excluded; the frozen F limit is on m − 3 = 27', () => {
    const chart = t2Chart(curves, distances, {
      curves: curves.slice(0, 30),
      origin: { type: 'frozen_baseline', baselineId: 1, window: { from: '2023-01-01', to: '2023-01-31' }, createdBy: 'test', createdAt: '2023-02-01', reason: 'test' },
      window: { from: '2023-01-01', to: '2023-01-31' },
    }, meta, { alpha: 0.0027 });
    expect(chart.limitsFrom).toMatchObject({ type: 'frozen_baseline', excludedHeats: PLANTED.map((i) => `T-${String(i).padStart(2, '0')}`), converged: true });
    const monitoring = chart.points.filter((pt) => pt.phase === 'monitoring');
    expect(monitoring).toHaveLength(10);
    for (const pt of monitoring) expect(pt.ucl).toBeCloseTo(at(27).phaseTwoUcl, 8);
    expect(Math.abs(at(27).phaseTwoUcl - at(30).phaseTwoUcl)).toBeGreaterThan(0.05); // m matters at this precision
    const retained = chart.points.filter((pt) => pt.phase === 'baseline' && !PLANTED.includes(pt.index));
    for (const pt of retained) expect(pt.ucl).toBeCloseTo(at(27).phaseOneUcl, 8);
    // Phase I identity on the 27 retained heats: mean T² = p(m − 1)/m (tr(S⁻¹(m − 1)S)/m).
    expect(retained.reduce((a, pt) => a + pt.plotted, 0) / 27).toBeCloseTo((3 * 26) / 27, 9);
    // The dropped heats are charted against the frozen estimate and F limit, and still signal.
    for (const i of PLANTED) {
      expect(chart.points[i].ucl).toBeCloseTo(at(27).phaseTwoUcl, 8);
      expect(chart.points[i].plotted).toBeGreaterThan(chart.points[i].ucl);
    }
  });

  test('phase I on the window excludes them too and says so', () => {
    const chart = t2Chart(curves, distances, null, meta, { alpha: 0.0027 });
    expect(chart.limitsFrom).toMatchObject({ type: 'phase_one_on_window', converged: true });
    expect((chart.limitsFrom as { excludedHeats: string[] }).excludedHeats).toEqual(expect.arrayContaining(PLANTED.map((i) => `T-${String(i).padStart(2, '0')}`)));
    const signalled = new Set(chart.signals.flatMap((sg) => sg.points));
    for (const i of PLANTED) expect(signalled.has(i)).toBe(true);
  });
});

describe('band trial', () => {
  test("counts equal a direct count over the same heats, and the current band's too", async () => {
    const proposed = BAND_8620H.map((p) => ({ distanceMm: p.at, label: `${p.at} mm`, minHrc: p.at === 9 ? 26 : p.min, maxHrc: p.at === 5 ? 41 : p.max }));
    const trial = await bandTrial(db.db, { grade: '8620H', points: proposed, from: '2021-01-01', to: '2022-12-31' });
    const curves = await loadSeriesCurves(db.db, { grade: '8620H', from: '2021-01-01', to: '2022-12-31' });
    for (const mill of trial.mills) {
      const own = curves.filter((c) => c.mill === mill.mill);
      const direct = (limits: typeof proposed) =>
        own.filter((c) => limits.some((p) => {
          // Whole-HRC limits: the reading rounded to whole HRC by ASTM E29 (half to even), the bands' default.
          const v = roundE29(c.readings.get(p.distanceMm)!, 0);
          return (p.minHrc !== null && v < p.minHrc) || (p.maxHrc !== null && v > p.maxHrc);
        })).map((c) => c.heatNumber);
      expect(mill.proposed.failing.map((f) => f.heatNumber).sort()).toEqual(direct(proposed).sort());
      expect(mill.proposed.heats).toBe(own.length);
      const current = BAND_8620H.map((p) => ({ distanceMm: p.at, label: '', minHrc: p.min, maxHrc: p.max }));
      expect(mill.current!.failingCount).toBe(direct(current).length);
      expect(mill.proposed.failingCount).toBeGreaterThanOrEqual(mill.current!.failingCount);
      // The suggested band is held by at least the chosen share, counted directly.
      const s = mill.suggestion!;
      const held = own.filter((c) => s.points.every((p) => {
        const v = c.readings.get(p.distanceMm)!;
        return (p.minHrc === null || v >= p.minHrc) && (p.maxHrc === null || v <= p.maxHrc);
      })).length;
      expect(held / own.length).toBeCloseTo(s.heldShare, 12);
      expect(s.heldShare).toBeGreaterThanOrEqual(0.95);
      // Tolerance limits (ISO 16269-6) fitted on the older two thirds also hold the newer third.
      expect(s.outOfSample!.fittedOn + s.outOfSample!.checkedOn).toBe(own.length);
      // CORRAN's planted shift from heat 61 of 90 falls in the newer third: the out-of-sample check shows
      // that a band fitted on the older heats would not have held; the stable mills hold it.
      if (mill.mill === 'CORRAN') expect(s.outOfSample!.heldShare).toBeLessThan(0.8);
      else expect(s.outOfSample!.heldShare).toBeGreaterThanOrEqual(0.9);
      // Whole-curve expected share from the joint distribution, never a capped sum: a share in [0, 1]
      // with bounds around it, near the observed share (these heats are drawn from a multivariate normal).
      const e = mill.proposed.expectedShare!;
      expect(e.lower).toBeLessThanOrEqual(e.share);
      expect(e.upper).toBeGreaterThanOrEqual(e.share);
      expect(Math.abs(e.share - mill.proposed.failingShare)).toBeLessThan(0.1);
    }
    expect(trial.total.proposed.failingCount).toBe(trial.mills.reduce((a, m) => a + m.proposed.failingCount, 0));
  });
});

describe('chemistry model and prediction', () => {
  let model: Awaited<ReturnType<typeof fitAndStoreModel>>;
  beforeAll(async () => {
    model = await fitAndStoreModel(db.db, { grade: '8620H', from: '2021-01-01', to: '2021-12-31', createdBy: 'test' });
  });

  test('the published predictor is scored on the same heats as the plant model', async () => {
    expect(model.version).toBe(1);
    expect(model.predictors).toEqual(['C', 'Mn', 'Si', 'Ni', 'Cr', 'Mo', 'grainSize']);
    const curves = await loadSeriesCurves(db.db, { grade: '8620H', from: '2021-01-01', to: '2021-12-31' });
    const heats = new Map(curves.map((c) => [c.heatId, c]));
    for (const fit of model.fits.distances) {
      // The published predictor answers at the quenched end and from 4/16 in (6.35 mm) on; between them it
      // has no value, so no heat is compared there.
      const answers = fit.distanceMm <= 1.6 || fit.distanceMm >= 6.35;
      expect(fit.comparison.heatIds).toEqual(answers ? fit.heatIds : []);
      if (!answers) {
        expect(fit.comparison.firstReason).toMatch(/6\.35 mm/);
        continue;
      }
      // Recomputed here from the published predictor, one heat at a time.
      const errors = fit.comparison.heatIds.map((id) => {
        const h = heats.get(id)!;
        const published = publishedAt(publishedCurve(h.chemistry, h.grainSize, [fit.distanceMm]), fit.distanceMm)!.hrc;
        return h.readings.get(fit.distanceMm)! - published;
      });
      expect(fit.comparison.publishedRmse).toBeCloseTo(Math.sqrt(errors.reduce((s, e) => s + e * e, 0) / errors.length), 10);
      // The known model is linear in these terms with σ = 1.2 HRC (plus 0.1 HRC rounding).
      expect(fit.rmse).toBeGreaterThan(1.0);
      expect(fit.rmse).toBeLessThan(1.45);
      expect(fit.cvRmse).toBeGreaterThan(fit.rmse * 0.98);
    }
    // True slope of Mo at 7 mm is 30 HRC per wt%: inside the fitted estimate ± 3 SE.
    const at7 = model.fits.distances.find((f) => f.distanceMm === 7)!.coefficients.find((c) => c.name === 'Mo')!;
    expect(Math.abs(at7.estimate - TRUE_SLOPES.Mo[3])).toBeLessThan(3 * at7.standardError);
  });

  test('95 % prediction intervals cover about 95 % of held-out heats; whole-band probability is calibrated', async () => {
    const rng = createRng(777);
    const band = { grade: '8620H', version: 1, effectiveFrom: '2020-01-01', status: 'active' as const, kind: 'standard' as const, points: BAND_8620H.map((p) => ({ mm: p.at, ...(p.min === null ? {} : { minHrc: p.min }), maxHrc: p.max })) };
    let covered = 0;
    let total = 0;
    let predictedInBand = 0;
    let observedInBand = 0;
    const heldOut = 300;
    for (let i = 0; i < heldOut; i++) {
      const heat = drawHeat(rng);
      const p = predictWithModel(model, { chemistry: heat.x, grainSize: heat.x.grainSize }, band, { draws: 4000, seed: i + 1 });
      p.points.forEach((pt) => {
        const j = DISTANCES_MM.indexOf(pt.distanceMm);
        total++;
        if (heat.hrc[j] >= pt.lower! && heat.hrc[j] <= pt.upper!) covered++;
      });
      predictedInBand += p.wholeBand!.probability;
      if (BAND_8620H.every((b, j) => (b.min === null || heat.hrc[j] >= b.min) && heat.hrc[j] <= b.max)) observedInBand++;
    }
    const coverage = covered / total;
    console.info(`measured coverage of 95 % prediction intervals on ${heldOut} held-out heats x 8 distances: ${(coverage * 100).toFixed(2)} %`);
    expect(coverage).toBeGreaterThan(0.93);
    expect(coverage).toBeLessThan(0.97);
    expect(Math.abs(predictedInBand / heldOut - observedInBand / heldOut)).toBeLessThan(0.04);
  });

  test('the published predictor is bias-corrected on the history: centre published + mean error, width t·s·√(1 + 1/n)', () => {
    // Synthetic history: 10 heats whose error (observed − published) at 7 and 9 mm is exactly 3 + 2·u_i,
    // u standardised to mean 0 and sample SD 1, so the bias is +3 and the sample SD (n − 1) is 2.
    const rng = createRng(31);
    const n = 10;
    const raw = Array.from({ length: n }, () => rng.normal());
    const mu = raw.reduce((a, b) => a + b, 0) / n;
    const sdRaw = Math.sqrt(raw.reduce((a, b) => a + (b - mu) ** 2, 0) / (n - 1));
    const u = raw.map((x) => (x - mu) / sdRaw);
    const distances = [7, 9];
    const history: HeatCurve[] = u.map((ui, i) => {
      const heat = drawHeat(rng);
      const pub = publishedCurve(heat.x, heat.x.grainSize, distances);
      return {
        heatId: i + 1, heatNumber: `S-${i}`, mill: 'M', castDate: '2023-01-01', grainSize: heat.x.grainSize, chemistry: heat.x,
        testId: i + 1, source: 'mill_certificate', lotNumber: null,
        readings: new Map(distances.map((d) => [d, publishedAt(pub, d)!.hrc + 3 + 2 * ui])),
      };
    });
    const errors = publishedErrors(history, distances);
    expect(errors.get(7)!.bias).toBeCloseTo(3, 10);
    expect(errors.get(7)!.sd).toBeCloseTo(2, 10);
    const input = drawHeat(rng).x;
    const published = publishedCurve(input, input.grainSize, distances);
    const band = { grade: 'G', version: 1, effectiveFrom: '2020-01-01', status: 'active' as const, kind: 'standard' as const, points: [{ mm: 9, minHrc: publishedAt(published, 9)!.hrc + 3 }] };
    const r = predictWithPublished({ chemistry: input, grainSize: input.grainSize }, band, distances, errors, 'test', { historyHeats: n });
    // Prediction interval for one new observation: x̄ ± t(0.975, n − 1)·s·√(1 + 1/n) (Hahn & Meeker 1991,
    // Statistical Intervals §4.6); t(0.975, 9) = 2.262157 from scipy (test/reference/multiplicity.json).
    const t975 = (JSON.parse(readFileSync(new URL('../reference/multiplicity.json', import.meta.url), 'utf8')) as { t975: Record<string, number> }).t975['9'];
    const half = t975 * 2 * Math.sqrt(1 + 1 / n);
    for (const d of distances) {
      const pt = r.points.find((p) => p.distanceMm === d)!;
      const centre = publishedAt(published, d)!.hrc + 3;
      expect(pt.raw.hrc).toBeCloseTo(centre, 10);
      expect(pt.raw.lower!).toBeCloseTo(centre - half, 8); // @stdlib t quantile agrees with scipy to ~1e-10
      expect(pt.raw.upper!).toBeCloseTo(centre + half, 8);
      expect(pt.df).toBe(n - 1);
    }
    // Band minimum at the corrected centre: the t is symmetric, so P(meeting it) = 0.5 exactly.
    expect(r.points.find((p) => p.distanceMm === 9)!.probabilityInBand).toBeCloseTo(0.5, 12);
    expect(r.answeredBy).toMatchObject({ type: 'published_predictor', biasCorrection: { heats: n } });
    expect(r.notes.join(' ')).toMatch(/bias-corrected on the plant's history \(10 heat\(s\)/);
    // With fewer than 5 heats no interval is given (and no correction applied).
    const few = predictWithPublished({ chemistry: input, grainSize: input.grainSize }, null, distances, publishedErrors(history.slice(0, 4), distances), 'test');
    expect(few.points.every((p) => p.lower === null && Math.abs(p.raw.hrc - publishedAt(published, p.distanceMm)!.hrc) < 1e-12)).toBe(true);
  });

  test('trainedBefore prefers a model whose training window ends before the date, else says the residuals are in-sample', async () => {
    const chemistry = { C: 0.2, Mn: 0.8, Si: 0.25, Ni: 0.55, Cr: 0.5, Mo: 0.2 };
    const after = await predictCurve(db.db, { grade: '8620H', mill: 'ANVIL', chemistry, grainSize: 7, trainedBefore: '2022-03-01' });
    expect(after.answeredBy).toMatchObject({ type: 'plant_model', modelId: model.id });
    expect(after.notes.join(' ')).not.toMatch(/in-sample/);
    const inside = await predictCurve(db.db, { grade: '8620H', mill: 'ANVIL', chemistry, grainSize: 7, trainedBefore: '2021-06-01' });
    expect(inside.answeredBy).toMatchObject({ type: 'plant_model', modelId: model.id });
    expect(inside.notes.join(' ')).toMatch(/in-sample/);
  });

  test('whole-band Monte Carlo: independent points give the product of normal probabilities; identical ones the single one', () => {
    const mean = [40, 30, 25];
    const sd = [2, 1.5, 1];
    const limits = [{ min: 37, max: 43 }, { min: 28, max: null }, { min: null, max: 26 }];
    const exact = normalCdf(1.5) - normalCdf(-1.5);
    const product = exact * (1 - normalCdf(-2 / 1.5)) * normalCdf(1);
    const indep = wholeBandProbability(mean, sd, [[1, 0, 0], [0, 1, 0], [0, 0, 1]], limits, { draws: 40000, seed: 5 });
    // Φ from @stdlib; independence makes the joint probability the product (definition of independence).
    expect(Math.abs(indep.probability - product)).toBeLessThan(4 * indep.standardError);
    const same = wholeBandProbability([0, 0], [1, 1], [[1, 1], [1, 1]], [{ min: -1, max: 1 }, { min: -1, max: 1 }], { draws: 40000, seed: 6 });
    expect(Math.abs(same.probability - (normalCdf(1) - normalCdf(-1)))).toBeLessThan(4 * same.standardError);
  });
});
