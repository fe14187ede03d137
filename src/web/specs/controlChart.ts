// A control chart for the page: the analysis layer's Vega-Lite spec, made to follow the page width,
// with each signalling point labelled by its rule (N1..N8 for the Nelson rules).
import { controlChartSpec } from '../../analysis/vegaSpecs.ts';
import type { ControlChart } from '../../analysis/controlCharts.ts';
import type { VegaLiteSpec } from './theme.ts';

/** Short name of a signal rule for a label on the chart. */
export function shortRule(rule: string): string {
  const nelson = /^nelson_(\d)$/.exec(rule);
  if (nelson) return `N${nelson[1]}`;
  const names: Record<string, string> = { moving_range: 'MR', ewma_beyond_limit: 'EWMA', cusum_upper: 'C+', cusum_lower: 'C−', t2_beyond_ucl: 'T²' };
  return names[rule] ?? rule;
}

export function pageControlChartSpec(chart: ControlChart, height = 240): VegaLiteSpec {
  const base = controlChartSpec(chart, { height });
  // Each rule is labelled at the first point of every run of consecutive signalling points, so a long
  // EWMA or CUSUM excursion carries one label, not one per heat.
  const short = new Map<number, string[]>();
  for (const s of chart.signals) {
    const fired = new Set(s.points);
    for (const i of s.points) if (!fired.has(i - 1)) short.set(i + 1, [...(short.get(i + 1) ?? []), shortRule(s.rule)]);
  }
  const data = base.data as { values: Array<Record<string, unknown>> };
  const values = data.values.map((v) => ({ ...v, ruleLabel: (short.get(v.index as number) ?? []).join(' ') }));
  const layers = [...(base.layer as Record<string, unknown>[])];
  if (short.size) {
    layers.push({
      transform: [{ filter: "datum.ruleLabel != ''" }],
      mark: { type: 'text', dy: -11, fontSize: 10, fontWeight: 600, color: '#6d2a55' },
      encoding: { x: { field: 'index', type: 'quantitative' }, y: { field: 'plotted', type: 'quantitative' }, text: { field: 'ruleLabel' } },
    });
  }
  const { width: _w, ...rest } = base;
  void _w;
  return { ...rest, width: 'container', autosize: { type: 'fit', contains: 'padding', resize: true }, data: { values }, layer: layers } as VegaLiteSpec;
}
