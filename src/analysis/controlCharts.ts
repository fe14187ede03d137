// Control charts of a series: individuals (with moving range and the Nelson rules), EWMA, tabular CUSUM,
// and Hotelling T² on the whole curve. Formulas live in src/stats (ASTM E2587 and Montgomery §6.4 for
// individuals; Nelson 1984; Roberts 1959 for EWMA; Page 1954 and Lucas & Crosier 1982 for CUSUM; Tracy,
// Young & Mason 1992 and the NIST/SEMATECH e-Handbook §6.5.4.3.4 for T²).
// Where the centre and sigma come from, and the chart says which:
//  - a frozen baseline of the series (phase II), when one is on file; else
//  - phase I on the requested window itself (trial limits with iterative exclusion of points beyond them).
// T² phase I excludes iteratively too (retrospective limit revision, Montgomery, Introduction to
// Statistical Quality Control, §11.3.1 and §5.4; Tracy, Young & Mason 1992): heats above the Beta UCL are
// dropped, the mean, covariance and Beta UCL re-estimated on the m that remain, until a pass drops none,
// T2_MAX_ITERATIONS passes have run, or dropping would leave fewer than p + 2 heats (then the last
// estimate is kept and converged is false). The frozen phase II F limit uses the m that remain; dropped
// baseline heats are plotted against it (they are not in the estimate) and listed in the limits origin.
import type { Db } from '../db/connection.ts';
import { activeBaseline, listBaselines, type BaselineRecord } from '../db/baselines.ts';
import { estimateIndividualsLimits, applyIndividualsLimits, type FrozenIndividualsLimits } from '../stats/phaseOne.ts';
import { ewmaChart } from '../stats/ewma.ts';
import { cusumChart } from '../stats/cusum.ts';
import { NELSON_RULE_DESCRIPTIONS, ALL_NELSON_RULES, type NelsonRule } from '../stats/nelsonRules.ts';
import { applyT2, freezeT2, hotellingT2PhaseOne, type HotellingPhaseOne, type T2Contribution } from '../stats/hotellingT2.ts';
import { bandOn, labelFor } from './bandOf.ts';
import { insufficientData, invalidInput } from './errors.ts';
import { distancesOf, groupByHeat, loadSeriesCurves, matchDistance, pointsAt, todayIso, type HeatCurve, type SeriesPoint, type SeriesQuery, type SeriesSource } from './seriesData.ts';
import { seriesAt } from '../db/series.ts';
import { alertChartParameters, monitoringSettingsFor } from './monitoringSettings.ts';

export type ChartKind = 'individuals' | 'ewma' | 'cusum' | 't2';
export const CHART_KINDS: readonly ChartKind[] = ['individuals', 'ewma', 'cusum', 't2'];

export interface ChartParameters {
  /** Width of Shewhart and EWMA limits in sigmas (default 3). */
  L?: number;
  /** EWMA weight (default 0.2). */
  lambda?: number;
  /** CUSUM reference value and decision interval in sigmas (defaults 0.5 and 5). */
  k?: number;
  h?: number;
  /** CUSUM head start in sigmas (default 0; Lucas & Crosier recommend h/2 for a fast initial response). */
  headStart?: number;
  /** Nelson rules applied to the individuals chart (default all eight). */
  rules?: NelsonRule[];
  /** Report a moving range above its upper limit as a signal (default true). */
  movingRange?: boolean;
  /** T² false-alarm probability per point (default 0.0027). */
  alpha?: number;
}

export type LimitsOrigin =
  | {
      type: 'frozen_baseline';
      baselineId: number;
      window: { from: string; to: string };
      createdBy: string | null;
      createdAt: string;
      reason: string | null;
      /** T² only: baseline heats left out of the estimate by phase I exclusion, and whether it converged. */
      excludedHeats?: string[];
      converged?: boolean;
    }
  | { type: 'phase_one_on_window'; window: { from: string | null; to: string | null }; excludedHeats: string[]; converged: boolean };

