// Capability pictures of one distance: a histogram with the band limits and the fitted normal, and a
// normal probability plot. Bins are counted here so the fitted normal can be drawn on the same count
// scale: expected count in [a, b) = n·(Φ((b−μ)/σ) − Φ((a−μ)/σ)) with Φ from src/stats/distributions.ts.
// Plotting positions of the probability plot: Blom (1958), p_i = (i − 3/8)/(n + 1/4).
import { normalCdf, normalQuantile } from '../../stats/distributions.ts';
import { capabilitySpec } from '../../analysis/vegaSpecs.ts';
import type { CapabilityStudy } from '../../analysis/capabilityStudy.ts';
import { frame, PALETTE, type VegaLiteSpec } from './theme.ts';

export interface HistogramBin {
  from: number;
  to: number;
  count: number;
}

/** The step the readings were reported in: 1 HRC when all are whole, 0.5 when all are halves, else 0.1. */
export function readingStep(values: readonly number[]): number {
  const on = (step: number) => values.every((v) => Math.abs(v / step - Math.round(v / step)) < 1e-9);
  return on(1) ? 1 : on(0.5) ? 0.5 : 0.1;
}

/** Bin width: the reading step (so no bin falls between two possible readings), widened to whole
 * multiples of it until there are at most 30 bins. */
export function binWidth(values: readonly number[]): number {
  const step = readingStep(values);
  const span = Math.max(...values) - Math.min(...values);
  let width = step;
  while (span / width > 30) width += step;
  return width;
}

/** Counts in bins of a fixed width, aligned on multiples of the width and centred on them. */
export function histogramBins(values: readonly number[], width: number): HistogramBin[] {
  if (values.length === 0) return [];
  const start = Math.floor(Math.min(...values) / width - 0.5) * width + width / 2;
  const end = Math.max(...values);
  const bins: HistogramBin[] = [];
  for (let a = start; a <= end; a += width) bins.push({ from: a, to: a + width, count: 0 });
  for (const v of values) {
    const i = Math.min(bins.length - 1, Math.floor((v - start) / width));
    bins[i].count++;
  }
  return bins;
}

/** Expected counts of the fitted normal on a fine grid, per bin width (a smooth curve over the bars). */
export function fittedNormalCurve(n: number, mean: number, sd: number, width: number, from: number, to: number, steps = 80): Array<{ x: number; expected: number }> {
  const out: Array<{ x: number; expected: number }> = [];
  for (let i = 0; i <= steps; i++) {
    const x = from + ((to - from) * i) / steps;
    out.push({ x, expected: n * (normalCdf((x + width / 2 - mean) / sd) - normalCdf((x - width / 2 - mean) / sd)) });
  }
  return out;
}

export function histogramSpec(values: readonly number[], fit: { mean: number; sd: number }, limits: { lsl: number | null; usl: number | null }, title: string): VegaLiteSpec {
  const width = binWidth(values);
  const bins = histogramBins(values, width);
  const lo = Math.min(bins[0].from, limits.lsl ?? Infinity, fit.mean - 3.5 * fit.sd);
  const hi = Math.max(bins[bins.length - 1].to, limits.usl ?? -Infinity, fit.mean + 3.5 * fit.sd);
  const curve = fittedNormalCurve(values.length, fit.mean, fit.sd, width, lo, hi);
  const limitRows = [
    ...(limits.lsl === null ? [] : [{ at: limits.lsl, what: `band min ${limits.lsl}` }]),
    ...(limits.usl === null ? [] : [{ at: limits.usl, what: `band max ${limits.usl}` }]),
  ];
  const x = { type: 'quantitative', title: 'HRC', scale: { domain: [lo, hi], nice: false } };
  return frame(
    {
      layer: [
        { data: { values: bins }, mark: { type: 'rect', color: PALETTE.sky, stroke: '#ffffff', strokeWidth: 0.5 }, encoding: { x: { field: 'from', ...x }, x2: { field: 'to' }, y: { field: 'count', type: 'quantitative', title: 'Heats' }, tooltip: [{ field: 'from', title: 'From HRC' }, { field: 'to', title: 'To HRC' }, { field: 'count', title: 'Heats' }] } },
        { data: { values: curve }, mark: { type: 'line', color: PALETTE.navy, strokeWidth: 2 }, encoding: { x: { field: 'x', ...x }, y: { field: 'expected', type: 'quantitative' } } },
        ...(limitRows.length
          ? [
              { data: { values: limitRows }, mark: { type: 'rule', color: PALETTE.amber, strokeWidth: 2.5, strokeDash: [6, 3] }, encoding: { x: { field: 'at', ...x } } },
              // Labels inside the plot: the minimum's to the right of its line, the maximum's to the left.
              ...limitRows.map((row, i) => ({
                data: { values: [row] },
                mark: { type: 'text', color: '#7a4a0c', align: i === 0 && limits.lsl !== null ? 'left' : 'right', dx: i === 0 && limits.lsl !== null ? 3 : -3, fontWeight: 600, baseline: 'top' },
                encoding: { x: { field: 'at', ...x }, y: { value: 4 }, text: { field: 'what' } },
              })),
            ]
          : []),
      ],
    },
    { height: 240, description: title },
  );
}

/** Blom plotting positions and the matching normal quantiles for sorted values. */
export function probabilityPoints(values: readonly number[]): Array<{ value: number; z: number; p: number }> {
  const sorted = [...values].sort((a, b) => a - b);
  const n = sorted.length;
  return sorted.map((value, i) => {
    const p = (i + 1 - 0.375) / (n + 0.25);
    return { value, z: normalQuantile(p), p };
  });
}

export function probabilityPlotSpec(values: readonly number[], fit: { mean: number; sd: number }, title: string): VegaLiteSpec {
  const points = probabilityPoints(values);
  const zs = [points[0].z, points[points.length - 1].z];
  const line = zs.map((z) => ({ z, value: fit.mean + fit.sd * z }));
  return frame(
    {
      layer: [
        { data: { values: line }, mark: { type: 'line', color: PALETTE.amber, strokeDash: [6, 3] }, encoding: { x: { field: 'z', type: 'quantitative', title: 'Normal quantile' }, y: { field: 'value', type: 'quantitative', title: 'HRC', scale: { zero: false } } } },
        { data: { values: points }, mark: { type: 'point', filled: true, color: PALETTE.navy, size: 22, opacity: 0.8 }, encoding: { x: { field: 'z', type: 'quantitative' }, y: { field: 'value', type: 'quantitative' }, tooltip: [{ field: 'value', title: 'HRC' }, { field: 'p', title: 'Plotting position', format: '.3f' }] } },
      ],
    },
    { height: 240, description: title },
  );
}

/** The analysis layer's Ppk-by-distance spec, following the page width. */
export function pagePpkSpec(study: CapabilityStudy): VegaLiteSpec {
  const { width: _w, ...rest } = capabilitySpec(study, { height: 220 });
  void _w;
  return { ...rest, width: 'container', autosize: { type: 'fit', contains: 'padding', resize: true } } as VegaLiteSpec;
}
