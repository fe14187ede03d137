// A control chart for the page: the analysis layer's Vega-Lite spec, made to follow the page width,
// with each signalling point labelled by its rule (N1..N8 for the Nelson rules).
import { controlChartSpec } from '../../analysis/vegaSpecs.ts';
import type { ControlChart } from '../../analysis/controlCharts.ts';
import type { VegaLiteSpec } from './theme.ts';

/** Short name of a signal rule for a label on the chart. */
/** Words (our own) for the signal of a chart rule, used as point labels; no rule numbers. */
export const RULE_WORDS: Readonly<Record<string, string>> = Object.freeze({
  nelson_1: 'past 3σ',
  nelson_2: 'nine on one side',
  nelson_3: 'six-heat trend',
  nelson_4: 'see-saw',
  nelson_5: '2 of 3 past 2σ',
  nelson_6: '4 of 5 past 1σ',
  nelson_7: 'hugging the centre',
  nelson_8: 'avoiding the centre',
  moving_range: 'jump between heats',
  ewma_beyond_limit: 'average moved',
  cusum_upper: 'sum climbing',
  cusum_lower: 'sum falling',
  t2_beyond_ucl: 'unusual curve',
  curve_level_high: 'curve level up',
  curve_level_low: 'curve level down',
  curve_shape: 'curve shape changed',
});

export function shortRule(rule: string): string {
  return RULE_WORDS[rule] ?? rule.replace(/_/g, ' ');
}

export function pageControlChartSpec(chart: ControlChart, height = 240, names?: { title: string; subtitle: string; y: string }): VegaLiteSpec {
  const base = controlChartSpec(chart, { height });
  if (names) {
    // Charts that are not one of the library's kinds (the whole-curve level and shape) name themselves.
    (base as Record<string, unknown>).title = { text: names.title, subtitle: names.subtitle };
    for (const layer of base.layer as Array<{ encoding?: { y?: { title?: unknown } } }>) if (layer.encoding?.y && 'title' in layer.encoding.y) layer.encoding.y.title = names.y;
  }
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