export interface ChartPoint {
  index: number;
  heatId: number;
  heatNumber: string;
  castDate: string;
  /** The observation (HRC; for T² the statistic itself). */
  value: number;
  /** What the chart plots: x (individuals), z (EWMA), C⁺ (CUSUM, sigma units), T². */
  plotted: number;
  /** CUSUM lower sum, negated for plotting below zero (sigma units). */
  plottedLower?: number;
  ucl: number;
  lcl: number | null;
  /** 'baseline' for points inside the baseline window (or phase I), 'monitoring' after it. */
  phase: 'baseline' | 'monitoring';
}

export interface ChartSignal {
  rule: string;
  description: string;
  /** Point indices (into points). */
  points: number[];
  heats: string[];
}

export interface ControlChart {
  kind: ChartKind;
  grade: string;
  mill: string;
  distanceMm: number | null;
  label: string | null;
  source: SeriesSource;
  limitsFrom: LimitsOrigin;
  /** Centre line (HRC; CUSUM 0 in sigma units; T² none). */
  centre: number | null;
  sigma: number | null;
  /** Steady or constant limits (time-varying ones are on each point). */
  ucl: number;
  lcl: number | null;
  parameters: Required<Omit<ChartParameters, 'rules'>> & { rules: NelsonRule[] };
  /** 'alerts': the parameters the alert rules use for this grade; 'looser': more rules or narrower limits than the alerts. */
  view?: 'alerts' | 'looser';
  points: ChartPoint[];
  signals: ChartSignal[];
  /** T² only: the distances making up each observation and heats left out for a missing reading. */
  distancesMm?: number[];
  skippedHeats?: string[];
  contributions?: Array<T2Contribution & { heatNumber: string }>;
}

const DEFAULTS = { L: 3, lambda: 0.2, k: 0.5, h: 5, headStart: 0, alpha: 0.0027 };

function parametersOf(p: ChartParameters, frozen?: FrozenIndividualsLimits) {
  return {
    L: p.L ?? frozen?.L ?? DEFAULTS.L,
    lambda: p.lambda ?? DEFAULTS.lambda,
    k: p.k ?? DEFAULTS.k,
    h: p.h ?? DEFAULTS.h,
    headStart: p.headStart ?? DEFAULTS.headStart,
    alpha: p.alpha ?? DEFAULTS.alpha,
    rules: [...(p.rules ?? ALL_NELSON_RULES)],
    movingRange: p.movingRange ?? true,
  };
}

/** Reference limits for a univariate chart: a frozen baseline, or phase I on the points themselves. */
export interface UnivariateReference {
  frozen: FrozenIndividualsLimits;
  origin: LimitsOrigin;
  /** Cast-date window that counts as baseline; null: every point is phase I. */
  baselineWindow: { from: string; to: string } | null;
}

/** Phase I reference from the series itself (trial limits, iterative exclusion of rule-1 points). */
export function phaseOneReference(points: readonly SeriesPoint[], window: { from: string | null; to: string | null }, L = 3): UnivariateReference {
  if (points.length < 10) throw insufficientData(`${points.length} heat(s) in the series: phase I limits need at least 10`);
  const frozen = estimateIndividualsLimits(points.map((p) => p.value), { L });
  return {
    frozen,
    origin: { type: 'phase_one_on_window', window, excludedHeats: frozen.excluded.map((i) => points[i].heatNumber), converged: frozen.converged },
    baselineWindow: null,
  };
}

export function baselineReference(b: BaselineRecord): UnivariateReference {
  return {
    frozen: b.limits as FrozenIndividualsLimits,
    origin: { type: 'frozen_baseline', baselineId: b.id, window: { from: b.windowFrom, to: b.windowTo }, createdBy: b.createdBy, createdAt: b.createdAt, reason: b.reason },
    baselineWindow: { from: b.windowFrom, to: b.windowTo },
  };
}

