// Ready-to-render Vega-Lite v6 specifications of the analysis results (pure: data in, JSON out).
// Palette: our own, built for colour-vision deficiencies (after the Okabe & Ito 2008 principle of hues
// that differ in lightness as well as hue); every status is carried by shape or dash as well as colour.
import type { ControlChart } from './controlCharts.ts';
import type { CapabilityStudy } from './capabilityStudy.ts';
import type { CurvePrediction } from './prediction.ts';

export const ANALYSIS_PALETTE = {
  data: '#1f5f99', // deep blue: observations
  centre: '#3d3d3d', // near black: centre line
  limit: '#c8691c', // burnt orange: control limits
  signal: '#b03a7a', // magenta-purple: points that signal (also drawn as diamonds)
  baseline: '#e9e1c8', // sand: baseline window shading
  band: '#d5e4f0', // pale blue: specification band
  predicted: '#2f8f6b', // teal green: predicted curve and its interval
  reported: '#1f5f99',
  good: '#2f8f6b',
} as const;

export type VegaLiteSpec = Record<string, unknown> & { $schema: string };
const SCHEMA = 'https://vega.github.io/schema/vega-lite/v6.json';
const config = {
  font: 'Helvetica, Arial, sans-serif',
  view: { stroke: null },
  axis: { gridColor: '#e6e6e6', labelFontSize: 11, titleFontSize: 12 },
  legend: { orient: 'bottom' },
};

const round = (v: number | null | undefined, d = 4) => (v === null || v === undefined || !Number.isFinite(v) ? null : Number(v.toFixed(d)));

const plottedTitle: Record<ControlChart['kind'], string> = {
  individuals: 'HRC',
  ewma: 'EWMA of HRC',
  cusum: 'CUSUM (sigma units)',
  t2: 'Hotelling T²',
};

const CHART_NAMES: Record<ControlChart['kind'], string> = { individuals: 'Individuals', ewma: 'EWMA', cusum: 'CUSUM', t2: 'Hotelling T²' };

