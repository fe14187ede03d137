// Rules on the certificates and tests an ingest wrote (src/hardenability/checks), one alert per check and
// heat (cause key "<rule>:heat:<id>"):
//  - "copied_certificate" (critical): a new mill certificate reports exactly the chemistry (and, with
//    copies.needs = 'curve_or_chemistry', or exactly the curve) of another heat of the same mill and grade
//    cast within `copies.windowDays` (findPossibleCopies; "exact" = every common value identical). When
//    both heats are new in the same ingest, the later one (cast date, then heat number) carries the alert.
//  - "impossible_j1" (critical): a reading of a new test harder than fully martensitic steel of the heat's
//    carbon allows, by more than `martensite.failAboveHrc` over the ASTM A255 initial hardness (checkMartensiteCeiling).
//  - "inconsistent_with_chemistry" (warning): a new test (any source) whose standardised residual against
//    the curve predicted from the heat's chemistry exceeds `prediction.failZ` in absolute value at
//    `prediction.minDistances` or more distances (checkAgainstPrediction). The prediction is the newest
//    plant model of the mill (else of the grade) with its predictive SD (Montgomery, Peck & Vining §3.5);
//    without one, the published predictor (A255 quenched end, Just 1969 from 4/16 in) corrected by its mean error on the
//    series' own history, with the SD of that error (at least `reference.minHeats` heats per distance,
//    up to `reference.maxHeats` heats before the first new one).
import type { Executor } from '../../db/connection.ts';
import type { ApplyResult } from '../../db/certificateStore.ts';
import type { HeatCurve } from '../../db/series.ts';
import { latestModel } from '../../db/models.ts';
import { raiseAlert, type RaiseAlertInput, type WrittenTest } from '../../db/alerts.ts';
import { labelFor } from '../../analysis/bandOf.ts';
import { groupByHeat } from '../../analysis/seriesData.ts';
import { predictWithModel } from '../../analysis/prediction.ts';
import { publishedAt, publishedCurve } from '../../analysis/publishedPredictor.ts';
import type { StoredModel } from '../../analysis/chemistryModel.ts';
import { findPossibleCopies, type HeatRecord } from '../../hardenability/checks/copies.ts';
import { checkMartensiteCeiling } from '../../hardenability/checks/martensiteCeiling.ts';
import { checkAgainstPrediction, type PredictionPoint, type ResidualRow } from '../../hardenability/checks/prediction.ts';
import type { Band } from '../../hardenability/bands.ts';
import type { Chemistry } from '../../hardenability/types.ts';
import { DEFAULT_ALERT_SETTINGS, type AlertRuleSettings } from './settings.ts';
import { addDays, bandOnDate, curvesOfSource, ingestScope, newHeatsOfSource, type SeriesGroup } from './ingestScope.ts';
import { newestNewCastDate } from './controlSignals.ts';

export const COPIED_CERTIFICATE_RULE = 'copied_certificate';
export const IMPOSSIBLE_J1_RULE = 'impossible_j1';
export const INCONSISTENT_RULE = 'inconsistent_with_chemistry';

const SOURCE_TEXT: Record<WrittenTest['source'], string> = {
  mill_certificate: 'mill certificate',
  receiving_inspection: 'receiving test',
  outside_lab: 'outside-lab test',
};

const readingsOf = (c: HeatCurve) => [...c.readings].map(([mm, hrc]) => ({ mm, hrc }));
const later = (a: HeatCurve, b: HeatCurve) => a.castDate > b.castDate || (a.castDate === b.castDate && a.heatNumber > b.heatNumber);

const same = (a: number | undefined, b: number | undefined) => a === undefined || b === undefined || Math.abs(a - b) <= 1e-12;

/**
 * Candidates that could be an exact copy at all (a necessary condition of an exact match in
 * findPossibleCopies, which alone raises an alert), so that the full comparison runs on a handful.
 */
function mayBeExact(target: HeatCurve, other: HeatCurve, needs: AlertRuleSettings['certificate']['copies']['needs']): boolean {
  const chemistryPossible = same(target.chemistry.C, other.chemistry.C) && same(target.chemistry.Mn, other.chemistry.Mn);
  if (chemistryPossible || needs === 'chemistry') return chemistryPossible;
  const [firstMm, firstHrc] = target.readings.entries().next().value ?? [NaN, NaN];
  return same(firstHrc, other.readings.get(firstMm));
}