const signal = (rule: string, description: string, idx: readonly number[], points: readonly SeriesPoint[] | readonly ChartPoint[]): ChartSignal => ({
  rule,
  description,
  points: [...idx],
  heats: idx.map((i) => points[i].heatNumber),
});

/** An individuals, EWMA or CUSUM chart of a series against a reference (pure). */
export function univariateChart(
  kind: Exclude<ChartKind, 't2'>,
  series: readonly SeriesPoint[],
  reference: UnivariateReference,
  meta: { grade: string; mill: string; distanceMm: number; label: string | null; source: SeriesSource },
  params: ChartParameters = {},
): ControlChart {
  if (series.length < 2) throw insufficientData(`${series.length} heat(s) in the series: a chart needs at least 2`);
  const { frozen } = reference;
  const parameters = parametersOf(params, frozen);
  const values = series.map((p) => p.value);
  const phaseOf = (d: string): ChartPoint['phase'] =>
    reference.baselineWindow === null || (d >= reference.baselineWindow.from && d <= reference.baselineWindow.to) ? 'baseline' : 'monitoring';
  const base = (p: SeriesPoint, i: number) => ({ index: i, heatId: p.heatId, heatNumber: p.heatNumber, castDate: p.castDate, value: p.value, phase: phaseOf(p.castDate) });
  const center = frozen.center;
  const sigma = frozen.sigma;
  const common = { kind, ...meta, limitsFrom: reference.origin, sigma, parameters };
  if (kind === 'individuals') {
    const ucl = center + parameters.L * sigma;
    const lcl = center - parameters.L * sigma;
    const limits = { ...frozen, L: parameters.L, ucl, lcl };
    const phaseTwo = applyIndividualsLimits(limits, values, { rules: parameters.rules });
    const signals = phaseTwo.nelson.hits.filter((h) => h.indices.length).map((h) => signal(`nelson_${h.rule}`, NELSON_RULE_DESCRIPTIONS[h.rule], h.indices, series));
    const mr = parameters.movingRange ? phaseTwo.mrOutOfControl.filter((i) => i > 0) : [];
    if (mr.length) signals.push(signal('moving_range', 'moving range above its upper limit', mr, series));
    return { ...common, centre: center, ucl, lcl, points: series.map((p, i) => ({ ...base(p, i), plotted: p.value, ucl, lcl })), signals };
  }
  if (kind === 'ewma') {
    const e = ewmaChart(values, { target: center, sigma, lambda: parameters.lambda, L: parameters.L });
    const signals = e.signals.length ? [signal('ewma_beyond_limit', `EWMA beyond its ${parameters.L}-sigma limit`, e.signals, series)] : [];
    return {
      ...common,
      centre: center,
      ucl: e.steadyUcl,
      lcl: e.steadyLcl,
      points: series.map((p, i) => ({ ...base(p, i), plotted: e.z[i], ucl: e.ucl[i], lcl: e.lcl[i] })),
      signals,
    };
  }
  const c = cusumChart(values, { target: center, sigma, k: parameters.k, h: parameters.h, headStart: parameters.headStart });
  const signals: ChartSignal[] = [];
  if (c.upperSignals.length) signals.push(signal('cusum_upper', `upper CUSUM above h = ${parameters.h} sigma (mean shifted up)`, c.upperSignals, series));
  if (c.lowerSignals.length) signals.push(signal('cusum_lower', `lower CUSUM above h = ${parameters.h} sigma (mean shifted down)`, c.lowerSignals, series));
  return {
    ...common,
    centre: 0,
    ucl: parameters.h,
    lcl: -parameters.h,
    points: series.map((p, i) => ({ ...base(p, i), plotted: c.upper[i], plottedLower: -c.lower[i], ucl: parameters.h, lcl: -parameters.h })),
    signals,
  };
}

