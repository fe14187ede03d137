// End-quench curves over their band: the band as an envelope (shaded where it has both limits, a line
// for each limit), each curve as a line with its readings, and optionally a predicted curve with its
// prediction interval.
import { frame, PALETTE, type VegaLiteSpec } from './theme.ts';

export interface BandRow {
  mm: number;
  label: string;
  min: number | null;
  max: number | null;
}

export interface CurveRow {
  /** Which curve (a test, or a heat on the grade page). */
  curve: string | number;
  /** Colour group: test source on the heat sheet, mill on the grade page. */
  group: string;
  heat: string;
  mm: number;
  label?: string;
  hrc: number;
  /** Outside the band at this reading. */
  outside?: boolean;
}

export interface PredictedRow {
  mm: number;
  label: string;
  hrc: number;
  lower: number | null;
  upper: number | null;
}

export interface CurvesSpecOptions {
  title: string;
  /** Many curves: thin, translucent lines without point marks. */
  many?: boolean;
  groupTitle?: string;
  height?: number;
}

const X = { field: 'mm', type: 'quantitative', title: 'Distance from the quenched end (mm)', scale: { zero: true } };
const BASE_Y: Record<string, unknown> = { type: 'quantitative', title: 'Hardness (HRC)', scale: { zero: false } };

export function curvesSpec(band: readonly BandRow[], curves: readonly CurveRow[], predicted: readonly PredictedRow[] | null, options: CurvesSpecOptions): VegaLiteSpec {
  const layers: Record<string, unknown>[] = [];
  // Hardness below 0 HRC does not exist: a prediction interval reaching below it is cut at the axis.
  const Y = (predicted ?? []).some((p) => p.lower !== null && p.lower < 0) ? { ...BASE_Y, scale: { zero: false, domainMin: 0 } } : BASE_Y;
  const twoSided = band.filter((b) => b.min !== null && b.max !== null);
  if (twoSided.length >= 2) {
    layers.push({ data: { name: 'band' }, transform: [{ filter: 'datum.min != null && datum.max != null' }], mark: { type: 'area', color: PALETTE.bandFill, opacity: 0.9 }, encoding: { x: X, y: { field: 'min', ...Y }, y2: { field: 'max' } } });
  }
  for (const limit of ['min', 'max'] as const) {
    if (band.some((b) => b[limit] !== null)) {
      layers.push({
        data: { name: 'band' },
        transform: [{ filter: `datum.${limit} != null` }],
        mark: { type: 'line', color: PALETTE.navy, strokeDash: [5, 3], point: { filled: false, size: 30, color: PALETTE.navy } },
        encoding: {
          x: X,
          y: { field: limit, ...Y },
          tooltip: [
            { field: 'label', title: 'Band point' },
            { field: limit, title: `Band ${limit} HRC` },
          ],
        },
      });
    }
  }
  if (predicted && predicted.length) {
    if (predicted.some((p) => p.lower !== null && p.upper !== null)) {
      layers.push({
        data: { name: 'predicted' },
        transform: [{ filter: 'datum.lower != null && datum.upper != null' }],
        mark: { type: 'area', color: PALETTE.plum, opacity: 0.16, clip: true },
        encoding: { x: X, y: { field: 'lower', ...Y }, y2: { field: 'upper' } },
      });
    }
    layers.push({
      data: { name: 'predicted' },
      mark: { type: 'line', color: PALETTE.plum, strokeWidth: 2.2, strokeDash: [2, 2] },
      encoding: {
        x: X,
        y: { field: 'hrc', ...Y },
        tooltip: [
          { field: 'label', title: 'Distance' },
          { field: 'hrc', title: 'Predicted HRC', format: '.1f' },
          { field: 'lower', title: 'Interval low', format: '.1f' },
          { field: 'upper', title: 'Interval high', format: '.1f' },
        ],
      },
    });
  }
  const colour = { field: 'group', type: 'nominal', title: options.groupTitle ?? 'Curve', legend: { columns: options.many ? 3 : 1 } };
  layers.push({
    data: { name: 'curves' },
    mark: options.many ? { type: 'line', strokeWidth: 1, opacity: 0.35 } : { type: 'line', strokeWidth: 2 },
    encoding: { x: X, y: { field: 'hrc', ...Y }, color: colour, detail: { field: 'curve' } },
  });
  layers.push({
    data: { name: 'curves' },
    mark: { type: 'point', filled: true, opacity: options.many ? 0.5 : 1 },
    encoding: {
      size: { condition: { test: 'datum.outside', value: options.many ? 60 : 130 }, value: options.many ? 14 : 40 },
      x: X,
      y: { field: 'hrc', ...Y },
      color: colour,
      shape: { field: 'outside', type: 'nominal', title: 'Reading', scale: { domain: [false, true], range: ['circle', 'triangle-up'] }, legend: { labelExpr: "datum.label == 'true' ? 'outside the band' : 'inside the band'" } },
      tooltip: [
        { field: 'heat', title: 'Heat' },
        { field: 'curve', title: 'Curve' },
        { field: 'label', title: 'Distance' },
        { field: 'hrc', title: 'HRC' },
      ],
    },
  });
  return frame(
    {
      datasets: { band, curves, predicted: predicted ?? [] },
      layer: layers,
    },
    { height: options.height ?? 320, description: options.title },
  );
}
