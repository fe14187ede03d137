// Which distances drive a curve-level signal (pure): the per-distance charts kept as explanation.
// Level: the EWMA (same λ as the level chart; Roberts 1959) of each distance's standardised deviation
// over the heats after the reference, at the signalling heat, largest first. Shape: each distance's
// departure from the curve's own level at that heat, d_j − u (the part the shape statistic charts),
// largest first. In reference SDs of that distance; HRC beside.
import type { CurveSeries } from './curveSeries.ts';

export interface DrivingDistance {
  distanceMm: number;
  label: string;
  /** Standardised value (level: EWMA of d_j; shape: d_j − u), in SDs of the distance. */
  sds: number;
  hrc: number;
  referenceMeanHrc: number;
}

const r = (x: number, n = 3) => Number(x.toFixed(n));

export function explainLevel(series: CurveSeries, heatId: number): DrivingDistance[] {
  const m = series.monitoring;
  if (!m.reference) return [];
  const lambda = m.reference.location.design.lambda;
  const z = series.distancesMm.map(() => 0);
  for (const h of m.monitored) {
    h.point.deviations.forEach((d, j) => (z[j] = lambda * d + (1 - lambda) * z[j]));
    if (h.heatId === heatId) return ranked(series, h.row, z);
  }
  return [];
}

export function explainShape(series: CurveSeries, heatId: number): DrivingDistance[] {
  const h = series.monitoring.monitored.find((x) => x.heatId === heatId);
  if (!h) return [];
  const u = h.point.deviations.reduce((s, x) => s + x, 0) / h.point.deviations.length;
  return ranked(series, h.row, h.point.deviations.map((d) => d - u));
}

function ranked(series: CurveSeries, row: readonly number[], values: readonly number[]): DrivingDistance[] {
  const ref = series.monitoring.reference!;
  return series.distancesMm
    .map((d, j) => ({ distanceMm: d, label: series.labels[j], sds: r(values[j]), hrc: row[j], referenceMeanHrc: r(ref.means[j], 2) }))
    .sort((a, b) => Math.abs(b.sds) - Math.abs(a.sds));
}