/** Rows of a T² chart: one per heat with a reading at every distance; the others are skipped. */
export function curveRows(curves: readonly HeatCurve[], distancesMm: readonly number[]) {
  const perDistance = distancesMm.map((d) => new Map(seriesAt(curves as HeatCurve[], matchDistance(distancesOf(curves), d) ?? d).map((p) => [p.heatId, p.value])));
  const rows: Array<{ heat: HeatCurve; row: number[] }> = [];
  const skipped: string[] = [];
  for (const group of groupByHeat(curves)) {
    const heat = group[0];
    const row = perDistance.map((m) => m.get(heat.heatId));
    if (row.every((v) => v !== undefined)) rows.push({ heat, row: row as number[] });
    else skipped.push(heat.heatNumber);
  }
  return { rows, skipped };
}

/** Most estimate-and-exclude passes of T² phase I (as for the individuals chart, src/stats/phaseOne.ts). */
export const T2_MAX_ITERATIONS = 10;

export interface T2PhaseOneResult {
  /** Phase I on the retained rows (its t2 and signals index into `kept`). */
  final: HotellingPhaseOne;
  /** Indices of the rows in the estimate, ascending. */
  kept: number[];
  /** Indices of the rows dropped, ascending. */
  excluded: number[];
  iterations: number;
  converged: boolean;
}

/**
 * T² phase I with iterative exclusion (see the module header): drop rows above the Beta UCL, re-estimate
 * on the rest, until none is dropped, maxIterations passes, or fewer than p + 2 rows would remain. Pure.
 */
export function t2PhaseOneWithExclusion(rows: readonly (readonly number[])[], alpha: number, maxIterations = T2_MAX_ITERATIONS): T2PhaseOneResult {
  if (!(Number.isInteger(maxIterations) && maxIterations >= 1)) throw invalidInput('maxIterations must be a positive integer');
  const p = rows[0]?.length ?? 0;
  let kept = rows.map((_, i) => i);
  let final = hotellingT2PhaseOne(rows, { alpha });
  let iterations = 1;
  let converged = final.signals.length === 0;
  while (!converged && iterations < maxIterations) {
    const drop = new Set(final.signals.map((j) => kept[j]));
    const next = kept.filter((i) => !drop.has(i));
    if (next.length < p + 2) break;
    kept = next;
    final = hotellingT2PhaseOne(kept.map((i) => rows[i]), { alpha });
    iterations++;
    converged = final.signals.length === 0;
  }
  const inKept = new Set(kept);
  return { final, kept, excluded: rows.map((_, i) => i).filter((i) => !inKept.has(i)), iterations, converged };
}

