// Rules "nelson_rule_<n>", "ewma_signal" and "cusum_signal": control-chart signals on the individuals
// series of each mill x grade x band distance (x test source) touched by the ingest.
// Charts (src/analysis/controlCharts.ts over src/stats): individuals with the run rules of Nelson (1984,
// J. Quality Technology 16:237-239); EWMA with exact limits (Roberts 1959; Montgomery, Introduction to
// Statistical Quality Control, §9.2); two-sided tabular CUSUM (Page 1954; Lucas & Crosier 1982,
// Technometrics 24:199-205, for the head start).
// Off by default (the curve-level scheme of curveDrift.ts replaces them); switchable per grade.
// Limits: the series' active frozen baseline when there is one (phase II); otherwise phase I (trial
// limits, iterative exclusion of points beyond 3 sigma; Montgomery §6.4) on the series' first
// `reference.maxHeats` heats (fewer while it is younger: the heats before the first new one), if at
// least `reference.minHeats` are on file. The reference is kept, not re-estimated before each import.
// The chart runs over the whole series, so EWMA and CUSUM carry the history into the new points.
// Only a signal at a point of a heat this ingest wrote raises an alert; a signal already seen in the
// history does not. Cause key: rule (with the side for EWMA and CUSUM) + mill + grade + source, the band
// distances that fired listed in the evidence (a heat whose whole curve is high fires most distances at
// once: one cause); with settings.causePerDistance the distance joins the key. A drift gives one open
// alert that stays until someone resolves it.
// Severity (our judgement): a point beyond 3 sigma, an EWMA or CUSUM signal: warning; the other run
// rules: info.
import type { Executor } from '../../db/connection.ts';
import type { ApplyResult } from '../../db/certificateStore.ts';
import { loadCurves, type SeriesSource } from '../../db/series.ts';
import { raiseAlert, type RaiseAlertInput, type Severity } from '../../db/alerts.ts';
import { baselineReference, phaseOneReference, univariateChart, type ChartSignal, type ControlChart, type UnivariateReference } from '../../analysis/controlCharts.ts';
import { labelFor } from '../../analysis/bandOf.ts';
import { distancesOf, matchDistance, pointsAt, type SeriesPoint } from '../../analysis/seriesData.ts';
import { NELSON_RULE_DESCRIPTIONS, type NelsonRule } from '../../stats/nelsonRules.ts';
import type { Band } from '../../hardenability/bands.ts';
import { DEFAULT_ALERT_SETTINGS, type AlertRuleSettings } from './settings.ts';
import { monitoringSettingsFor } from '../../analysis/monitoringSettings.ts';
import {
  bandOnDate,
  baselineAt,
  fixedReferenceWindow,
  distanceKey,
  ingestScope,
  lotOf,
  newHeatsOfSource,
  type SeriesGroup,
} from './ingestScope.ts';

export const NELSON_RULE_PREFIX = 'nelson_rule_';
export const EWMA_RULE = 'ewma_signal';
export const CUSUM_RULE = 'cusum_signal';

/** Most firing heats listed in an alert's evidence. */
const LISTED = 10;

/** The distances a group is charted at: the band's (in force on the newest new cast date) that were measured. */
export function chartDistances(group: SeriesGroup, band: Band | null): number[] {
  const measured = distancesOf(group.curves);
  const wanted = band ? band.points.map((p) => p.mm) : [];
  return wanted.map((d) => matchDistance(measured, d)).filter((d): d is number => d !== null);
}

export function newestNewCastDate(group: SeriesGroup): string {
  return group.newTests.reduce((m, t) => (t.castDate > m ? t.castDate : m), group.newTests[0].castDate);
}

/** Limits of one series: frozen baseline, else phase I on the reference heats; null (with why) when neither. */
export function referenceFor(
  group: SeriesGroup,
  source: SeriesSource,
  distanceMm: number,
  reference: readonly SeriesPoint[],
  settings: AlertRuleSettings,
): { reference: UnivariateReference } | { skipped: string } {
  const stored = baselineAt(group, source, distanceMm);
  if (stored) return { reference: baselineReference(stored) };
  if (reference.length < settings.reference.minHeats) {
    return { skipped: `${reference.length} heat(s) before the new ones and no frozen baseline: phase I needs ${settings.reference.minHeats}` };
  }
  try {
    return { reference: phaseOneReference(reference, { from: reference[0].castDate, to: reference[reference.length - 1].castDate }) };
  } catch (error) {
    return { skipped: (error as Error).message };
  }
}

interface Firing {
  rule: string;
  causePart: string;
  severity: Severity;
  what: string;
  chart: ControlChart;
  reference: UnivariateReference;
  signal: ChartSignal;
  /** Chart point indices of the new points that fired. */
  indices: number[];
  newCount: number;
}

