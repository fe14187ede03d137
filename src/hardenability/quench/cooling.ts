// Cooling of the end-quench specimen and of a long round bar, computed with the finite-volume solver
// (conduction.ts), and the cooling figures the equivalence needs at each point: the cooling rate at 700 °C
// (Lamont's criterion; A. Lamont, "How to estimate hardening depth in bars", Iron Age 152 (1943) 64–70,
// used 1300 °F ≈ 704 °C, we use 700 °C) and t8/5, the time from 800 to 500 °C, with the cooling parameter
// λ = t8/5 / 100 s (common practice in continuous-cooling diagrams); also the cooling rate at 500 °C, the
// criterion that reproduces the textbook chart readings we found (docs/part-to-band.md §4).
//
// End-quench specimen (ISO 642 / ASTM A255): a 25 mm × 100 mm cylinder, the end z = 0 water-cooled, all
// other faces losing heat to still air by convection (h_c = 10 W/(m²·K), common practice for natural
// convection) and radiation (emissivity 0.8 for oxidised steel, common practice): h = h_c + εσ(T_s² + T_a²)(T_s + T_a)
// in kelvin. The quenched end is held at the water temperature by default (an ideal end quench, as in
// Lamont's own charts, from memory) or cooled by a given film coefficient. Hardness is read on flats ground
// 0.4–0.5 mm deep (ISO 642), so the figures are taken at r = R − 0.45 mm.
// Long round bar: one radial row of cells (no heat flow along the axis), the surface cooled by h from
// Grossmann's H (severity.ts) or held at the bath temperature (H = ∞, the ideal quench).
import { solveConduction, gradedFaces, type ConductionResult, type SurfaceCondition } from './conduction.ts';
import { AUSTENITE, type ThermalMaterial } from './materials.ts';
import { filmCoefficient } from './severity.ts';
import { HardenabilityInputError } from '../errors.ts';

export const STEFAN_BOLTZMANN = 5.670374419e-8;
export const SPECIMEN = { diameterMm: 25, lengthMm: 100, flatDepthMm: 0.45 } as const;

export interface CoolingPoint {
  /** Distance from the quenched end (mm) for the specimen; fraction of the radius from the centre for a bar. */
  at: number;
  /** K/s at 700 °C (null: 700 °C not reached within the time computed). */
  rate700: number | null;
  /** K/s at 500 °C (null: not reached). */
  rate500: number | null;
  /** s from 800 to 500 °C (null when not reached or the start is below 800 °C). */
  t85: number | null;
  /** λ = t8/5 / 100 s. */
  lambda: number | null;
}

export interface CoolingRun {
  points: CoolingPoint[];
  energyImbalance: number;
  steps: number;
  cells: { nr: number; nz: number };
  seconds: number;
}

export interface GridOptions {
  /** Multiplies the number of cells in each direction (1: the default grid). */
  refine?: number;
  /** Multiplies the largest step and the per-step target change (1: default; 0.5 halves them). */
  timeFactor?: number;
}

export interface SpecimenOptions extends GridOptions {
  material?: ThermalMaterial;
  austenitize?: number;
  waterTemperature?: number;
  /** Film coefficient of the quenched end (W/(m²·K)); omitted: ideal quench (end at the water temperature). */
  endCoefficient?: number;
  airTemperature?: number;
  /** Distances (mm) to report; default every 0.25 mm to 80 mm. */
  distancesMm?: readonly number[];
}

export const airCoefficient = (ambient: number) => (ts: number) => 10 + 0.8 * STEFAN_BOLTZMANN * ((ts + 273.15) ** 2 + (ambient + 273.15) ** 2) * (ts + ambient + 2 * 273.15);

const WATCH = [800, 700, 500];

function figures(result: ConductionResult, at: (i: number) => number, start: number): CoolingPoint[] {
  return result.probes.map((p, i) => {
    const [c800, c700, c500] = p.crossings;
    const t85 = start >= 800 && c800.time !== null && c500.time !== null ? c500.time - c800.time : null;
    return { at: at(i), rate700: c700.rate, rate500: c500.rate, t85, lambda: t85 === null ? null : t85 / 100 };
  });
}

export const DEFAULT_DISTANCES_MM: readonly number[] = Array.from({ length: 320 }, (_, i) => (i + 1) * 0.25);

