// The curve-level monitoring of one series (mill × grade × test source): which heats form its fixed
// reference, the scheme of src/stats/curveScheme.ts run over every heat after it, and which signals a
// batch of new heats raises. Pure (no database): the alert rule, the pages and the benchmark call the
// same functions, so they give the same verdicts.
//
// The reference never moves with an import:
//  - a frozen baseline of the series: the complete curves cast inside its window; else
//  - qualified automatically: the first `referenceHeats` complete curves of the series in time order
//    (cast date, then heat number), once that many are on file. Until then the series is collecting its
//    reference and raises no drift alert.
// Below `minReferenceHeats` usable curves a baseline is refused (the series stays unmonitored, and
// says why); between that and `referenceHeats` the limits are widened more (ewmaLimitForEstimated).
// Because the statistic at a heat depends only on the reference and the heats before it, sending the
// same history 1, 3 or 25 heats per import raises the same alerts, and a history loaded in one import
// raises what heat-by-heat arrival would have (phase I on the first heats, then phase II in time order).
import { fitCurveReference, runCurveScheme, type CurveReference, type CurveSchemeDesign, type CurveSchemePoint } from '../stats/curveScheme.ts';
import { targetArlHeats } from '../stats/monitoringDesign.ts';

export interface CurveMonitorSettings {
  enabled: boolean;
  lambda: number;
  yearsPerFalseAlarm: number;
  /** Heats a year of the series; null: estimated from the reference's cast dates. */
  heatsPerYear: number | null;
  referenceHeats: number;
  minReferenceHeats: number;
  guarantee: number;
  locationShare: number;
  shapeComponents: number;
  autocorrelationThreshold: number;
}

export interface MonitoredHeat {
  heatId: number;
  heatNumber: string;
  castDate: string;
  row: number[];
}

export type ReferenceOrigin =
  | { type: 'frozen_baseline'; baselineId: number; window: { from: string; to: string } }
  | { type: 'first_heats'; heats: number };

export interface SeriesMonitoring {
  status: 'monitoring' | 'collecting_reference' | 'refused';
  reason: string | null;
  origin: ReferenceOrigin | null;
  reference: CurveReference | null;
  /** Heats of the reference (in time order) and those phase I set aside. */
  referenceHeats: MonitoredHeat[];
  excludedHeats: string[];
  heatsPerYear: number | null;
  /** Statements for the engineer (what the limits cost, autocorrelation treatment, warnings). */
  statements: string[];
  /** The heats after the reference with their points. */
  monitored: Array<MonitoredHeat & { point: CurveSchemePoint }>;
}

/** Heats a year from the reference's first and last cast dates (between 10 and 5000). */
export function heatRate(heats: readonly MonitoredHeat[]): number | null {
  if (heats.length < 2) return null;
  const days = (Date.parse(heats[heats.length - 1].castDate) - Date.parse(heats[0].castDate)) / 86_400_000;
  if (!(days > 0)) return null;
  return Math.min(5000, Math.max(10, ((heats.length - 1) * 365.25) / days));
}

const pct = (x: number) => `${(100 * x).toFixed(0)} %`;