function firings(chart: ControlChart, reference: UnivariateReference, newIndices: ReadonlySet<number>): Firing[] {
  const out: Firing[] = [];
  const base = { chart, reference, newCount: newIndices.size };
  for (const s of chart.signals) {
    const fresh = s.points.filter((i) => newIndices.has(i));
    if (fresh.length === 0) continue;
    if (chart.kind === 'individuals' && s.rule.startsWith('nelson_')) {
      const n = Number(s.rule.slice('nelson_'.length)) as NelsonRule;
      out.push({ ...base, rule: `${NELSON_RULE_PREFIX}${n}`, causePart: `${NELSON_RULE_PREFIX}${n}`, severity: n === 1 ? 'warning' : 'info', what: `Nelson rule ${n} (${NELSON_RULE_DESCRIPTIONS[n]})`, signal: s, indices: fresh });
    } else if (chart.kind === 'ewma') {
      // The side of each fresh point: above its upper or below its lower limit.
      for (const side of ['high', 'low'] as const) {
        const idx = fresh.filter((i) => (side === 'high' ? chart.points[i].plotted > chart.points[i].ucl : chart.points[i].plotted < (chart.points[i].lcl as number)));
        if (idx.length) out.push({ ...base, rule: EWMA_RULE, causePart: `${EWMA_RULE}:${side}`, severity: 'warning', what: `EWMA ${side === 'high' ? 'above its upper' : 'below its lower'} limit`, signal: s, indices: idx });
      }
    } else if (chart.kind === 'cusum') {
      const side = s.rule === 'cusum_upper' ? 'high' : 'low';
      out.push({ ...base, rule: CUSUM_RULE, causePart: `${CUSUM_RULE}:${side}`, severity: 'warning', what: `CUSUM ${side === 'high' ? 'upper sum above h (mean shifted up)' : 'lower sum above h (mean shifted down)'}`, signal: s, indices: fresh });
    }
  }
  return out;
}

const round = (x: number) => Number(x.toFixed(3));

function limitsText(origin: ControlChart['limitsFrom']): string {
  return origin.type === 'frozen_baseline'
    ? `frozen baseline ${origin.baselineId} (${origin.window.from} to ${origin.window.to})`
    : `phase I on the heats cast ${origin.window.from} to ${origin.window.to}, before this import`;
}

/** What one distance's chart shows: limits, the new points that fired, the last points charted. */
function distanceEvidence(f: Firing) {
  const { chart } = f;
  const point = (i: number) => {
    const p = chart.points[i];
    return {
      heatNumber: p.heatNumber,
      castDate: p.castDate,
      hrc: p.value,
      plotted: round(p.plotted),
      ...(p.plottedLower !== undefined ? { lowerSum: round(-p.plottedLower) } : {}),
      ucl: round(p.ucl),
      lcl: p.lcl === null ? null : round(p.lcl),
    };
  };
  const fired = new Set(f.indices);
  return {
    distanceMm: chart.distanceMm,
    label: chart.label,
    limits: { from: chart.limitsFrom, centreHrc: f.reference.frozen.center, sigmaHrc: f.reference.frozen.sigma, ucl: chart.ucl, lcl: chart.lcl },
    firing: f.indices.slice(0, LISTED).map(point),
    firingCount: f.indices.length,
    newPoints: f.newCount,
    // The last points charted, so the pattern can be seen without opening a page.
    recent: chart.points.slice(-Math.min(15, chart.points.length)).map((p) => ({ heatNumber: p.heatNumber, castDate: p.castDate, hrc: p.value, ...(fired.has(p.index) ? { fired: true } : {}) })),
  };
}

