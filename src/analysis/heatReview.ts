// The heat sheet behind GET /heats/{id}/review: band conformance of every test (band in force on the cast
// date; src/hardenability/conformance.ts), the certificate checks with their evidence
// (src/hardenability/checks), the predicted curve beside the reported one (prediction.ts), and the chart
// signals this heat raised on its mill's series (individuals with Nelson rules, EWMA, CUSUM; controlCharts.ts)
// over the two years of history up to and including it. Copies are looked for among the same mill's
// heats of the grade cast within a year either side.
import { curveFigures, type CurveFigures } from '../hardenability/curveFigures.ts';
import type { Db } from '../db/connection.ts';
import { getHeat, type HeatDetail } from '../db/heats.ts';
import { findGrade } from '../db/referenceData.ts';
import { activeBaseline } from '../db/baselines.ts';
import { heatConformance, testConformance, type TestConformance } from '../hardenability/conformance.ts';
import { checkCurveNonIncreasing } from '../hardenability/checks/curveShape.ts';
import { checkMartensiteCeiling } from '../hardenability/checks/martensiteCeiling.ts';
import { checkChemistryLimits, type ChemistryLimits } from '../hardenability/checks/chemistryLimits.ts';
import { checkAgainstPrediction } from '../hardenability/checks/prediction.ts';
import { findPossibleCopies } from '../hardenability/checks/copies.ts';
import type { CheckEvidence, Chemistry, EndQuenchTest, TestSource } from '../hardenability/types.ts';
import { bandOn, bandSummary, labelFor, type BandSummary } from './bandOf.ts';
import { baselineReference, phaseOneReference, univariateChart, type ChartKind, type LimitsOrigin } from './controlCharts.ts';
import { AnalysisError, notFound } from './errors.ts';
import { alertChartParameters, monitoringSettingsFor } from './monitoringSettings.ts';
import { curveSeries } from './curveSeries.ts';
import { episodesOf } from './curveMonitor.ts';
import { predictCurve, type CurvePrediction } from './prediction.ts';
import { groupByHeat, loadSeriesCurves, pointsAt } from './seriesData.ts';

export interface ReviewedTest {
  testId: number;
  source: string;
  lotNumber: string | null;
  certificateRevision: number | null;
  current: boolean;
  readings: Array<{ distanceMm: number; label: string; hrc: number; censored?: 'below' | 'above' | null }>;
  conformance: TestConformance | null;
  /** Distance at 40 HRC, distance of 50 % martensite and DI estimated from this curve (curveFigures.ts). */
  figures: CurveFigures | null;
}

export interface HeatSignal {
  /** 'curve': the curve-level scheme the drift alerts run (docs/monitoring.md); the others per distance. */
  kind: Exclude<ChartKind, 't2'> | 'curve';
  /** Null for a curve-level signal (the whole curve). */
  distanceMm: number | null;
  label: string;
  rule: string;
  description: string;
  limitsFrom: LimitsOrigin['type'] | 'first_heats';
}

/** The curve-level scheme at this heat (the one the drift alerts run). */
export interface HeatCurveMonitoring {
  status: 'monitoring' | 'collecting_reference' | 'refused' | 'in_reference' | 'incomplete_curve';
  reason: string | null;
  level: { ewma: number; limit: number; signal: 'high' | 'low' | null } | null;
  shape: { t2: number; ucl: number; signal: boolean } | null;
  /** The heat that began the signal episode this heat belongs to (it may be earlier). */
  episodeFrom: string | null;
  lag1Autocorrelation: number | null;
  statements: string[];
}

export interface HeatReview {
  heat: Pick<HeatDetail, 'id' | 'mill' | 'grade' | 'heatNumber' | 'castDate' | 'revision' | 'certificateNumber' | 'grainSize' | 'grainSizeStated' | 'chemistry'>;
  band: BandSummary | null;
  verdict: { verdict: string; explanation: string; disagreement: boolean } | null;
  tests: ReviewedTest[];
  checks: Array<CheckEvidence & { testId?: number }>;
  prediction: CurvePrediction | null;
  predictionProblem: string | null;
  signals: HeatSignal[];
  curveMonitoring: HeatCurveMonitoring;
  notes: string[];
}

export function addDays(iso: string, days: number): string {
  const d = new Date(`${iso}T00:00:00Z`);
  d.setUTCDate(d.getUTCDate() + days);
  return d.toISOString().slice(0, 10);
}

const toTest = (t: HeatDetail['tests'][number], castDate: string): EndQuenchTest => ({
  id: String(t.id),
  source: t.source as TestSource,
  testDate: t.testDate ?? castDate,
  readings: t.readings.map((r) => ({ mm: r.distanceMm, hrc: r.hrc, label: r.label, ...(r.censored ? { censored: r.censored } : {}) })),
});