export function specimenCooling(options: SpecimenOptions = {}): CoolingRun {
  const started = performance.now();
  const refine = options.refine ?? 1;
  const tf = options.timeFactor ?? 1;
  const material = options.material ?? AUSTENITE;
  const start = options.austenitize ?? 850;
  const water = options.waterTemperature ?? 20;
  const air = options.airTemperature ?? 20;
  if (!(start > 500 && start <= 1100)) throw new HardenabilityInputError('the austenitizing temperature must lie between 500 and 1100 °C');
  const R = SPECIMEN.diameterMm / 2000;
  const L = SPECIMEN.lengthMm / 1000;
  const distances = options.distancesMm ?? DEFAULT_DISTANCES_MM;
  const bottom: SurfaceCondition =
    options.endCoefficient === undefined ? { kind: 'fixed', temperature: water } : { kind: 'film', ambient: water, h: () => options.endCoefficient! };
  const airFilm: SurfaceCondition = { kind: 'film', ambient: air, h: airCoefficient(air) };
  const nz = Math.round(80 * refine);
  const result = solveConduction({
    material,
    // Cells grow by 4 % a cell from the quenched end (0.26 mm first) at the default grid.
    grid: { rFaces: gradedFaces(R, Math.round(10 * refine)), zFaces: gradedFaces(L, nz, 1.04 ** (1 / refine)) },
    initial: start,
    outer: airFilm,
    top: airFilm,
    bottom,
    probes: distances.map((d) => ({ r: R - SPECIMEN.flatDepthMm / 1000, z: d / 1000 })),
    time: { dt0: 1e-3 * tf, dtMax: 2 * tf, targetChange: 5 * tf, endTime: 4000, stopBelow: 450 },
    watch: WATCH,
  });
  return { points: figures(result, (i) => distances[i], start), energyImbalance: result.energy.relativeImbalance, steps: result.steps, cells: result.cells, seconds: (performance.now() - started) / 1000 };
}

export interface BarOptions extends GridOptions {
  diameterMm: number;
  /** Grossmann H (in⁻¹); Infinity for the ideal quench. */
  severity: number;
  material?: ThermalMaterial;
  austenitize?: number;
  bathTemperature?: number;
  /** Fractions of the radius (0 centre, 1 surface) to report; default 0, 0.05, ..., 1. */
  fractions?: readonly number[];
}

export const DEFAULT_FRACTIONS: readonly number[] = Array.from({ length: 21 }, (_, i) => i / 20);

export function barCooling(options: BarOptions): CoolingRun {
  const started = performance.now();
  const { diameterMm, severity } = options;
  if (!(diameterMm >= 1 && diameterMm <= 1000)) throw new HardenabilityInputError('the bar diameter must lie between 1 and 1000 mm');
  if (!(severity > 0)) throw new HardenabilityInputError('the quench severity H must be positive (Infinity: ideal quench)');
  const refine = options.refine ?? 1;
  const tf = options.timeFactor ?? 1;
  const material = options.material ?? AUSTENITE;
  const start = options.austenitize ?? 850;
  if (!(start > 500 && start <= 1100)) throw new HardenabilityInputError('the austenitizing temperature must lie between 500 and 1100 °C');
  const bath = options.bathTemperature ?? 20;
  const R = diameterMm / 2000;
  const fractions = options.fractions ?? DEFAULT_FRACTIONS;
  const outer: SurfaceCondition = severity === Infinity ? { kind: 'fixed', temperature: bath } : { kind: 'film', ambient: bath, h: () => filmCoefficient(severity, material) };
  // Time scale of the bar: R²/α with α ≈ 5e-6 m²/s; the slowest (air) cools over ~ 1/(Bi) of it.
  const tau = (R * R) / 5e-6;
  const biot = severity === Infinity ? Infinity : (severity * diameterMm) / 25.4;
  const endTime = Math.max(600, 20 * tau * Math.max(1, 1 / biot));
  const result = solveConduction({
    material,
    grid: { rFaces: gradedFaces(R, Math.round(40 * refine)), zFaces: [0, 1] },
    initial: start,
    outer,
    top: { kind: 'insulated' },
    bottom: { kind: 'insulated' },
    probes: fractions.map((f) => ({ r: f * R, z: 0.5 })),
    time: { dt0: Math.min(1e-3, tau * 1e-5) * tf, dtMax: Math.max(2, tau / 200) * tf, targetChange: 5 * tf, endTime, stopBelow: 450 },
    watch: WATCH,
  });
  return { points: figures(result, (i) => fractions[i], start), energyImbalance: result.energy.relativeImbalance, steps: result.steps, cells: result.cells, seconds: (performance.now() - started) / 1000 };
}
