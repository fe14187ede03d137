// From a bar location to the end-quench distance that cools alike, and Grossmann's critical diameter.
//  - Lamont's principle (A. Lamont, Iron Age 152 (1943) 64–70): a point of a quenched bar and the point of
//    the end-quench specimen with the same cooling rate at 700 °C (Lamont: 1300 °F) harden alike; the same
//    idea with equal t8/5 (time from 800 to 500 °C) is the common alternative (e.g. the SEP 1680 /
//    continuous-cooling practice; common practice). Both are offered; rate at 700 °C is the default. Equal
//    cooling rate at 500 °C is offered too: it reproduces the textbook chart readings we could find.
//  - Grossmann's critical diameter (M. A. Grossmann, Trans. AIME 150 (1942) 227–259): the bar diameter D
//    that hardens to the same structure at the centre under severity H as the ideal-quench bar of diameter
//    DI (H = ∞); here found as the D whose centre cools at 700 °C at the rate of the centre of the DI bar
//    under the ideal quench.
// The matching is done on the computed cooling curves (cooling.ts); between computed distances the
// logarithm of the figure is interpolated linearly in the distance. Only the part of the specimen where the
// figure changes monotonically with distance is used (near the far end side losses take over).
import { barCooling, specimenCooling, type BarOptions, type CoolingPoint, type CoolingRun, type SpecimenOptions } from './cooling.ts';
import { AUSTENITE } from './materials.ts';
import { HardenabilityInputError } from '../errors.ts';

export type Criterion = 'rate700' | 'rate500' | 't85';

export interface MatchedDistance {
  /** Equivalent distance from the quenched end (mm); null when outside the specimen's usable range. */
  mm: number | null;
  status: 'matched' | 'nearer_than_first' | 'beyond_range' | 'not_reached';
  /** The usable range of the specimen for this criterion (mm). */
  rangeMm: [number, number];
}

const figureOf = (p: CoolingPoint, c: Criterion) => (c === 'rate700' ? p.rate700 : c === 'rate500' ? p.rate500 : p.t85);
const falls = (c: Criterion) => c !== 't85';

/** Distances (mm) and figures of the specimen, cut where the figure stops changing monotonically. */
function usable(specimen: CoolingRun, criterion: Criterion): Array<{ mm: number; v: number }> {
  const out: Array<{ mm: number; v: number }> = [];
  for (const p of specimen.points) {
    const v = figureOf(p, criterion);
    if (v === null || !(v > 0)) break;
    const prev = out[out.length - 1];
    if (prev && (falls(criterion) ? v >= prev.v : v <= prev.v)) break;
    out.push({ mm: p.at, v });
  }
  return out;
}

/** The specimen distance whose figure (rate at 700 °C or t8/5) equals `figure`. */
export function matchDistance(specimen: CoolingRun, figure: number | null, criterion: Criterion = 'rate700'): MatchedDistance {
  const pts = usable(specimen, criterion);
  if (pts.length < 2) throw new HardenabilityInputError('the end-quench computation gave too few usable points');
  const rangeMm: [number, number] = [pts[0].mm, pts[pts.length - 1].mm];
  if (figure === null || !(figure > 0)) return { mm: null, status: 'not_reached', rangeMm };
  const decreasing = falls(criterion);
  const first = pts[0].v;
  const last = pts[pts.length - 1].v;
  if (decreasing ? figure >= first : figure <= first) return { mm: null, status: 'nearer_than_first', rangeMm };
  if (decreasing ? figure < last : figure > last) return { mm: null, status: 'beyond_range', rangeMm };
  const lf = Math.log(figure);
  for (let i = 1; i < pts.length; i++) {
    const a = pts[i - 1];
    const b = pts[i];
    const inside = decreasing ? figure <= a.v && figure >= b.v : figure >= a.v && figure <= b.v;
    if (!inside) continue;
    const w = (lf - Math.log(a.v)) / (Math.log(b.v) - Math.log(a.v));
    return { mm: a.mm + w * (b.mm - a.mm), status: 'matched', rangeMm };
  }
  return { mm: null, status: 'beyond_range', rangeMm };
}

// Specimen runs are deterministic and take about half a second: keep the last few.
const specimenCache = new Map<string, CoolingRun>();
const keyOf = (o: object) => JSON.stringify(o, (_k, v) => (v && typeof v === 'object' && 'conductivity' in v ? (v as { id: string }).id : v));

