// Rule "t2_signal": Hotelling T² of the whole curve (one observation per heat over the band distances)
// of each mill x grade (x test source) touched by the ingest, beyond its upper limit at a heat this
// ingest wrote. Chart: src/analysis/controlCharts.ts t2Chart (phase I Beta limit of Tracy, Young & Mason
// 1992, J. Quality Technology 24:88-95; phase II F limit, NIST/SEMATECH e-Handbook §6.5.4.3.4).
// Off by default (the shape statistic of curveDrift.ts replaces it); switchable per grade.
// Reference: the curves of the newest frozen baseline window of the series when there is one; otherwise
// the series' first `reference.maxHeats` complete curves (kept; fewer while the series is younger) (at least
// max(reference.minHeats, 2p) of them for p distances: our floor, so S is not close to singular).
// Which distances drive a signal: the MYT decomposition (Mason, Tracy & Young 1995, J. Quality
// Technology 27:99-108). A distance is named when its unconditional term d_j²/s_jj exceeds
// ((m+1)/m)·F(1−α; 1, m−1), or its conditional term T² − T²(−j) (given the other p−1 distances) exceeds
// ((m+1)(m−1)/(m(m−p)))·F(1−α; 1, m−p), m the reference size (the limits of that paper for k = 0 and
// k = p−1 conditioning variables); when none does, the largest conditional term is named.
// Cause key: rule + mill + grade + source (one open alert per curve series). Severity: warning.
import type { Executor } from '../../db/connection.ts';
import type { ApplyResult } from '../../db/certificateStore.ts';
import { loadCurves, type HeatCurve, type SeriesSource } from '../../db/series.ts';
import { raiseAlert, type RaiseAlertInput } from '../../db/alerts.ts';
import { curveRows, t2Chart, type ControlChart, type LimitsOrigin } from '../../analysis/controlCharts.ts';
import { labelFor } from '../../analysis/bandOf.ts';
import { groupByHeat } from '../../analysis/seriesData.ts';
import { fQuantile } from '../../stats/distributions.ts';
import type { Band } from '../../hardenability/bands.ts';
import { DEFAULT_ALERT_SETTINGS, type AlertRuleSettings } from './settings.ts';
import { monitoringSettingsFor } from '../../analysis/monitoringSettings.ts';
import { bandOnDate, fixedReferenceWindow, curvesOfSource, ingestScope, lotOf, newHeatsOfSource, type SeriesGroup } from './ingestScope.ts';
import { chartDistances, newestNewCastDate } from './controlSignals.ts';

export const T2_RULE = 't2_signal';

export interface DrivingDistance {
  distanceMm: number;
  label: string;
  hrc: number;
  referenceMean: number;
  conditional: number;
  unconditional: number;
}

/** MYT limits for the unconditional and the fully conditional terms (see the header). */
export function mytLimits(m: number, p: number, alpha: number): { unconditional: number; conditional: number } {
  if (!(m > p)) throw new RangeError(`the MYT limits need more reference curves (${m}) than distances (${p})`);
  return {
    unconditional: ((m + 1) / m) * fQuantile(1 - alpha, 1, m - 1),
    conditional: (((m + 1) * (m - 1)) / (m * (m - p))) * fQuantile(1 - alpha, 1, m - p),
  };
}

/** Distances that drive one signal, strongest conditional term first (pure). */
export function drivingDistances(
  row: readonly number[],
  contribution: { conditional: readonly number[]; unconditional: readonly number[] },
  distancesMm: readonly number[],
  referenceMean: readonly number[],
  limits: { unconditional: number; conditional: number },
  band: Band | null,
): DrivingDistance[] {
  const all = distancesMm.map((d, j) => ({
    distanceMm: d,
    label: labelFor(band, d),
    hrc: row[j],
    referenceMean: referenceMean[j],
    conditional: contribution.conditional[j],
    unconditional: contribution.unconditional[j],
  }));
  all.sort((a, b) => b.conditional - a.conditional);
  const named = all.filter((x) => x.conditional > limits.conditional || x.unconditional > limits.unconditional);
  return named.length ? named : all.slice(0, 1);
}

const round = (x: number, n = 3) => Number(x.toFixed(n));

async function referenceOf(
  tx: Executor,
  group: SeriesGroup,
  source: SeriesSource,
  windowHeats: readonly HeatCurve[][],
): Promise<{ curves: HeatCurve[]; origin: LimitsOrigin; window: { from: string; to: string } } | null> {
  const newest = [...(group.baselines.get(source) ?? [])].sort((a, b) => b.id - a.id)[0];
  if (newest) {
    const window = { from: newest.windowFrom, to: newest.windowTo };
    const curves =
      newest.windowFrom >= group.historyFrom
        ? curvesOfSource(group, source).filter((c) => c.castDate >= window.from && c.castDate <= window.to)
        : await loadCurves(tx, { grade: group.grade, mill: group.mill, source, from: window.from, to: window.to });
    return {
      curves,
      origin: { type: 'frozen_baseline', baselineId: newest.id, window, createdBy: newest.createdBy, createdAt: newest.createdAt, reason: newest.reason },
      window,
    };
  }
  if (windowHeats.length === 0) return null;
  const window = { from: windowHeats[0][0].castDate, to: windowHeats[windowHeats.length - 1][0].castDate };
  return { curves: windowHeats.flat(), origin: { type: 'phase_one_on_window', window, excludedHeats: [], converged: true }, window };
}

