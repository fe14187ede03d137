// Pictures of a chemistry model at one distance: coefficients with intervals, fitted against reported
// hardness, residuals in cast order, and the plant model's error against the published predictor's.
import { frame, PALETTE, type VegaLiteSpec } from './theme.ts';

export function coefficientSpec(rows: ReadonlyArray<{ term: string; estimate: number; lower: number; upper: number }>): VegaLiteSpec {
  const y = { field: 'term', type: 'nominal', title: null, sort: null };
  const x = { type: 'quantitative', title: 'Coefficient with 95% interval (symmetric-log scale)', scale: { type: 'symlog', constant: 1 } };
  return frame(
    {
      data: { values: rows },
      layer: [
        { data: { values: [{ zero: 0 }] }, mark: { type: 'rule', color: PALETTE.charcoal }, encoding: { x: { field: 'zero', ...x } } },
        { mark: { type: 'rule', strokeWidth: 2, color: PALETTE.navy }, encoding: { y, x: { field: 'lower', ...x }, x2: { field: 'upper' } } },
        { mark: { type: 'point', filled: true, size: 70, shape: 'diamond', color: PALETTE.navy }, encoding: { y, x: { field: 'estimate', ...x }, tooltip: [{ field: 'term' }, { field: 'estimate', format: '.4g' }, { field: 'lower', format: '.4g' }, { field: 'upper', format: '.4g' }] } },
      ],
    },
    { height: Math.max(120, rows.length * 26), description: 'Coefficients with 95% intervals' },
  );
}

export interface FitRow {
  heat: string;
  castDate: string;
  reported: number;
  fitted: number;
  residual: number;
}

export function fittedVsReportedSpec(rows: readonly FitRow[]): VegaLiteSpec {
  const all = rows.flatMap((r) => [r.reported, r.fitted]);
  const lo = Math.floor(Math.min(...all));
  const hi = Math.ceil(Math.max(...all));
  const scale = { domain: [lo, hi], zero: false };
  return frame(
    {
      layer: [
        { data: { values: [{ a: lo, b: lo }, { a: hi, b: hi }] }, mark: { type: 'line', color: PALETTE.amber, strokeDash: [6, 3] }, encoding: { x: { field: 'a', type: 'quantitative', title: 'Predicted HRC', scale }, y: { field: 'b', type: 'quantitative', title: 'Reported HRC', scale } } },
        {
          data: { values: rows },
          mark: { type: 'point', filled: true, size: 24, opacity: 0.7, color: PALETTE.navy },
          encoding: { x: { field: 'fitted', type: 'quantitative', scale }, y: { field: 'reported', type: 'quantitative', scale }, tooltip: [{ field: 'heat', title: 'Heat' }, { field: 'castDate', title: 'Cast' }, { field: 'reported', title: 'Reported' }, { field: 'fitted', title: 'Predicted', format: '.1f' }] },
        },
      ],
    },
    { height: 260, description: 'Predicted against reported hardness' },
  );
}

export function residualsByDateSpec(rows: readonly FitRow[], rmse: number): VegaLiteSpec {
  const refs = [
    { y: 0, what: 'zero' },
    { y: 2 * rmse, what: '+2 RMSE' },
    { y: -2 * rmse, what: '−2 RMSE' },
  ];
  return frame(
    {
      layer: [
        { data: { values: refs }, mark: { type: 'rule', color: PALETTE.charcoal, strokeDash: [4, 3] }, encoding: { y: { field: 'y', type: 'quantitative' } } },
        {
          data: { values: rows },
          mark: { type: 'point', filled: true, size: 22, opacity: 0.75, color: PALETTE.plum },
          encoding: { x: { field: 'castDate', type: 'temporal', title: 'Cast date' }, y: { field: 'residual', type: 'quantitative', title: 'Reported − predicted (HRC)' }, tooltip: [{ field: 'heat', title: 'Heat' }, { field: 'castDate', title: 'Cast' }, { field: 'residual', title: 'Residual', format: '.2f' }] },
        },
      ],
    },
    { height: 220, description: 'Residuals by cast date' },
  );
}

export function comparisonSpec(rows: ReadonlyArray<{ distance: string; mm: number; which: string; rmse: number }>): VegaLiteSpec {
  return frame(
    {
      data: { values: rows },
      mark: { type: 'line', point: { filled: true, size: 50 } },
      encoding: {
        x: { field: 'mm', type: 'quantitative', title: 'Distance from the quenched end (mm)' },
        y: { field: 'rmse', type: 'quantitative', title: 'Prediction error, RMSE (HRC)' },
        color: { field: 'which', type: 'nominal', title: null, scale: { range: [PALETTE.navy, PALETTE.amber] } },
        strokeDash: { field: 'which', type: 'nominal', scale: { range: [[1, 0], [5, 3]] } },
        tooltip: [{ field: 'distance', title: 'Distance' }, { field: 'which', title: 'Predictor' }, { field: 'rmse', title: 'RMSE', format: '.2f' }],
      },
    },
    { height: 240, description: 'Plant model against the published predictor' },
  );
}
