// Band trial pictures: the share of heats each mill would fail under the proposed band beside the band
// in force, and the two bands drawn over each other.
import { frame, PALETTE, type VegaLiteSpec } from './theme.ts';

export function failingShareSpec(rows: ReadonlyArray<{ mill: string; band: string; share: number; failing: number; heats: number }>): VegaLiteSpec {
  return frame(
    {
      data: { values: rows },
      mark: { type: 'bar' },
      encoding: {
        y: { field: 'mill', type: 'nominal', title: null },
        yOffset: { field: 'band', type: 'nominal' },
        x: { field: 'share', type: 'quantitative', title: 'Heats that would fail', axis: { format: '%' } },
        color: { field: 'band', type: 'nominal', title: null, scale: { domain: ['band in force', 'proposed band'], range: [PALETTE.sky, PALETTE.amber] } },
        tooltip: [
          { field: 'mill', title: 'Mill' },
          { field: 'band', title: 'Band' },
          { field: 'failing', title: 'Heats failing' },
          { field: 'heats', title: 'Heats' },
          { field: 'share', title: 'Share', format: '.1%' },
        ],
      },
    },
    { height: Math.max(120, new Set(rows.map((r) => r.mill)).size * 54), description: 'Share of heats failing, proposed against current band' },
  );
}

export function bandsSpec(rows: ReadonlyArray<{ band: string; mm: number; label: string; min: number | null; max: number | null }>): VegaLiteSpec {
  const x = { field: 'mm', type: 'quantitative', title: 'Distance from the quenched end (mm)' };
  const colour = { field: 'band', type: 'nominal', title: null, scale: { domain: ['band in force', 'proposed band'], range: [PALETTE.navy, PALETTE.amber] } };
  const tooltip = [
    { field: 'band', title: 'Band' },
    { field: 'label', title: 'Distance' },
    { field: 'min', title: 'Min HRC' },
    { field: 'max', title: 'Max HRC' },
  ];
  return frame(
    {
      data: { values: rows },
      layer: [
        { transform: [{ filter: 'datum.max != null' }], mark: { type: 'line', point: true }, encoding: { x, y: { field: 'max', type: 'quantitative', title: 'HRC', scale: { zero: false } }, color: colour, tooltip } },
        { transform: [{ filter: 'datum.min != null' }], mark: { type: 'line', point: true, strokeDash: [5, 3] }, encoding: { x, y: { field: 'min', type: 'quantitative' }, color: colour, tooltip } },
      ],
    },
    { height: 240, description: 'Proposed band against the band in force' },
  );
}
