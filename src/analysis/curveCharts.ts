// The curve-level scheme of a series as two charts in the shape every page draws (ControlChart): the
// level EWMA with its designed ± limit, and the shape T² with its limit. Pure; the numbers are those of
// src/analysis/curveMonitor.ts, so a signal drawn is one the drift alerts raise.
import type { ControlChart, ChartSignal } from './controlCharts.ts';
import type { SeriesMonitoringView } from './monitoringView.ts';

const signal = (rule: string, description: string, idx: number[], view: SeriesMonitoringView): ChartSignal => ({ rule, description, points: idx, heats: idx.map((i) => view.points[i].heatNumber) });

export function curveCharts(view: SeriesMonitoringView): { level: ControlChart; shape: ControlChart | null } | null {
  const ref = view.reference;
  if (view.status !== 'monitoring' || !ref || !ref.level || view.points.length === 0) return null;
  const lv = ref.level;
  const origin = ref.origin && ref.origin.type === 'frozen_baseline'
    ? { type: 'frozen_baseline' as const, baselineId: ref.origin.baselineId, window: ref.origin.window, createdBy: null, createdAt: '', reason: null }
    : { type: 'phase_one_on_window' as const, window: { from: ref.from ?? null, to: ref.to ?? null }, excludedHeats: ref.excludedHeats ?? [], converged: true };
  const common = { grade: view.grade, mill: view.mill, distanceMm: null, label: 'whole curve', source: view.source, limitsFrom: origin, view: 'alerts' as const };
  const parameters = { L: lv.L ?? 0, lambda: view.settings.lambda, k: 0, h: 0, headStart: 0, alpha: ref.shape?.alpha ?? 0, rules: [], movingRange: false };
  const base = (p: SeriesMonitoringView['points'][number], i: number) => ({ index: i, heatId: p.heatId, heatNumber: p.heatNumber, castDate: p.castDate, phase: 'monitoring' as const });
  const high = view.points.flatMap((p, i) => (p.levelSignal === 'high' ? [i] : []));
  const low = view.points.flatMap((p, i) => (p.levelSignal === 'low' ? [i] : []));
  const limit = lv.limit ?? 0;
  const level: ControlChart = {
    ...common,
    kind: 'ewma',
    centre: 0,
    sigma: 1,
    ucl: limit,
    lcl: -limit,
    parameters,
    points: view.points.map((p, i) => ({ ...base(p, i), value: p.level ?? 0, plotted: p.ewma ?? 0, ucl: limit, lcl: -limit })),
    signals: [
      ...(high.length ? [signal('curve_level_high', 'the curve as a whole harder than its reference', high, view)] : []),
      ...(low.length ? [signal('curve_level_low', 'the curve as a whole softer than its reference', low, view)] : []),
    ],
  };
  let shape: ControlChart | null = null;
  if (ref.shape) {
    const ucl = ref.shape.ucl ?? 0;
    const odd = view.points.flatMap((p, i) => (p.shapeSignal ? [i] : []));
    shape = {
      ...common,
      kind: 't2',
      centre: null,
      sigma: null,
      ucl,
      lcl: null,
      parameters,
      points: view.points.map((p, i) => ({ ...base(p, i), value: p.t2 ?? 0, plotted: p.t2 ?? 0, ucl, lcl: null })),
      signals: odd.length ? [signal('curve_shape', 'the shape of the curve differs from its reference', odd, view)] : [],
    };
  }
  return { level, shape };
}
