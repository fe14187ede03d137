// Chart of the Mills overview: the lowest Ppk of each mill and grade with its confidence interval,
// against the 1.33 and 1.00 reference lines (common practice for supplier capability targets).
import { frame, PALETTE, type VegaLiteSpec } from './theme.ts';

export interface PpkRow {
  series: string;
  mill: string;
  grade: string;
  distance: string;
  ppk: number;
  lower: number;
  upper: number;
}

export function lowestPpkSpec(rows: readonly PpkRow[]): VegaLiteSpec {
  const y = { field: 'series', type: 'nominal', title: null, sort: null };
  return frame(
    {
      data: { values: rows },
      layer: [
        { data: { values: [{ ref: 1.33, what: 'target 1.33' }, { ref: 1, what: '1.00' }] }, mark: { type: 'rule', strokeDash: [4, 3], color: PALETTE.charcoal }, encoding: { x: { field: 'ref', type: 'quantitative' } } },
        { mark: { type: 'rule', strokeWidth: 2 }, encoding: { y, x: { field: 'lower', type: 'quantitative', title: 'Lowest Ppk (95% interval)' }, x2: { field: 'upper' }, color: { field: 'mill', type: 'nominal', title: 'Mill' } } },
        {
          mark: { type: 'point', filled: true, size: 80, shape: 'diamond' },
          encoding: {
            y,
            x: { field: 'ppk', type: 'quantitative' },
            color: { field: 'mill', type: 'nominal', title: 'Mill' },
            tooltip: [
              { field: 'series', title: 'Mill · grade' },
              { field: 'distance', title: 'At' },
              { field: 'ppk', title: 'Ppk', format: '.2f' },
              { field: 'lower', title: 'Lower 95%', format: '.2f' },
              { field: 'upper', title: 'Upper 95%', format: '.2f' },
            ],
          },
        },
      ],
    },
    { height: Math.max(120, rows.length * 26), description: 'Lowest Ppk per mill and grade with 95% intervals' },
  );
}