/** One alert for the firings of one cause (one rule of one series; one distance or several). */
function alertOf(group: SeriesGroup, source: SeriesSource, fs: Firing[], perDistance: boolean): RaiseAlertInput {
  // The distance shown first: the one with the most new points firing, then the earliest firing.
  const ordered = [...fs].sort((a, b) => b.indices.length - a.indices.length || a.chart.points[a.indices[0]].castDate.localeCompare(b.chart.points[b.indices[0]].castDate));
  const lead = ordered[0];
  const first = lead.chart.points[lead.indices[0]];
  const byDistance = [...fs].sort((a, b) => (a.chart.distanceMm as number) - (b.chart.distanceMm as number));
  const labels = byDistance.map((f) => f.chart.label as string);
  // Heats in time order (cast date, then heat number, as the series loader orders them), so the title names the first that fired.
  const firedPoints = byDistance.flatMap((f) => f.indices.map((i) => f.chart.points[i]));
  firedPoints.sort((a, b) => a.castDate.localeCompare(b.castDate) || (a.heatNumber < b.heatNumber ? -1 : a.heatNumber > b.heatNumber ? 1 : 0));
  const heats = [...new Set(firedPoints.map((p) => p.heatNumber))];
  const more = heats.length > 3 ? ` and ${heats.length - 3} more` : '';
  const d = lead.chart.distanceMm as number;
  const where = labels.length > 4 ? `${labels.length} distances (${labels.slice(0, 4).join(', ')} ...)` : labels.join(', ');
  return {
    rule: lead.rule,
    severity: lead.severity,
    causeKey: `${lead.causePart}:mill:${group.millId}:grade:${group.gradeId}${perDistance ? `:mm:${distanceKey(d)}` : ''}:source:${source}`,
    title: `${group.mill} ${group.grade} at ${where}: ${lead.what}, heat ${heats.slice(0, 3).join(', ')}${more}`,
    millId: group.millId,
    gradeId: group.gradeId,
    heatId: first.heatId,
    lotId: lotOf(group, first.heatId),
    distanceMm: d,
    evidence: {
      summary:
        `${lead.what} on the ${source.replace('_', ' ')} series of ${group.mill} ${group.grade} at ${labels.join(', ')}; ` +
        `${heats.length} new heat(s) fired, first ${first.heatNumber} cast ${first.castDate}. Strongest at ${lead.chart.label}: ` +
        `${lead.indices.length} of ${lead.newCount} new point(s), ${first.value} HRC against a centre of ${round(lead.reference.frozen.center)} HRC ` +
        `(sigma ${round(lead.reference.frozen.sigma)} HRC); limits from ${limitsText(lead.chart.limitsFrom)}.`,
      chart: lead.chart.kind,
      signal: { rule: lead.signal.rule, description: lead.signal.description },
      series: { mill: group.mill, grade: group.grade, source },
      parameters: lead.chart.parameters,
      distancesMm: byDistance.map((f) => f.chart.distanceMm),
      heats: heats.slice(0, LISTED * 2),
      distances: byDistance.map(distanceEvidence),
    },
  };
}

/** The control-signal rule with the given settings. */
export function controlSignalsRule(base: AlertRuleSettings = DEFAULT_ALERT_SETTINGS) {
  const plan = (settings: AlertRuleSettings) => {
  const kinds = [
    ...(settings.nelson.enabled && settings.nelson.rules.length ? (['individuals'] as const) : []),
    ...(settings.ewma.enabled ? (['ewma'] as const) : []),
    ...(settings.cusum.enabled ? (['cusum'] as const) : []),
  ];
  const params = {
    rules: settings.nelson.rules,
    lambda: settings.ewma.lambda,
    k: settings.cusum.k,
    h: settings.cusum.h,
    headStart: settings.cusum.headStart,
  };
  return { kinds, params };
  };
  return async function controlSignals(tx: Executor, written: ApplyResult): Promise<void> {
    const scope = await ingestScope(tx, written, base.historyDays);
    for (const group of scope.groups) {
      // The grade's stored monitoring configuration over the base settings (the pages use the same).
      const settings = await monitoringSettingsFor(tx, group.grade, base);
      const { kinds, params } = plan(settings);
      if (kinds.length === 0) continue;
      const band = bandOnDate(group.bands, newestNewCastDate(group));
      const distances = chartDistances(group, band);
      for (const source of settings.sources) {
        const fresh = newHeatsOfSource(group, source);
        if (fresh.size === 0) continue;
        // The whole series: its reference is its first heats, kept (not the heats before each import).
        const curves = await loadCurves(tx, { grade: group.grade, mill: group.mill, source });
        const found: Firing[] = [];
        for (const d of distances) {
          const window = fixedReferenceWindow(pointsAt(curves, d), (p) => fresh.has(p.heatId), settings.reference.maxHeats);
          if (!window) continue;
          const ref = referenceFor(group, source, d, window.points.slice(0, window.referenceCount), settings);
          if ('skipped' in ref) continue;
          const meta = { grade: group.grade, mill: group.mill, distanceMm: d, label: labelFor(band, d), source };
          const newIndices = new Set(window.newIndices);
          for (const kind of kinds) {
            // EWMA limits at their own width; the individuals chart's run rules are at 1, 2 and 3 sigma.
            const chart = univariateChart(kind, window.points, ref.reference, meta, { ...params, L: kind === 'ewma' ? settings.ewma.L : 3 });
            found.push(...firings(chart, ref.reference, newIndices));
          }
        }
        const causes = new Map<string, Firing[]>();
        for (const f of found) {
          const key = settings.causePerDistance ? `${f.causePart}@${f.chart.distanceMm}` : f.causePart;
          const list = causes.get(key);
          if (list) list.push(f);
          else causes.set(key, [f]);
        }
        for (const fs of causes.values()) await raiseAlert(tx, alertOf(group, source, fs, settings.causePerDistance));
      }
    }
  };
}