/** Hotelling T² of the whole curve (pure). With a reference window: phase I there, phase II after it. */
export function t2Chart(
  curves: readonly HeatCurve[],
  distancesMm: readonly number[],
  reference: { curves: readonly HeatCurve[]; origin: LimitsOrigin; window: { from: string; to: string } } | null,
  meta: { grade: string; mill: string; source: SeriesSource; window: { from: string | null; to: string | null } },
  params: ChartParameters = {},
): ControlChart {
  const parameters = parametersOf(params);
  const { rows, skipped } = curveRows(curves, distancesMm);
  const p = distancesMm.length;
  if (rows.length < p + 2) throw insufficientData(`${rows.length} complete curve(s) over ${p} distances: Hotelling T² needs at least ${p + 2}`);
  let t2: number[];
  let ucls: number[];
  let origin: LimitsOrigin;
  let phase: Array<ChartPoint['phase']>;
  let contributions: T2Contribution[];
  if (reference) {
    const ref = curveRows(reference.curves, distancesMm).rows;
    if (ref.length < p + 2) throw insufficientData(`the baseline window holds ${ref.length} complete curve(s): T² needs at least ${p + 2}`);
    const phaseOne = t2PhaseOneWithExclusion(ref.map((r) => r.row), parameters.alpha);
    const one = phaseOne.final;
    const frozen = freezeT2(one);
    const two = applyT2(frozen, rows.map((r) => r.row));
    // Retained baseline heats: their phase I T² and Beta UCL; dropped ones: against the frozen estimate and F UCL.
    const retained = new Map(phaseOne.kept.map((k, j) => [ref[k].heat.heatId, j]));
    const inRef = new Set(ref.map((r) => r.heat.heatId));
    phase = rows.map((r) => (inRef.has(r.heat.heatId) ? 'baseline' : 'monitoring'));
    t2 = rows.map((r, i) => (retained.has(r.heat.heatId) ? one.t2[retained.get(r.heat.heatId)!] : two.t2[i]));
    ucls = rows.map((r) => (retained.has(r.heat.heatId) ? one.ucl : frozen.ucl));
    contributions = two.contributions.filter((c) => !retained.has(rows[c.index].heat.heatId));
    for (const c of one.contributions) {
      const i = rows.findIndex((r) => r.heat.heatId === ref[phaseOne.kept[c.index]].heat.heatId);
      if (i >= 0) contributions.push({ ...c, index: i });
    }
    origin = { ...reference.origin, excludedHeats: phaseOne.excluded.map((k) => ref[k].heat.heatNumber), converged: phaseOne.converged };
  } else {
    const phaseOne = t2PhaseOneWithExclusion(rows.map((r) => r.row), parameters.alpha);
    const one = phaseOne.final;
    const kept = new Map(phaseOne.kept.map((k, j) => [k, j]));
    const frozen = phaseOne.excluded.length ? freezeT2(one) : null;
    const two = frozen ? applyT2(frozen, phaseOne.excluded.map((k) => rows[k].row)) : null;
    const dropped = new Map(phaseOne.excluded.map((k, j) => [k, j]));
    t2 = rows.map((_, i) => (kept.has(i) ? one.t2[kept.get(i)!] : two!.t2[dropped.get(i)!]));
    ucls = rows.map((_, i) => (kept.has(i) ? one.ucl : frozen!.ucl));
    phase = rows.map(() => 'baseline');
    contributions = [
      ...one.contributions.map((c) => ({ ...c, index: phaseOne.kept[c.index] })),
      ...(two?.contributions.map((c) => ({ ...c, index: phaseOne.excluded[c.index] })) ?? []),
    ];
    origin = { type: 'phase_one_on_window', window: meta.window, excludedHeats: phaseOne.excluded.map((k) => rows[k].heat.heatNumber), converged: phaseOne.converged };
  }
  const points: ChartPoint[] = rows.map((r, i) => ({
    index: i,
    heatId: r.heat.heatId,
    heatNumber: r.heat.heatNumber,
    castDate: r.heat.castDate,
    value: t2[i],
    plotted: t2[i],
    ucl: ucls[i],
    lcl: null,
    phase: phase[i],
  }));
  const beyond = points.filter((pt) => pt.plotted > pt.ucl).map((pt) => pt.index);
  contributions.sort((a, b) => a.index - b.index);
  return {
    kind: 't2',
    grade: meta.grade,
    mill: meta.mill,
    distanceMm: null,
    label: null,
    source: meta.source,
    limitsFrom: origin,
    centre: null,
    sigma: null,
    ucl: Math.max(...ucls),
    lcl: null,
    parameters,
    points,
    signals: beyond.length ? [signal('t2_beyond_ucl', 'Hotelling T² of the curve above its upper limit', beyond, points)] : [],
    distancesMm: [...distancesMm],
    skippedHeats: skipped,
    contributions: contributions.map((c) => ({ ...c, heatNumber: points[c.index].heatNumber })),
  };
}

export interface ChartRequest extends SeriesQuery {
  kind: ChartKind;
  mill: string;
  /** Required except for T². */
  distanceMm?: number;
  /** T²: the distances of the curve (default: the band's distances measured on the heats). */
  distancesMm?: number[];
  /** Ignore a frozen baseline and use phase I on the window (default false). */
  ignoreBaseline?: boolean;
  parameters?: ChartParameters;
}