export async function heatReview(db: Db, heatId: number): Promise<HeatReview> {
  const heat = await getHeat(db, heatId);
  if (!heat) throw notFound(`heat ${heatId} is not on file`);
  const notes: string[] = [];
  const band = await bandOn(db, heat.grade, heat.castDate);
  if (!band) notes.push(`no band of ${heat.grade} was in force on the cast date ${heat.castDate}: conformance not judged`);
  const current = heat.tests.filter((t) => t.current && t.readings.length);
  const tests: ReviewedTest[] = heat.tests.map((t) => {
    const test = toTest(t, heat.castDate);
    return {
      testId: t.id,
      source: t.source,
      lotNumber: t.lotNumber,
      certificateRevision: t.certificateRevision,
      current: t.current,
      readings: t.readings,
      conformance: band && t.readings.length ? testConformance(test, band) : null,
      figures: t.readings.some((r) => !r.censored) ? curveFigures(test.readings, (heat.chemistry as Chemistry).C) : null,
    };
  });
  const verdict = band && current.length ? heatConformance(current.map((t) => toTest(t, heat.castDate)), band) : null;

  const chemistry = heat.chemistry as Chemistry;
  const checks: HeatReview['checks'] = [];
  for (const t of current) {
    const readings = t.readings.map((r) => ({ mm: r.distanceMm, hrc: r.hrc }));
    checks.push({ ...checkCurveNonIncreasing(readings), testId: t.id });
    if (chemistry.C !== undefined) checks.push({ ...checkMartensiteCeiling(readings, chemistry.C), testId: t.id });
  }
  const grade = await findGrade(db, heat.grade);
  if (grade && grade.chemistryLimits.length) {
    const limits: ChemistryLimits = Object.fromEntries(
      grade.chemistryLimits.map((l) => [l.element, { ...(l.min === null ? {} : { min: l.min }), ...(l.max === null ? {} : { max: l.max }) }]),
    );
    checks.push(checkChemistryLimits(chemistry, limits));
  }

  let prediction: CurvePrediction | null = null;
  let predictionProblem: string | null = null;
  try {
    // Out of sample where possible: a model (or calibration history) that has seen this heat understates |z|.
    prediction = await predictCurve(db, { grade: heat.grade, mill: heat.mill, chemistry, grainSize: heat.grainSize, onDate: heat.castDate, trainedBefore: heat.castDate });
    const mean = prediction.points.filter((p) => p.sd !== null).map((p) => ({ mm: p.distanceMm, mean: p.hrc, sd: p.sd! }));
    const millTest = current.find((t) => t.source === 'mill_certificate') ?? current[0];
    if (millTest && mean.length) checks.push({ ...checkAgainstPrediction(millTest.readings.map((r) => ({ mm: r.distanceMm, hrc: r.hrc })), mean), testId: millTest.id });
  } catch (error) {
    predictionProblem = (error as Error).message;
  }

  const neighbours = await loadSeriesCurves(db, { grade: heat.grade, mill: heat.mill, from: addDays(heat.castDate, -365), to: addDays(heat.castDate, 365), source: 'mill_certificate' });
  const millTest = current.find((t) => t.source === 'mill_certificate');
  checks.push(
    findPossibleCopies(
      // Heat numbers (unique within a mill) name the heats, so the evidence reads as the certificates do.
      { heatId: heat.heatNumber, millId: heat.mill, readings: millTest?.readings.map((r) => ({ mm: r.distanceMm, hrc: r.hrc })), chemistry },
      groupByHeat(neighbours).map((g) => ({ heatId: g[0].heatNumber, millId: g[0].mill, readings: [...g[0].readings].map(([mm, hrc]) => ({ mm, hrc })), chemistry: g[0].chemistry as Chemistry })),
    ),
  );

  const signals: HeatSignal[] = [];
  // The mill's own series (certificate curves): it is the mill being judged; the plant's re-tests would
  // mix a lab difference into it. The charts and their parameters are those the alert rules run for the
  // grade (src/analysis/monitoringSettings.ts), so the heat sheet shows no signal the alerts would not raise.
  const settings = await monitoringSettingsFor(db, heat.grade);
  const kinds = [
    ...(settings.nelson.enabled && settings.nelson.rules.length ? (['individuals'] as const) : []),
    ...(settings.ewma.enabled ? (['ewma'] as const) : []),
    ...(settings.cusum.enabled ? (['cusum'] as const) : []),
  ];
  const history = await loadSeriesCurves(db, { grade: heat.grade, mill: heat.mill, from: addDays(heat.castDate, -730), to: heat.castDate, source: 'mill_certificate' });
  const distances = band?.points.map((p) => p.mm) ?? [];
  let tooShort = false;
  for (const d of distances) {
    const series = pointsAt(history, d);
    const index = series.findIndex((p) => p.heatId === heat.id);
    if (index < 0) continue;
    // The first heat of a series (or its only one in two years) has nothing to be compared with on a chart.
    if (series.length < 2) {
      tooShort = true;
      continue;
    }
    const stored = await activeBaseline(db, { grade: heat.grade, mill: heat.mill, source: 'mill_certificate', distanceMm: d });
    let reference;
    try {
      reference = stored ? baselineReference(stored) : phaseOneReference(series, { from: addDays(heat.castDate, -730), to: heat.castDate });
    } catch {
      continue;
    }
    const meta = { grade: heat.grade, mill: heat.mill, distanceMm: d, label: labelFor(band, d), source: 'mill_certificate' as const };
    for (const kind of kinds) {
      let chart;
      try {
        chart = univariateChart(kind, series, reference, meta, alertChartParameters(settings, kind));
      } catch (error) {
        if (error instanceof AnalysisError) continue;
        throw error;
      }
      for (const s of chart.signals) {
        if (s.points.includes(index)) signals.push({ kind, distanceMm: d, label: meta.label, rule: s.rule, description: s.description, limitsFrom: reference.origin.type });
      }
    }
  }
  const curveMonitoring = await curveAtHeat(db, heat, settings);
  for (const sig of curveSignals(curveMonitoring)) signals.unshift(sig);
  if (tooShort) notes.push('the first heat of this mill and grade in two years: no chart to compare it with yet');
  if (distances.length === 0) notes.push('no band distances: chart signals not evaluated');

  return {
    heat: {
      id: heat.id,
      mill: heat.mill,
      grade: heat.grade,
      heatNumber: heat.heatNumber,
      castDate: heat.castDate,
      revision: heat.revision,
      certificateNumber: heat.certificateNumber,
      grainSize: heat.grainSize,
      grainSizeStated: heat.grainSizeStated,
      chemistry: heat.chemistry,
    },
    band: band ? bandSummary(band) : null,
    verdict: verdict ? { verdict: verdict.verdict, explanation: verdict.explanation, disagreement: verdict.disagreement } : null,
    tests,
    checks,
    prediction,
    predictionProblem,
    signals,
    curveMonitoring,
    notes,
  };
}

