// Part-to-band pictures: the bar's cross-section as rings shaded by the equivalent end-quench distance,
// with the asked location drawn as a ring; and the equivalent distance across the radius.
import { frame, PALETTE, SCHEMA, type VegaLiteSpec } from './theme.ts';

export interface RingRow {
  inner: number;
  outer: number;
  distanceMm: number | null;
  label: string;
}

/** Rings from the profile (fraction of radius → distance), shaded by the mean distance of each ring. */
export function ringsOf(profile: ReadonlyArray<{ fraction: number; distanceMm: number | null }>): RingRow[] {
  const sorted = [...profile].sort((a, b) => a.fraction - b.fraction);
  const rows: RingRow[] = [];
  for (let i = 1; i < sorted.length; i++) {
    const a = sorted[i - 1];
    const b = sorted[i];
    const d = a.distanceMm !== null && b.distanceMm !== null ? (a.distanceMm + b.distanceMm) / 2 : null;
    rows.push({ inner: a.fraction, outer: b.fraction, distanceMm: d, label: `${a.fraction.toFixed(2)}–${b.fraction.toFixed(2)} R` });
  }
  return rows;
}

export function sectionSpec(rings: readonly RingRow[], marker: { fraction: number; label: string }, diameterMm: number): VegaLiteSpec {
  const size = 240;
  const radius = { type: 'linear', domain: [0, 1], range: [0, size / 2 - 6], zero: true };
  return {
    $schema: SCHEMA,
    description: `Cross-section of a ${diameterMm} mm bar shaded by equivalent end-quench distance`,
    width: size,
    height: size,
    config: { view: { stroke: null }, font: 'system-ui, -apple-system, Segoe UI, Roboto, sans-serif', legend: { orient: 'bottom', titleFontSize: 12, labelFontSize: 11 } },
    layer: [
      {
        data: { values: rings.filter((r) => r.distanceMm !== null) },
        mark: { type: 'arc', theta: 0, theta2: 2 * Math.PI, stroke: '#ffffff', strokeWidth: 0.5 },
        encoding: {
          radius: { field: 'outer', type: 'quantitative', scale: radius, axis: null, legend: null },
          radius2: { field: 'inner' },
          color: { field: 'distanceMm', type: 'quantitative', title: 'Equivalent distance (mm)', scale: { scheme: 'blues', reverse: true, zero: false } },
          tooltip: [
            { field: 'label', title: 'Ring' },
            { field: 'distanceMm', title: 'Equivalent distance (mm)', format: '.1f' },
          ],
        },
      },
      {
        data: { values: [{ r: Math.max(0.02, marker.fraction), label: marker.label }] },
        mark: { type: 'arc', theta: 0, theta2: 2 * Math.PI, fillOpacity: 0, stroke: PALETTE.amber, strokeWidth: 3, strokeDash: [6, 3] },
        encoding: { radius: { field: 'r', type: 'quantitative', scale: radius, axis: null }, radius2: { field: 'r' }, tooltip: [{ field: 'label', title: 'Asked location' }] },
      },
    ],
  };
}

export function profileSpec(rows: ReadonlyArray<{ fraction: number; distanceMm: number | null; lambda: number | null }>, marker: { fraction: number; distanceMm: number | null }): VegaLiteSpec {
  return frame(
    {
      layer: [
        {
          data: { values: rows.filter((r) => r.distanceMm !== null) },
          mark: { type: 'line', point: true, color: PALETTE.navy },
          encoding: {
            x: { field: 'fraction', type: 'quantitative', title: 'Fraction of the radius (0 centre, 1 surface)', scale: { domain: [0, 1] } },
            y: { field: 'distanceMm', type: 'quantitative', title: 'Equivalent end-quench distance (mm)', scale: { zero: true } },
            tooltip: [
              { field: 'fraction', title: 'r/R' },
              { field: 'distanceMm', title: 'Distance (mm)', format: '.1f' },
              { field: 'lambda', title: 'λ', format: '.2f' },
            ],
          },
        },
        ...(marker.distanceMm !== null
          ? [{ data: { values: [marker] }, mark: { type: 'point', shape: 'diamond', size: 160, filled: true, color: PALETTE.amber }, encoding: { x: { field: 'fraction', type: 'quantitative' }, y: { field: 'distanceMm', type: 'quantitative' } } }]
          : []),
      ],
    },
    { height: 240, description: 'Equivalent end-quench distance across the radius' },
  );
}
