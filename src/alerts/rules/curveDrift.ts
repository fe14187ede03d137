// Rules "curve_level_shift" and "curve_shape_change": the curve-level drift scheme of each mill × grade
// (× test source) touched by the ingest (src/analysis/curveMonitor.ts over src/stats/curveScheme.ts;
// docs/monitoring.md). Level: EWMA of the mean standardised deviation of the curve beyond its designed
// limit (Lowry et al. 1992; Roberts 1959), with the side in the cause key. Shape: T² of the rest of the
// standardised curve above its phase II limit (Tracy, Young & Mason 1992). Limits are designed for one
// false alarm per series in `curve.yearsPerFalseAlarm` years at the series' heat rate, widened for the
// size of the reference (Gandy & Kvaløy 2013).
// The reference is fixed (a frozen baseline, else the series' first `curve.referenceHeats` complete
// curves) and the scheme runs over every heat after it, so the alerts do not depend on how the heats
// were batched; a history loaded in one import is evaluated in time order and raises what heat-by-heat
// arrival would have, marked as found on loading history.
// Only a signal at a heat this ingest wrote raises an alert. Signals are grouped into episodes
// (curveMonitor.ts episodesOf: a level episode ends when the EWMA is back inside half its limit); cause
// key: rule (+ side) + mill + grade + source + the heat that began the episode, so one drift is one
// alert, and a later drift is a new one even while an earlier alert is still open. Severity: warning
// (our judgement).
// The evidence names the distances that drive the signal (per-distance EWMA of the standardised
// deviations for a level shift; the largest departures from the curve's own level for a shape change).
import type { Executor } from '../../db/connection.ts';
import type { ApplyResult } from '../../db/certificateStore.ts';
import type { SeriesSource } from '../../db/series.ts';
import { raiseAlert, type RaiseAlertInput } from '../../db/alerts.ts';
import { curveSeriesOf, type CurveSeries } from '../../analysis/curveSeries.ts';
import { findingsOf, type CurveFinding } from '../../analysis/curveMonitor.ts';
import { explainLevel, explainShape } from '../../analysis/curveExplain.ts';
import { DEFAULT_ALERT_SETTINGS, type AlertRuleSettings } from './settings.ts';
import { ingestScope, lotOf, newHeatsOfSource, type SeriesGroup } from './ingestScope.ts';
import { loadCurves } from '../../db/series.ts';
import { monitoringSettingsFor } from '../../analysis/monitoringSettings.ts';

export const CURVE_LEVEL_RULE = 'curve_level_shift';
export const CURVE_SHAPE_RULE = 'curve_shape_change';

/** An import that brings at least this many heats of a series is treated as a history load. */
export const HISTORY_LOAD_HEATS = 50;

const round = (x: number, n = 2) => Number(x.toFixed(n));