/** Control chart: plotted statistic in time order, centre, limits (time-varying where they are), signals. */
export function controlChartSpec(chart: ControlChart, options: { width?: number; height?: number } = {}): VegaLiteSpec {
  const signalled = new Map<number, string[]>();
  for (const s of chart.signals) for (const i of s.points) signalled.set(i, [...(signalled.get(i) ?? []), s.rule]);
  const values = chart.points.map((p) => ({
    index: p.index + 1,
    heat: p.heatNumber,
    castDate: p.castDate,
    value: round(p.value),
    plotted: round(p.plotted),
    lower: round(p.plottedLower),
    ucl: round(p.ucl),
    lcl: round(p.lcl),
    phase: p.phase,
    signal: signalled.has(p.index) ? 'signal' : 'in control',
    rules: (signalled.get(p.index) ?? []).join(', '),
  }));
  const x = { field: 'index', type: 'quantitative', title: 'Heat (time order)', axis: { tickMinStep: 1 } };
  const tooltip = [
    { field: 'heat', title: 'Heat' },
    { field: 'castDate', title: 'Cast date' },
    { field: 'value', title: chart.kind === 't2' ? 'T²' : 'HRC' },
    { field: 'plotted', title: plottedTitle[chart.kind] },
    { field: 'rules', title: 'Signals' },
  ];
  const layers: Record<string, unknown>[] = [];
  const firstMonitoring = values.find((v) => v.phase === 'monitoring');
  if (firstMonitoring && values[0].phase === 'baseline') {
    layers.push({ data: { values: [{ from: 0.5, to: firstMonitoring.index - 0.5 }] }, mark: { type: 'rect', color: ANALYSIS_PALETTE.baseline, opacity: 0.6 }, encoding: { x: { field: 'from', type: 'quantitative' }, x2: { field: 'to' } } });
  }
  layers.push({ mark: { type: 'line', color: ANALYSIS_PALETTE.limit, strokeDash: [6, 3], interpolate: 'step-after' }, encoding: { x, y: { field: 'ucl', type: 'quantitative' } } });
  if (values.some((v) => v.lcl !== null)) layers.push({ mark: { type: 'line', color: ANALYSIS_PALETTE.limit, strokeDash: [6, 3], interpolate: 'step-after' }, encoding: { x, y: { field: 'lcl', type: 'quantitative' } } });
  if (chart.centre !== null) layers.push({ data: { values: [{ centre: round(chart.centre) }] }, mark: { type: 'rule', color: ANALYSIS_PALETTE.centre }, encoding: { y: { field: 'centre', type: 'quantitative' } } });
  layers.push({ mark: { type: 'line', color: ANALYSIS_PALETTE.data }, encoding: { x, y: { field: 'plotted', type: 'quantitative', title: plottedTitle[chart.kind], scale: { zero: false } } } });
  if (chart.kind === 'cusum') layers.push({ mark: { type: 'line', color: ANALYSIS_PALETTE.data, strokeDash: [2, 2] }, encoding: { x, y: { field: 'lower', type: 'quantitative' } } });
  layers.push({
    mark: { type: 'point', filled: true },
    encoding: {
      x,
      y: { field: 'plotted', type: 'quantitative' },
      color: { field: 'signal', type: 'nominal', scale: { domain: ['in control', 'signal'], range: [ANALYSIS_PALETTE.data, ANALYSIS_PALETTE.signal] }, title: null },
      shape: { field: 'signal', type: 'nominal', scale: { domain: ['in control', 'signal'], range: ['circle', 'diamond'] }, title: null },
      size: { condition: { test: "datum.signal === 'signal'", value: 90 }, value: 30 },
      tooltip,
    },
  });
  const where = chart.kind === 't2' ? 'whole curve' : (chart.label ?? `${chart.distanceMm} mm`);
  const origin = chart.limitsFrom.type === 'frozen_baseline' ? `frozen baseline #${chart.limitsFrom.baselineId}` : 'phase I limits on this window';
  return {
    $schema: SCHEMA,
    title: { text: `${CHART_NAMES[chart.kind]} chart: ${chart.mill} ${chart.grade}, ${where}`, subtitle: `Limits from ${origin}` },
    width: options.width ?? 640,
    height: options.height ?? 240,
    data: { values },
    layer: layers,
    config,
  };
}

/** Ppk per band distance (with its 95 % interval) against the common 1.33 reference line. */
export function capabilitySpec(study: CapabilityStudy, options: { width?: number; height?: number } = {}): VegaLiteSpec {
  // Several mills: no Ppk over the mixture; each mill's own Ppk per distance, told apart by colour and shape.
  const byMill = study.distances.some((d) => d.supply);
  const values = byMill
    ? study.distances.flatMap((d) => (d.supply?.mills ?? []).map((m) => ({ distance: d.label ?? `${d.distanceMm} mm`, order: d.distanceMm, mill: m.mill, ppk: round(m.ppk, 3), lower: round(m.ppkInterval.lower, 3), upper: round(m.ppkInterval.upper, 3), n: m.n })))
    : study.distances
        .filter((d) => d.result)
        .map((d) => ({ distance: d.label ?? `${d.distanceMm} mm`, order: d.distanceMm, ppk: round(d.result!.ppk, 3), lower: round(d.result!.intervals.ppk.lower, 3), upper: round(d.result!.intervals.ppk.upper, 3), n: d.n }));
  const x = { field: 'distance', type: 'ordinal', sort: { field: 'order' }, title: 'Distance from quenched end' };
  const perMill = byMill ? { color: { field: 'mill', type: 'nominal', title: 'Mill' }, shape: { field: 'mill', type: 'nominal' }, xOffset: { field: 'mill' } } : {};
  return {
    $schema: SCHEMA,
    title: { text: `Ppk by distance: ${study.mill ?? 'all mills'} ${study.grade}`, subtitle: byMill ? 'Each mill on its own (no index over the mixture); bars: 95 % interval (Bissell 1990); line: Ppk 1.33' : 'Bars: 95 % interval (Bissell 1990); line: Ppk 1.33' },
    width: options.width ?? 480,
    height: options.height ?? 220,
    data: { values },
    layer: [
      { mark: { type: 'rule', color: ANALYSIS_PALETTE.data }, encoding: { x, y: { field: 'lower', type: 'quantitative', title: 'Ppk' }, y2: { field: 'upper' }, ...perMill } },
      { mark: { type: 'point', filled: true, color: ANALYSIS_PALETTE.data, size: 60 }, encoding: { x, y: { field: 'ppk', type: 'quantitative' }, tooltip: [...(byMill ? [{ field: 'mill' }] : []), { field: 'distance' }, { field: 'ppk' }, { field: 'lower' }, { field: 'upper' }, { field: 'n' }], ...perMill } },
      { data: { values: [{ ref: 1.33 }] }, mark: { type: 'rule', color: ANALYSIS_PALETTE.limit, strokeDash: [6, 3] }, encoding: { y: { field: 'ref', type: 'quantitative' } } },
    ],
    config,
  };
}