/**
 * Whether explicit parameters make a chart looser than the alerts' (more run rules, narrower limits, a
 * smaller T² limit, a moving-range signal the alerts never raise). Pure.
 */
export function isLooserThan(alerts: ChartParameters, asked: ChartParameters, kind: ChartKind): boolean {
  const rules = new Set(alerts.rules ?? []);
  if (kind === 'individuals') return (asked.rules ?? []).some((r) => !rules.has(r)) || (asked.movingRange ?? false) || (asked.L ?? 3) < (alerts.L ?? 3);
  if (kind === 'ewma') return (asked.L ?? 0) < (alerts.L ?? 0) || asked.lambda !== alerts.lambda;
  if (kind === 'cusum') return (asked.h ?? 0) < (alerts.h ?? 0) || asked.k !== alerts.k || (asked.headStart ?? 0) > (alerts.headStart ?? 0);
  return (asked.alpha ?? 0) > (alerts.alpha ?? 0);
}

/**
 * A chart of one mill's series of a grade (loads the data, picks the limits, computes). Parameters not
 * given are those the alert rules use for the grade (src/analysis/monitoringSettings.ts); a chart whose
 * parameters are looser than the alerts' is marked view 'looser'.
 */
export async function controlChart(db: Db, request: ChartRequest): Promise<ControlChart> {
  const alerts = alertChartParameters(await monitoringSettingsFor(db, request.grade), request.kind);
  const given = Object.fromEntries(Object.entries(request.parameters ?? {}).filter(([, v]) => v !== undefined)) as ChartParameters;
  const parameters = { ...alerts, ...given };
  const view: ControlChart['view'] = isLooserThan(alerts, parameters, request.kind) ? 'looser' : 'alerts';
  const chart = await computeChart(db, { ...request, parameters });
  return { ...chart, view };
}

async function computeChart(db: Db, request: ChartRequest): Promise<ControlChart> {
  const source = request.source ?? 'mill_certificate';
  const curves = await loadSeriesCurves(db, { ...request, source });
  const window = { from: request.from ?? null, to: request.to ?? null };
  const band = await bandOn(db, request.grade, request.to ?? todayIso());
  if (request.kind === 't2') {
    const measured = distancesOf(curves);
    const wanted = request.distancesMm ?? band?.points.map((p) => p.mm) ?? measured;
    const distances = wanted.map((d) => matchDistance(measured, d)).filter((d): d is number => d !== null);
    if (distances.length < 2) throw invalidInput('a T² chart needs at least two distances measured on the heats');
    const newest = request.ignoreBaseline ? undefined : (await listBaselines(db, { grade: request.grade, mill: request.mill, source })).sort((a, b) => b.id - a.id)[0];
    const reference = newest
      ? {
          curves: await loadSeriesCurves(db, { grade: request.grade, mill: request.mill, source, from: newest.windowFrom, to: newest.windowTo }),
          origin: baselineReference(newest).origin,
          window: { from: newest.windowFrom, to: newest.windowTo },
        }
      : null;
    return t2Chart(curves, distances, reference, { grade: request.grade, mill: request.mill, source, window }, request.parameters);
  }
  if (request.distanceMm === undefined) throw invalidInput(`a ${request.kind} chart needs a distance`);
  const series = pointsAt(curves, request.distanceMm);
  const stored = request.ignoreBaseline ? null : await activeBaseline(db, { grade: request.grade, mill: request.mill, source, distanceMm: request.distanceMm });
  const reference = stored ? baselineReference(stored) : phaseOneReference(series, window, request.parameters?.L ?? 3);
  const meta = { grade: request.grade, mill: request.mill, distanceMm: request.distanceMm, label: labelFor(band, request.distanceMm), source };
  return univariateChart(request.kind, series, reference, meta, request.parameters);
}