function copyAlerts(group: SeriesGroup, settings: AlertRuleSettings): RaiseAlertInput[] {
  const certificates = groupByHeat(curvesOfSource(group, 'mill_certificate')).map((g) => g[0]);
  const fresh = newHeatsOfSource(group, 'mill_certificate');
  const byId = new Map(certificates.map((c) => [c.heatId, c]));
  const days = settings.certificate.copies.windowDays;
  const out: RaiseAlertInput[] = [];
  for (const target of certificates) {
    if (!fresh.has(target.heatId)) continue;
    const from = addDays(target.castDate, -days);
    const to = addDays(target.castDate, days);
    const pool = certificates.filter((c) => c.heatId !== target.heatId && c.castDate >= from && c.castDate <= to && mayBeExact(target, c, settings.certificate.copies.needs));
    const record = (c: HeatCurve): HeatRecord => ({ heatId: String(c.heatId), millId: c.mill, readings: readingsOf(c), chemistry: c.chemistry as Chemistry });
    const check = findPossibleCopies(record(target), pool.map(record));
    if (check.verdict === 'pass') continue;
    const exact = check.values.matches.filter((m) => m.kind.endsWith('_exact'));
    const counted = exact.filter((m) => settings.certificate.copies.needs === 'curve_or_chemistry' || m.kind === 'chemistry_exact');
    const partners = [...new Set(counted.map((m) => Number(m.otherHeatId)))].map((id) => byId.get(id)!);
    if (partners.length === 0) continue;
    // Both new in this ingest and the partner cast later: the partner carries the alert.
    if (partners.every((p) => fresh.has(p.heatId) && later(p, target))) continue;
    const first = partners[0];
    const kinds = (id: number) => exact.filter((m) => Number(m.otherHeatId) === id).map((m) => (m.kind === 'curve_exact' ? 'curve' : 'chemistry'));
    out.push({
      rule: COPIED_CERTIFICATE_RULE,
      severity: 'critical',
      causeKey: `${COPIED_CERTIFICATE_RULE}:heat:${target.heatId}`,
      title: `Heat ${target.heatNumber} (${group.mill}, ${group.grade}) reports the same ${kinds(first.heatId).join(' and ')} as heat ${first.heatNumber}${partners.length > 1 ? ` and ${partners.length - 1} other heat(s)` : ''}`,
      millId: group.millId,
      gradeId: group.gradeId,
      heatId: target.heatId,
      lotId: null,
      distanceMm: null,
      evidence: {
        summary:
          `The mill certificate of heat ${target.heatNumber} (cast ${target.castDate}) repeats, value for value, ` +
          partners.map((p) => `the ${kinds(p.heatId).join(' and ')} of heat ${p.heatNumber} (cast ${p.castDate})`).join('; ') +
          `. Two heats made apart rarely agree to the last digit: ask the mill for the test records.`,
        check: { name: check.check, verdict: check.verdict, threshold: check.threshold, candidatesCompared: check.values.candidatesCompared, windowDays: days },
        heat: { heatNumber: target.heatNumber, castDate: target.castDate, chemistry: target.chemistry, readings: readingsOf(target) },
        matches: exact.map((m) => {
          const p = byId.get(Number(m.otherHeatId))!;
          return { heatNumber: p.heatNumber, castDate: p.castDate, kind: m.kind, compared: m.compared, largestDifference: m.largestDifference };
        }),
      },
    });
  }
  return out;
}

function martensiteAlert(group: SeriesGroup, test: WrittenTest, heat: HeatCurve, lotNumber: string | null, settings: AlertRuleSettings): RaiseAlertInput | null {
  const carbon = heat.chemistry.C;
  if (carbon === undefined) return null;
  const check = checkMartensiteCeiling(test.readings, carbon, { failAboveHrc: settings.certificate.martensite.failAboveHrc });
  if (check.verdict !== 'fail') return null;
  const v = check.values;
  return {
    rule: IMPOSSIBLE_J1_RULE,
    severity: 'critical',
    causeKey: `${IMPOSSIBLE_J1_RULE}:heat:${test.heatId}`,
    title: `Heat ${test.heatNumber} (${group.mill}, ${group.grade}): ${SOURCE_TEXT[test.source]}${lotNumber ? ` of lot ${lotNumber}` : ''} reads ${v.hardestHrc} HRC at ${v.hardestMm} mm, ${v.excess!.toFixed(1)} HRC above fully martensitic steel of ${carbon} % C`,
    millId: group.millId,
    gradeId: group.gradeId,
    heatId: test.heatId,
    lotId: test.lotId,
    distanceMm: v.hardestMm,
    evidence: {
      summary: `${check.summary} No quench makes steel harder than martensite of its carbon: the reading or the carbon is wrong.`,
      check: { name: check.check, verdict: check.verdict, threshold: check.threshold },
      test: { id: test.testId, source: test.source, lotNumber, testDate: test.testDate },
      values: v,
    },
  };
}

