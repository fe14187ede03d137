// Where each element of a certificate sits within the grade's limits, every element on its own range
// (0 = minimum, or zero content when only a maximum is set; 1 = maximum).
import { frame, PALETTE, type VegaLiteSpec } from './theme.ts';

export interface ChemistryPosition {
  element: string;
  value: number;
  min: number | null;
  max: number | null;
  position: number;
  status: string;
}

export function chemistrySpec(rows: readonly ChemistryPosition[]): VegaLiteSpec {
  const y = { field: 'element', type: 'nominal', title: null, sort: null };
  return frame(
    {
      data: { values: rows.map((r) => ({ ...r, from: 0, to: 1 })) },
      layer: [
        { mark: { type: 'rule', strokeWidth: 6, color: PALETTE.bandFill }, encoding: { y, x: { field: 'from', type: 'quantitative', title: 'Position within the limits (0 = min, 1 = max)', scale: { domain: [-0.25, 1.25], clamp: true } }, x2: { field: 'to' } } },
        {
          mark: { type: 'point', filled: true, size: 90 },
          encoding: {
            y,
            x: { field: 'position', type: 'quantitative' },
            color: { field: 'status', type: 'nominal', title: 'Status', scale: { domain: ['inside', 'within tolerance', 'outside'], range: [PALETTE.navy, PALETTE.plum, PALETTE.amber] } },
            shape: { field: 'status', type: 'nominal', scale: { domain: ['inside', 'within tolerance', 'outside'], range: ['circle', 'square', 'triangle-up'] } },
            tooltip: [
              { field: 'element', title: 'Element' },
              { field: 'value', title: 'Reported %' },
              { field: 'min', title: 'Min %' },
              { field: 'max', title: 'Max %' },
              { field: 'status', title: 'Status' },
            ],
          },
        },
      ],
    },
    { height: Math.max(100, rows.length * 24), description: 'Chemistry within the grade limits' },
  );
}