/** The T² rule with the given settings. */
export function multivariateRule(base: AlertRuleSettings = DEFAULT_ALERT_SETTINGS) {
  return async function multivariate(tx: Executor, written: ApplyResult): Promise<void> {
    const scope = await ingestScope(tx, written, base.historyDays);
    for (const group of scope.groups) {
      // The grade's stored monitoring configuration over the base settings (the pages use the same).
      const settings = await monitoringSettingsFor(tx, group.grade, base);
      if (!settings.t2.enabled) continue;
      const band = bandOnDate(group.bands, newestNewCastDate(group));
      const distances = chartDistances(group, band);
      const p = distances.length;
      if (p < 2) continue;
      for (const source of settings.sources) {
        const fresh = newHeatsOfSource(group, source);
        if (fresh.size === 0) continue;
        // The whole series: its reference is its first complete curves, kept (not the heats before each import).
        const curves = await loadCurves(tx, { grade: group.grade, mill: group.mill, source });
        const byHeat = new Map(groupByHeat(curves).map((g) => [g[0].heatId, g]));
        const { rows } = curveRows(curves, distances);
        const window = fixedReferenceWindow(rows, (r) => fresh.has(r.heat.heatId), settings.reference.maxHeats);
        if (!window) continue;
        const leading = window.points.slice(0, window.referenceCount).map((r) => byHeat.get(r.heat.heatId)!);
        const reference = await referenceOf(tx, group, source, leading);
        if (!reference) continue;
        const refRows = curveRows(reference.curves, distances).rows;
        if (refRows.length < Math.max(settings.reference.minHeats, 2 * p)) continue;
        let chart: ControlChart;
        try {
          chart = t2Chart(
            window.points.flatMap((r) => byHeat.get(r.heat.heatId)!),
            distances,
            reference,
            { grade: group.grade, mill: group.mill, source, window: reference.window },
            { alpha: settings.t2.alpha },
          );
        } catch (error) {
          // A singular covariance (e.g. a distance reported constant) leaves the series without a T² chart.
          if (error instanceof Error && /singular|needs at least/i.test(error.message)) continue;
          throw error;
        }
        const signalled = chart.points.filter((pt) => pt.phase === 'monitoring' && pt.plotted > pt.ucl && fresh.has(pt.heatId));
        if (signalled.length === 0) continue;
        const m = refRows.length;
        const limits = mytLimits(m, p, settings.t2.alpha);
        const mean = distances.map((_, j) => refRows.reduce((s, r) => s + r.row[j], 0) / m);
        const rowOf = new Map(rows.map((r) => [r.heat.heatId, r.row]));
        const explained = signalled.map((pt) => {
          const c = chart.contributions!.find((x) => x.index === pt.index)!;
          return { point: pt, driving: drivingDistances(rowOf.get(pt.heatId)!, c, distances, mean, limits, band) };
        });
        await raiseAlert(tx, alertOf(group, source, band, chart, explained, limits, m, signalled.length));
      }
    }
  };
}

function alertOf(
  group: SeriesGroup,
  source: SeriesSource,
  band: Band | null,
  chart: ControlChart,
  explained: Array<{ point: ControlChart['points'][number]; driving: DrivingDistance[] }>,
  limits: { unconditional: number; conditional: number },
  m: number,
  count: number,
): RaiseAlertInput {
  const first = explained[0];
  const names = (d: DrivingDistance[]) => d.map((x) => x.label).join(', ');
  const describe = (d: DrivingDistance) => `${d.label} ${d.hrc} HRC against a mean of ${round(d.referenceMean, 1)}`;
  const origin = chart.limitsFrom;
  const limitsText =
    origin.type === 'frozen_baseline' ? `frozen baseline ${origin.baselineId} (${origin.window.from} to ${origin.window.to})` : `phase I on ${m} curves from ${origin.window.from} to ${origin.window.to}`;
  return {
    rule: T2_RULE,
    severity: 'warning',
    causeKey: `${T2_RULE}:mill:${group.millId}:grade:${group.gradeId}:source:${source}`,
    title: `${group.mill} ${group.grade}: curve of heat ${first.point.heatNumber} unusual as a whole (T² ${round(first.point.plotted, 1)} > ${round(first.point.ucl, 1)}), driven by ${names(first.driving)}`,
    millId: group.millId,
    gradeId: group.gradeId,
    heatId: first.point.heatId,
    lotId: lotOf(group, first.point.heatId),
    distanceMm: first.driving[0].distanceMm,
    evidence: {
      summary:
        `${count} new curve(s) of ${group.mill} ${group.grade} (${source.replace('_', ' ')}) beyond the T² limit over ${chart.distancesMm!.length} distances; ` +
        `the first, heat ${first.point.heatNumber} (cast ${first.point.castDate}), has T² ${round(first.point.plotted, 2)} against ${round(first.point.ucl, 2)}, ` +
        `driven by ${first.driving.map(describe).join('; ')}. Reference: ${limitsText}.`,
      distancesMm: chart.distancesMm,
      drivingDistancesMm: first.driving.map((d) => d.distanceMm),
      limits: { from: origin, alpha: chart.parameters.alpha, referenceCurves: m, ucl: first.point.ucl, mytUnconditional: limits.unconditional, mytConditional: limits.conditional },
      signalled: explained.slice(0, 10).map((e) => ({
        heatNumber: e.point.heatNumber,
        castDate: e.point.castDate,
        t2: e.point.plotted,
        ucl: e.point.ucl,
        driving: e.driving.map((d) => ({ ...d, referenceMean: round(d.referenceMean), conditional: round(d.conditional), unconditional: round(d.unconditional) })),
      })),
      signalledCount: count,
      skippedHeats: chart.skippedHeats?.length ?? 0,
    },
  };
}