/** Mean error (bias) and its SD of the published predictor per distance on a history (pure). */
export function calibratePublished(history: readonly HeatCurve[], distancesMm: readonly number[], minHeats: number): Map<number, { n: number; bias: number; sd: number }> {
  const errors = new Map<number, number[]>(distancesMm.map((d) => [d, []]));
  for (const h of history) {
    const pub = publishedCurve(h.chemistry as Chemistry, h.grainSize, distancesMm);
    for (const d of distancesMm) {
      const observed = h.readings.get(d);
      const v = publishedAt(pub, d);
      if (observed !== undefined && v) errors.get(d)!.push(observed - v.hrc);
    }
  }
  const out = new Map<number, { n: number; bias: number; sd: number }>();
  for (const [d, e] of errors) {
    if (e.length < Math.max(minHeats, 3)) continue;
    const bias = e.reduce((a, b) => a + b, 0) / e.length;
    const sd = Math.sqrt(e.reduce((s, x) => s + (x - bias) ** 2, 0) / (e.length - 1));
    if (sd > 0) out.set(d, { n: e.length, bias, sd });
  }
  return out;
}

type Predictor =
  | { type: 'plant_model'; model: StoredModel }
  | { type: 'published_calibrated'; errors: Map<number, { n: number; bias: number; sd: number }>; historyHeats: number };

function predictionFor(predictor: Predictor, heat: HeatCurve, distancesMm: readonly number[]): PredictionPoint[] {
  if (predictor.type === 'plant_model') {
    try {
      // No band: the whole-band probability (a Monte Carlo) is not needed here.
      const p = predictWithModel(predictor.model, { chemistry: heat.chemistry as Chemistry, grainSize: heat.grainSize }, null);
      return p.points.filter((x) => x.sd !== null).map((x) => ({ mm: x.distanceMm, mean: x.raw.hrc, sd: x.sd! }));
    } catch {
      return [];
    }
  }
  const pub = publishedCurve(heat.chemistry as Chemistry, heat.grainSize, distancesMm);
  const points: PredictionPoint[] = [];
  for (const [d, e] of predictor.errors) {
    const v = publishedAt(pub, d);
    if (v) points.push({ mm: d, mean: v.hrc + e.bias, sd: e.sd });
  }
  return points;
}

