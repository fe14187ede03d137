// Every version of a grade's band: its minimum and maximum lines, one colour per version.
import { frame, type VegaLiteSpec } from './theme.ts';

export interface BandVersionPoint {
  version: string;
  mm: number;
  label: string;
  min: number | null;
  max: number | null;
}

export function bandVersionsSpec(points: readonly BandVersionPoint[]): VegaLiteSpec {
  const x = { field: 'mm', type: 'quantitative', title: 'Distance from the quenched end (mm)' };
  const colour = { field: 'version', type: 'nominal', title: 'Version' };
  const tooltip = [
    { field: 'version', title: 'Version' },
    { field: 'label', title: 'Distance' },
    { field: 'min', title: 'Min HRC' },
    { field: 'max', title: 'Max HRC' },
  ];
  return frame(
    {
      data: { values: points },
      layer: [
        { transform: [{ filter: 'datum.max != null' }], mark: { type: 'line', point: true }, encoding: { x, y: { field: 'max', type: 'quantitative', title: 'HRC', scale: { zero: false } }, color: colour, tooltip } },
        { transform: [{ filter: 'datum.min != null' }], mark: { type: 'line', point: true, strokeDash: [5, 3] }, encoding: { x, y: { field: 'min', type: 'quantitative' }, color: colour, tooltip } },
      ],
    },
    { height: 240, description: 'Band versions' },
  );
}