/** Band, reported curve(s) and the predicted curve with its interval, against distance. */
export function curveSpec(
  prediction: CurvePrediction | null,
  reported: Array<{ name: string; readings: Array<{ distanceMm: number; hrc: number }> }>,
  options: { width?: number; height?: number; title?: string } = {},
): VegaLiteSpec {
  const band = (prediction?.band?.points ?? []).map((p) => ({ mm: p.distanceMm, min: p.minHrc, max: p.maxHrc }));
  const predicted = (prediction?.points ?? []).map((p) => ({ mm: p.distanceMm, hrc: round(p.hrc, 2), lower: round(p.lower, 2), upper: round(p.upper, 2) }));
  const curves = reported.flatMap((r) => r.readings.map((x) => ({ mm: x.distanceMm, hrc: x.hrc, test: r.name })));
  const x = { field: 'mm', type: 'quantitative', title: 'Distance from quenched end (mm)' };
  const y = { type: 'quantitative', title: 'HRC', scale: { zero: false } };
  const layers: Record<string, unknown>[] = [];
  if (band.length) {
    layers.push({ data: { values: band.filter((b) => b.max !== null) }, mark: { type: 'line', color: ANALYSIS_PALETTE.limit, strokeDash: [4, 3] }, encoding: { x, y: { ...y, field: 'max' } } });
    layers.push({ data: { values: band.filter((b) => b.min !== null) }, mark: { type: 'line', color: ANALYSIS_PALETTE.limit, strokeDash: [4, 3] }, encoding: { x, y: { ...y, field: 'min' } } });
  }
  if (predicted.some((p) => p.lower !== null)) {
    layers.push({ data: { values: predicted.filter((p) => p.lower !== null) }, mark: { type: 'area', color: ANALYSIS_PALETTE.predicted, opacity: 0.2 }, encoding: { x, y: { ...y, field: 'lower' }, y2: { field: 'upper' } } });
  }
  if (predicted.length) layers.push({ data: { values: predicted }, mark: { type: 'line', color: ANALYSIS_PALETTE.predicted, point: { shape: 'square' } }, encoding: { x, y: { ...y, field: 'hrc' } } });
  if (curves.length) {
    layers.push({
      data: { values: curves },
      mark: { type: 'line', point: true },
      encoding: { x, y: { ...y, field: 'hrc' }, color: { field: 'test', type: 'nominal', scale: { range: [ANALYSIS_PALETTE.reported, ANALYSIS_PALETTE.signal, '#6b6b6b'] }, title: 'Reported' }, tooltip: [{ field: 'test' }, { field: 'mm' }, { field: 'hrc' }] },
    });
  }
  return {
    $schema: SCHEMA,
    title: { text: options.title ?? 'End-quench curve', subtitle: 'Dashed: band; green: predicted with its interval' },
    width: options.width ?? 480,
    height: options.height ?? 260,
    layer: layers.length ? layers : [{ data: { values: [] }, mark: 'point' }],
    config,
  };
}