function inconsistentAlert(
  group: SeriesGroup,
  test: WrittenTest,
  lotNumber: string | null,
  predictor: Predictor,
  prediction: PredictionPoint[],
  band: Band | null,
  settings: AlertRuleSettings,
): RaiseAlertInput | null {
  if (prediction.length === 0) return null;
  const { failZ, minDistances } = settings.certificate.prediction;
  const check = checkAgainstPrediction(test.readings, prediction, { warnZ: failZ, failZ });
  const beyond = check.values.rows.filter((r) => Math.abs(r.z) > failZ);
  if (beyond.length < minDistances) return null;
  const worst = beyond.reduce((a, b) => (Math.abs(b.z) > Math.abs(a.z) ? b : a));
  const text = (r: ResidualRow) => `${labelFor(band, r.mm)} ${r.reported} HRC against ${r.predicted.toFixed(1)} ± ${r.sd.toFixed(1)} (z ${r.z.toFixed(1)})`;
  const by =
    predictor.type === 'plant_model'
      ? { type: predictor.type, modelId: predictor.model.id, version: predictor.model.version, mill: predictor.model.mill, trainedFrom: predictor.model.trainedFrom, trainedTo: predictor.model.trainedTo }
      : { type: predictor.type, method: 'published predictor (ASTM A255 quenched end, Just (1969) from 4/16 in, capped at IH(C)), corrected by its mean error on the series', historyHeats: predictor.historyHeats };
  return {
    rule: INCONSISTENT_RULE,
    severity: 'warning',
    causeKey: `${INCONSISTENT_RULE}:heat:${test.heatId}`,
    title: `Heat ${test.heatNumber} (${group.mill}, ${group.grade}): ${SOURCE_TEXT[test.source]}${lotNumber ? ` of lot ${lotNumber}` : ''} is inconsistent with its chemistry at ${beyond.length} distance(s), worst ${text(worst)}`,
    millId: group.millId,
    gradeId: group.gradeId,
    heatId: test.heatId,
    lotId: test.lotId,
    distanceMm: worst.mm,
    evidence: {
      summary:
        `${beyond.length} of ${check.values.rows.length} readings are more than ${failZ} predictive SDs from the curve the chemistry predicts: ` +
        `${beyond.map(text).join('; ')}. Either the test or the chemistry on the certificate is doubtful.`,
      check: { name: check.check, threshold: { failZ, minDistances }, sumZ2: check.values.sumZ2, pValue: check.values.pValue },
      predictedBy: by,
      test: { id: test.testId, source: test.source, lotNumber, testDate: test.testDate },
      rows: check.values.rows.map((r) => ({ label: labelFor(band, r.mm), distanceMm: r.mm, reported: r.reported, predicted: Number(r.predicted.toFixed(2)), sd: Number(r.sd.toFixed(3)), z: Number(r.z.toFixed(2)) })),
    },
  };
}

async function predictorOf(tx: Executor, group: SeriesGroup, distancesMm: readonly number[], settings: AlertRuleSettings): Promise<Predictor | null> {
  const model = ((await latestModel(tx, group.grade, group.mill)) ?? (await latestModel(tx, group.grade, null))) as StoredModel | null;
  if (model) return { type: 'plant_model', model };
  const fresh = newHeatsOfSource(group, 'both');
  const heats = groupByHeat(curvesOfSource(group, 'mill_certificate')).map((g) => g[0]);
  const first = heats.findIndex((h) => fresh.has(h.heatId));
  const history = heats.slice(Math.max(0, (first < 0 ? heats.length : first) - settings.reference.maxHeats), first < 0 ? heats.length : first).filter((h) => !fresh.has(h.heatId));
  const errors = calibratePublished(history, distancesMm, settings.reference.minHeats);
  return errors.size ? { type: 'published_calibrated', errors, historyHeats: history.length } : null;
}

/** The certificate-check rule with the given settings. */
export function certificateChecksRule(settings: AlertRuleSettings = DEFAULT_ALERT_SETTINGS) {
  const c = settings.certificate;
  return async function certificateChecks(tx: Executor, written: ApplyResult): Promise<void> {
    if (!c.copies.enabled && !c.martensite.enabled && !c.prediction.enabled) return;
    const scope = await ingestScope(tx, written, settings.historyDays);
    for (const group of scope.groups) {
      const heats = new Map(group.curves.map((h) => [h.heatId, h]));
      const lotNumbers = new Map(group.curves.map((h) => [h.testId, h.lotNumber]));
      const band = bandOnDate(group.bands, newestNewCastDate(group));
      const alerts: RaiseAlertInput[] = [];
      if (c.copies.enabled) alerts.push(...copyAlerts(group, settings));
      if (c.martensite.enabled) {
        for (const t of group.newTests) {
          const heat = heats.get(t.heatId);
          const a = heat && martensiteAlert(group, t, heat, lotNumbers.get(t.testId) ?? null, settings);
          if (a) alerts.push(a);
        }
      }
      if (c.prediction.enabled) {
        const distances = [...new Set(group.newTests.flatMap((t) => t.readings.map((r) => r.mm)))].sort((a, b) => a - b);
        const predictor = await predictorOf(tx, group, distances, settings);
        if (predictor) {
          for (const t of group.newTests) {
            const heat = heats.get(t.heatId);
            if (!heat) continue;
            const a = inconsistentAlert(group, t, lotNumbers.get(t.testId) ?? null, predictor, predictionFor(predictor, heat, distances), band, settings);
            if (a) alerts.push(a);
          }
        }
      }
      for (const a of alerts) await raiseAlert(tx, a);
    }
  };
}
