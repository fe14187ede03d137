// Receiving pictures: the chart of the pair bias (mill − plant per heat, its EWMA and limits) and the
// agreement plot of every reading (difference against the level, with the bias and limits of agreement).
import { frame, PALETTE, type VegaLiteSpec } from './theme.ts';

export interface BiasChartRow {
  index: number;
  heatNumber: string;
  castDate: string;
  bias: number;
  ewma: number;
  ucl: number;
  lcl: number;
  centre: number;
  signal: string;
  reference: string;
}

export function biasChartSpec(rows: readonly BiasChartRow[]): VegaLiteSpec {
  const x = { field: 'castDate', type: 'temporal', title: 'Cast date of the heat' };
  const tooltip = [
    { field: 'heatNumber', title: 'Heat' },
    { field: 'castDate', title: 'Cast', type: 'temporal' },
    { field: 'bias', title: 'Mill − plant (HRC)', format: '.2f' },
    { field: 'ewma', title: 'EWMA', format: '.2f' },
    { field: 'reference', title: 'Window' },
  ];
  return frame(
    {
      data: { values: rows },
      layer: [
        { mark: { type: 'line', interpolate: 'step-after', color: PALETTE.charcoal, strokeDash: [4, 3] }, encoding: { x, y: { field: 'ucl', type: 'quantitative' } } },
        { mark: { type: 'line', interpolate: 'step-after', color: PALETTE.charcoal, strokeDash: [4, 3] }, encoding: { x, y: { field: 'lcl', type: 'quantitative' } } },
        { mark: { type: 'line', color: PALETTE.sky }, encoding: { x, y: { field: 'centre', type: 'quantitative' } } },
        {
          mark: { type: 'point', opacity: 0.8 },
          encoding: {
            x,
            y: { field: 'bias', type: 'quantitative', title: 'Mill − plant (HRC)', scale: { zero: false } },
            shape: { field: 'reference', type: 'nominal', title: null, scale: { domain: ['reference pairs', 'judged pairs'], range: ['circle', 'triangle-up'] } },
            color: { value: PALETTE.navy },
            tooltip,
          },
        },
        { mark: { type: 'line', point: { filled: false }, color: PALETTE.amber }, encoding: { x, y: { field: 'ewma', type: 'quantitative' }, tooltip } },
        {
          transform: [{ filter: "datum.signal != ''" }],
          mark: { type: 'text', dy: -12, fontSize: 10, fontWeight: 600, color: '#6d2a55' },
          encoding: { x, y: { field: 'ewma', type: 'quantitative' }, text: { field: 'signal' } },
        },
      ],
    },
    { height: 280, description: 'Pair bias of the mill laboratory against the receiving laboratory, with its EWMA and limits' },
  );
}

export interface AgreementPoint {
  level: number;
  difference: number;
  heatNumber: string;
  distance: string;
  period: string;
}

export function agreementPlotSpec(points: readonly AgreementPoint[], lines: { bias: number; lower: number; upper: number }): VegaLiteSpec {
  const rules = [
    { y: lines.bias, what: 'bias' },
    { y: lines.lower, what: 'limits of agreement' },
    { y: lines.upper, what: 'limits of agreement' },
  ];
  return frame(
    {
      layer: [
        {
          data: { values: points },
          mark: { type: 'point', opacity: 0.55 },
          encoding: {
            x: { field: 'level', type: 'quantitative', title: 'Mean of mill and plant reading (HRC)', scale: { zero: false } },
            y: { field: 'difference', type: 'quantitative', title: 'Mill − plant (HRC)' },
            color: { field: 'period', type: 'nominal', title: null, scale: { range: [PALETTE.navy, PALETTE.amber] } },
            shape: { field: 'period', type: 'nominal', title: null, scale: { range: ['circle', 'triangle-up'] } },
            tooltip: [
              { field: 'heatNumber', title: 'Heat' },
              { field: 'distance', title: 'Distance' },
              { field: 'level', title: 'Level', format: '.1f' },
              { field: 'difference', title: 'Difference', format: '.1f' },
            ],
          },
        },
        {
          data: { values: rules },
          mark: { type: 'rule', color: PALETTE.charcoal },
          encoding: { y: { field: 'y', type: 'quantitative' }, strokeDash: { field: 'what', type: 'nominal', title: null, scale: { domain: ['bias', 'limits of agreement'], range: [[1, 0], [5, 3]] } } },
        },
      ],
    },
    { height: 250, description: 'Agreement plot: difference of every reading against its level' },
  );
}
