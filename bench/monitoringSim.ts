// Seeded simulation of end-quench curve series for the monitoring benchmark (invented process, not a
// mill's data): 15 ISO 642 distances, whole-HRC readings, a heat-level factor shared by the distances
// (weight 0.8) with AR(1) noise along the curve (ρ = 0.7), the factor AR(1) over heats with φ.
import { createRng, type Rng } from '../src/stats/random.ts';
import type { MonitoredHeat } from '../src/analysis/curveMonitor.ts';

export const DISTANCES = [1.5, 3, 5, 7, 9, 11, 13, 15, 20, 25, 30, 35, 40, 45, 50];
const MEAN = DISTANCES.map((d) => 28 + 18 * Math.exp(-d / 14));
export const SIGMA = DISTANCES.map(() => 1.6);

export interface SimOptions {
  seed: number;
  heats: number;
  /** Lag-1 autocorrelation of the heat-level factor. */
  phi: number;
  /** Shift in per-distance sigmas at monitored heat index t (0 before). */
  shift?: (t: number) => number;
  heatsPerYear?: number;
}

export function simulateSeries(o: SimOptions): MonitoredHeat[] {
  const rng: Rng = createRng(o.seed);
  const w = 0.8;
  const rho = 0.7;
  const every = 365.25 / (o.heatsPerYear ?? 150);
  let a = rng.normal();
  const start = Date.parse('2020-01-01T00:00:00Z');
  const out: MonitoredHeat[] = [];
  for (let t = 0; t < o.heats; t++) {
    if (t > 0) a = o.phi * a + Math.sqrt(1 - o.phi * o.phi) * rng.normal();
    let e = rng.normal();
    const s = o.shift?.(t) ?? 0;
    const row = DISTANCES.map((_, j) => {
      if (j > 0) e = rho * e + Math.sqrt(1 - rho * rho) * rng.normal();
      return Math.round(MEAN[j] + SIGMA[j] * (w * a + Math.sqrt(1 - w * w) * e + s));
    });
    const day = new Date(start + Math.floor(t * every) * 86_400_000).toISOString().slice(0, 10);
    out.push({ heatId: t + 1, heatNumber: `S${String(t + 1).padStart(5, '0')}`, castDate: day, row });
  }
  return out;
}