const CURVE_WORDS = {
  curve_level_high: 'the curve as a whole is harder than its reference (level EWMA beyond its designed limit)',
  curve_level_low: 'the curve as a whole is softer than its reference (level EWMA beyond its designed limit)',
  curve_shape: 'the shape of the curve differs from its reference (shape T² above its designed limit)',
};

function curveSignals(c: HeatCurveMonitoring): HeatSignal[] {
  const out: HeatSignal[] = [];
  const base = { kind: 'curve' as const, distanceMm: null, label: 'whole curve', limitsFrom: 'first_heats' as const };
  if (c.level?.signal) {
    const rule = c.level.signal === 'high' ? 'curve_level_high' : 'curve_level_low';
    out.push({ ...base, rule, description: CURVE_WORDS[rule] });
  }
  if (c.shape?.signal) out.push({ ...base, rule: 'curve_shape', description: CURVE_WORDS.curve_shape });
  return out;
}

async function curveAtHeat(db: Db, heat: HeatDetail, settings: Awaited<ReturnType<typeof monitoringSettingsFor>>): Promise<HeatCurveMonitoring> {
  const series = await curveSeries(db, { grade: heat.grade, mill: heat.mill, source: 'mill_certificate' }, { settings });
  const m = series.monitoring;
  const base = { level: null, shape: null, episodeFrom: null, lag1Autocorrelation: m.reference ? m.reference.location.lag1 : null, statements: m.statements };
  if (!settings.curve.enabled) return { ...base, status: 'refused', reason: 'the curve-level drift scheme is switched off for this grade' };
  if (m.status !== 'monitoring') return { ...base, status: m.status, reason: m.reason };
  if (m.referenceHeats.some((h) => h.heatId === heat.id)) return { ...base, status: 'in_reference', reason: 'this heat is part of the reference the series is judged against' };
  const index = m.monitored.findIndex((h) => h.heatId === heat.id);
  if (index < 0) return { ...base, status: 'incomplete_curve', reason: 'the certificate curve lacks a reading at one of the monitored distances, or was cast before the reference' };
  const p = m.monitored[index].point;
  const episode = episodesOf(m).find((e) => e.signals.includes(index));
  return {
    ...base,
    status: 'monitoring',
    reason: null,
    level: { ewma: p.ewma, limit: p.limit, signal: p.level },
    shape: p.t2 === null || p.t2Ucl === null ? null : { t2: p.t2, ucl: p.t2Ucl, signal: p.shape },
    episodeFrom: episode ? m.monitored[episode.onset].heatNumber : null,
  };
}