/** Chooses the reference, fits it and runs the scheme over the heats after it. `heats` in time order. */
export function monitorSeries(heats: readonly MonitoredHeat[], settings: CurveMonitorSettings, baseline: { id: number; window: { from: string; to: string } } | null): SeriesMonitoring {
  const empty = (status: SeriesMonitoring['status'], reason: string, origin: ReferenceOrigin | null, referenceHeats: MonitoredHeat[] = []): SeriesMonitoring => ({
    status,
    reason,
    origin,
    reference: null,
    referenceHeats,
    excludedHeats: [],
    heatsPerYear: null,
    statements: [],
    monitored: [],
  });
  let reference: MonitoredHeat[];
  let after: MonitoredHeat[];
  let origin: ReferenceOrigin;
  if (baseline) {
    origin = { type: 'frozen_baseline', baselineId: baseline.id, window: baseline.window };
    reference = heats.filter((h) => h.castDate >= baseline.window.from && h.castDate <= baseline.window.to);
    after = heats.filter((h) => h.castDate > baseline.window.to);
    if (reference.length < settings.minReferenceHeats) {
      return empty('refused', `the frozen baseline window holds ${reference.length} complete curve(s): at least ${settings.minReferenceHeats} are needed for limits that can be trusted`, origin, reference);
    }
  } else {
    origin = { type: 'first_heats', heats: settings.referenceHeats };
    if (heats.length < settings.referenceHeats) {
      return empty('collecting_reference', `collecting the reference: ${heats.length} of the first ${settings.referenceHeats} complete curves are on file`, origin, [...heats]);
    }
    reference = heats.slice(0, settings.referenceHeats);
    after = heats.slice(settings.referenceHeats);
  }
  const rate = settings.heatsPerYear ?? heatRate(reference) ?? 150;
  const design: CurveSchemeDesign = {
    lambda: settings.lambda,
    targetArl: targetArlHeats({ heatsPerYear: rate, yearsPerFalseAlarm: settings.yearsPerFalseAlarm }),
    locationShare: settings.locationShare,
    guarantee: settings.guarantee,
    autocorrelationThreshold: settings.autocorrelationThreshold,
    shapeComponents: settings.shapeComponents,
  };
  let fit: CurveReference;
  try {
    fit = fitCurveReference(reference.map((h) => h.row), design, settings.minReferenceHeats);
  } catch (error) {
    return empty('refused', (error as Error).message, origin, reference);
  }
  const points = runCurveScheme(fit, after.map((h) => h.row));
  const statements: string[] = [];
  const d = fit.location.design;
  statements.push(
    `Designed for one false alarm per series in ${settings.yearsPerFalseAlarm} year(s) at ${rate.toFixed(0)} heats a year (in-control ARL ${design.targetArl.toFixed(0)} heats for the scheme, ` +
      `${fit.arl.location.toFixed(0)} for the level chart${fit.arl.shape ? `, ${fit.arl.shape.toFixed(0)} for the shape chart` : ''}).`,
  );
  statements.push(
    `The level limit is widened from L = ${d.knownL.toFixed(2)} to ${d.L.toFixed(2)} for the ${fit.kept.length} reference heats, so that at most ${pct(1 - d.guarantee)} of references this size ` +
      `alarm more often than designed; expected false alarms a year on this design: ${(d.meanFalseAlarmsPerHeat * rate).toFixed(2)} from the level chart.`,
  );
  if (reference.length < settings.referenceHeats) statements.push(`Warning: only ${reference.length} reference heats (${settings.referenceHeats} advised): the limits are wide and a small drift is found late.`);
  if (fit.excluded.length) statements.push(`${fit.excluded.length} reference heat(s) set aside by phase I (level or shape far off): ${fit.excluded.map((i) => reference[i].heatNumber).slice(0, 10).join(', ')}.`);
  statements.push(
    fit.location.treated
      ? `Lag-1 autocorrelation of the curve level over the reference is ${fit.location.lag1.toFixed(2)} (at or above ${settings.autocorrelationThreshold}): the level chart runs on the residuals of an AR(1) fit (φ = ${fit.location.phi.toFixed(2)}).`
      : `Lag-1 autocorrelation of the curve level over the reference is ${fit.location.lag1.toFixed(2)} (below ${settings.autocorrelationThreshold}): charted as it is, sigma from the overall SD.`,
  );
  return {
    status: 'monitoring',
    reason: null,
    origin,
    reference: fit,
    referenceHeats: reference,
    excludedHeats: fit.excluded.map((i) => reference[i].heatNumber),
    heatsPerYear: rate,
    statements,
    monitored: after.map((h, i) => ({ ...h, point: points[i] })),
  };
}

export type CurveCause = 'level:high' | 'level:low' | 'shape';

/** Heats without a shape signal after which a new shape signal starts a new episode. */
export const SHAPE_EPISODE_GAP = 25;

export interface CurveEpisode {
  cause: CurveCause;
  /** Index (into monitored) of the heat that began the episode. */
  onset: number;
  /** Indices of the heats that signalled during it. */
  signals: number[];
}

/**
 * Signal episodes of the series, in time order (pure). A level episode begins when the EWMA crosses a
 * limit and ends when it has come back inside half that limit (hysteresis, our choice, so a drift that
 * hovers at the limit is one episode); a shape episode begins at a shape signal after SHAPE_EPISODE_GAP
 * heats without one. Episodes depend only on the points, never on how the heats arrived.
 */
export function episodesOf(monitoring: SeriesMonitoring): CurveEpisode[] {
  const out: CurveEpisode[] = [];
  const open: Partial<Record<CurveCause, CurveEpisode>> = {};
  let lastShape = -Infinity;
  monitoring.monitored.forEach((h, i) => {
    const p = h.point;
    for (const side of ['high', 'low'] as const) {
      const cause: CurveCause = `level:${side}`;
      const beyond = p.level === side;
      const current = open[cause];
      if (current) {
        if (beyond) current.signals.push(i);
        else if ((side === 'high' ? p.ewma : -p.ewma) < p.limit / 2) delete open[cause];
      } else if (beyond) {
        const e = { cause, onset: i, signals: [i] };
        out.push(e);
        open[cause] = e;
      }
    }
    if (p.shape) {
      const current = open.shape;
      if (current && i - lastShape <= SHAPE_EPISODE_GAP) current.signals.push(i);
      else {
        const e: CurveEpisode = { cause: 'shape', onset: i, signals: [i] };
        out.push(e);
        open.shape = e;
      }
      lastShape = i;
    }
  });
  return out;
}

export interface CurveFinding {
  cause: CurveCause;
  /** The heat that began the episode (it names the alert; it may have come with an earlier import). */
  onset: MonitoredHeat & { point: CurveSchemePoint };
  /** Heats of this batch that signal in the episode, in time order. */
  heats: Array<MonitoredHeat & { point: CurveSchemePoint }>;
}

/** The episodes a batch of new heats signals in, with the new heats that signal (pure). */
export function findingsOf(monitoring: SeriesMonitoring, isNew: (heatId: number) => boolean): CurveFinding[] {
  const m = monitoring.monitored;
  return episodesOf(monitoring)
    .map((e) => ({ cause: e.cause, onset: m[e.onset], heats: e.signals.map((i) => m[i]).filter((h) => isNew(h.heatId)) }))
    .filter((f) => f.heats.length > 0);
}