function alertOf(group: SeriesGroup, source: SeriesSource, series: CurveSeries, finding: CurveFinding, freshCount: number): RaiseAlertInput {
  const m = series.monitoring;
  const first = finding.onset;
  const level = finding.cause !== 'shape';
  const side = finding.cause === 'level:high' ? 'high' : 'low';
  const rule = level ? CURVE_LEVEL_RULE : CURVE_SHAPE_RULE;
  const referenceHeatIds = new Set(m.referenceHeats.map((h) => h.heatId));
  const fresh = newHeatsOfSource(group, source);
  const historyLoad = freshCount >= HISTORY_LOAD_HEATS || [...fresh].some((id) => referenceHeatIds.has(id));
  const explanation = level ? explainLevel(series, first.heatId) : explainShape(series, first.heatId);
  const drivers = explanation.slice(0, 4).map((d) => d.label).join(', ');
  const ref = m.origin?.type === 'frozen_baseline' ? `frozen baseline ${m.origin.baselineId} (${m.origin.window.from} to ${m.origin.window.to})` : `the first ${m.referenceHeats.length} complete curves of the series`;
  const what = level
    ? `curve ${side === 'high' ? 'harder' : 'softer'} than its reference as a whole (level EWMA ${round(first.point.ewma)} beyond ±${round(first.point.limit)})`
    : `curve shape changed (shape T² ${round(first.point.t2 ?? 0, 1)} > ${round(first.point.t2Ucl ?? 0, 1)})`;
  const more = finding.heats.filter((h) => h.heatId !== first.heatId).length;
  const moreText = more ? ` (${more} more heat(s) of this import signal)` : '';
  return {
    rule,
    severity: 'warning',
    causeKey: `${rule}${level ? `:${side}` : ''}:mill:${group.millId}:grade:${group.gradeId}:source:${source}:from:${first.heatNumber}`,
    title: `${historyLoad ? 'On loading history: ' : ''}${group.mill} ${group.grade}: ${what} from heat ${first.heatNumber}${moreText}, driven by ${drivers}`,
    millId: group.millId,
    gradeId: group.gradeId,
    heatId: first.heatId,
    lotId: lotOf(group, first.heatId),
    distanceMm: explanation[0]?.distanceMm ?? null,
    evidence: {
      summary:
        `${what} on the ${source.replace('_', ' ')} series of ${group.mill} ${group.grade}; the episode began at heat ${first.heatNumber} cast ${first.castDate}` +
        `, ${finding.heats.length} heat(s) of this import signal in it. Reference: ${ref}. ${m.statements.join(' ')}` +
        (historyLoad ? ' Found on loading history: the heats were evaluated in time order, and heat-by-heat arrival would have raised this alert at that heat.' : ''),
      foundOnLoadingHistory: historyLoad,
      series: { mill: group.mill, grade: group.grade, source },
      heats: finding.heats.slice(0, 20).map((h) => h.heatNumber),
      firstHeat: { heatNumber: first.heatNumber, castDate: first.castDate, levelEwma: round(first.point.ewma, 4), levelLimit: round(first.point.limit, 4), t2: first.point.t2 === null ? null : round(first.point.t2, 3), t2Ucl: first.point.t2Ucl === null ? null : round(first.point.t2Ucl, 3) },
      distancesMm: series.distancesMm,
      driving: explanation.slice(0, 6),
      reference: {
        origin: m.origin,
        heats: m.referenceHeats.length,
        excludedHeats: m.excludedHeats,
        heatsPerYear: m.heatsPerYear === null ? null : round(m.heatsPerYear, 1),
        lag1Autocorrelation: m.reference ? round(m.reference.location.lag1, 3) : null,
        autocorrelationTreated: m.reference?.location.treated ?? false,
        levelL: m.reference ? round(m.reference.location.design.L, 3) : null,
        shapeUcl: m.reference?.shape ? round(m.reference.shape.ucl, 3) : null,
        arl: m.reference?.arl ?? null,
      },
    },
  };
}

/** The curve-level drift rule with the given settings. */
export function curveDriftRule(settings: AlertRuleSettings = DEFAULT_ALERT_SETTINGS) {
  return async function curveDrift(tx: Executor, written: ApplyResult): Promise<void> {
    const scope = await ingestScope(tx, written, settings.historyDays);
    for (const group of scope.groups) {
      // The grade's stored monitoring configuration over these settings (the pages use the same).
      const own = await monitoringSettingsFor(tx, group.grade, settings);
      if (!own.curve.enabled) continue;
      for (const source of own.sources) {
        const fresh = newHeatsOfSource(group, source);
        if (fresh.size === 0) continue;
        // The whole series (not the history window of the scope): the statistic at a heat depends on every heat since the reference.
        const curves = await loadCurves(tx, { grade: group.grade, mill: group.mill, source });
        const series = curveSeriesOf(curves, { grade: group.grade, mill: group.mill, source }, group.bands, group.baselines.get(source) ?? [], own);
        if (series.monitoring.status !== 'monitoring') continue;
        for (const finding of findingsOf(series.monitoring, (id) => fresh.has(id))) {
          await raiseAlert(tx, alertOf(group, source, series, finding, fresh.size));
        }
      }
    }
  };
}