export function cachedSpecimen(options: SpecimenOptions = {}): CoolingRun {
  const given = Object.fromEntries(Object.entries(options).filter(([, v]) => v !== undefined));
  const key = keyOf({ material: AUSTENITE, austenitize: 850, waterTemperature: 20, refine: 1, timeFactor: 1, ...given });
  const held = specimenCache.get(key);
  if (held) return held;
  const run = specimenCooling(options);
  if (specimenCache.size >= 16) specimenCache.delete(specimenCache.keys().next().value!);
  specimenCache.set(key, run);
  return run;
}

export interface LocationEquivalence {
  /** Fraction of the radius from the centre (0 centre, 1 surface). */
  fraction: number;
  rate700: number | null;
  t85: number | null;
  lambda: number | null;
  /** Equivalent distance by equal cooling rate at 700 °C (Lamont). */
  byRate: MatchedDistance;
  /** Equivalent distance by equal t8/5. */
  byT85: MatchedDistance;
  /** Equivalent distance by equal cooling rate at 500 °C. */
  byRate500: MatchedDistance;
  rate500: number | null;
}

export interface BarEquivalence {
  diameterMm: number;
  severity: number;
  locations: LocationEquivalence[];
  bar: { energyImbalance: number; steps: number; cells: number };
  specimen: { energyImbalance: number; steps: number; cells: number };
}

export interface EquivalenceOptions extends Omit<BarOptions, 'fractions'> {
  fractions?: readonly number[];
  specimen?: SpecimenOptions;
}

/** Cooling figures and equivalent distances at fractions of the radius of a long round bar. */
export function barEquivalence(options: EquivalenceOptions): BarEquivalence {
  const specimen = cachedSpecimen({ material: options.material, austenitize: options.austenitize, refine: options.refine, timeFactor: options.timeFactor, ...options.specimen });
  const fractions = options.fractions ?? [1, 0.75, 0.5, 0];
  for (const f of fractions) if (!(f >= 0 && f <= 1)) throw new HardenabilityInputError(`a location is a fraction of the radius from 0 (centre) to 1 (surface), got ${f}`);
  const bar = barCooling({ ...options, fractions });
  return {
    diameterMm: options.diameterMm,
    severity: options.severity,
    locations: bar.points.map((p) => ({
      fraction: p.at,
      rate700: p.rate700,
      t85: p.t85,
      lambda: p.lambda,
      byRate: matchDistance(specimen, p.rate700, 'rate700'),
      byT85: matchDistance(specimen, p.t85, 't85'),
      byRate500: matchDistance(specimen, p.rate500, 'rate500'),
      rate500: p.rate500,
    })),
    bar: { energyImbalance: bar.energyImbalance, steps: bar.steps, cells: bar.cells.nr * bar.cells.nz },
    specimen: { energyImbalance: specimen.energyImbalance, steps: specimen.steps, cells: specimen.cells.nr * specimen.cells.nz },
  };
}

export interface CriticalDiameterOptions extends Omit<BarOptions, 'diameterMm' | 'severity' | 'fractions'> {}

/**
 * Grossmann's critical diameter D (mm) under severity H (in⁻¹) for an ideal critical diameter DI (mm):
 * the diameter whose centre cools at 700 °C as fast as the centre of the DI bar under the ideal quench.
 * Found by bisection on log D to 0.05 % (D ≤ DI always).
 */
export function criticalDiameter(diMm: number, severity: number, options: CriticalDiameterOptions = {}): { mm: number; targetRate: number } {
  if (!(diMm >= 2 && diMm <= 500)) throw new HardenabilityInputError('the ideal critical diameter must lie between 2 and 500 mm');
  if (!(severity > 0)) throw new HardenabilityInputError('the quench severity H must be positive');
  const centreRate = (d: number, h: number) => barCooling({ ...options, diameterMm: d, severity: h, fractions: [0] }).points[0].rate700!;
  const target = centreRate(diMm, Infinity);
  if (severity === Infinity) return { mm: diMm, targetRate: target };
  let lo = Math.log(Math.max(1, diMm / 1000));
  let hi = Math.log(diMm);
  if (centreRate(Math.exp(lo), severity) < target) return { mm: Math.exp(lo), targetRate: target };
  while (hi - lo > 5e-4) {
    const mid = 0.5 * (lo + hi);
    if (centreRate(Math.exp(mid), severity) >= target) lo = mid;
    else hi = mid;
  }
  return { mm: Math.exp(0.5 * (lo + hi)), targetRate: target };
}
