// Whole-curve figures of one measured end-quench curve, for an engineer who thinks of hardenability as
// one number rather than fifteen readings:
//  - the distance at which the curve falls to a chosen hardness (e.g. J at 40 HRC; "J40" in the sense of
//    SAE J406's index notation "J 40 HRC = x/16 in", our reading of it);
//  - the distance of 50 % martensite: where the curve crosses the hardness of 50 % martensite for the
//    heat's carbon (Hodge & Orehoski 1946; martensite.ts), the point the ideal critical diameter is
//    defined by (Grossmann);
//  - DI estimated from the curve: the diameter of a round bar whose centre, under an ideal quench
//    (H = ∞), cools at 700 °C as fast as the end-quench bar at that 50 %-martensite distance (Lamont
//    1943's equivalence, computed by our heat-conduction solver, src/hardenability/quench; see
//    docs/part-to-band.md for how its distances compare with published charts).
// The curve between readings is the Fritsch & Carlson (1980) monotone cubic through them (the
// interpolation the conformance check uses); a crossing outside the measured range is not extrapolated.
import { monotoneCubic } from '../stats/monotoneInterpolation.ts';
import { sortedReadings } from './distances.ts';
import { halfMartensiteHardness, HALF_MARTENSITE_VALID_CARBON, MARTENSITE_CARBON_DOMAIN } from './martensite.ts';
import { barCooling } from './quench/cooling.ts';
import { cachedSpecimen, matchDistance } from './quench/equivalence.ts';
import type { Reading } from './types.ts';

export type Crossing =
  | { status: 'crossed'; mm: number }
  /** The curve is already below the hardness at its first reading. */
  | { status: 'below_at_first'; firstMm: number }
  /** The curve stays above the hardness to its last reading. */
  | { status: 'above_to_last'; lastMm: number };

/** Where a non-increasing curve first falls to `hrc` (readings off the scale are left out). */
export function distanceAtHardness(readings: readonly Reading[], hrc: number): Crossing {
  const r = sortedReadings(readings.filter((x) => !x.censored));
  if (r.length === 0) throw new RangeError('no readings');
  if (r[0].hrc < hrc) return { status: 'below_at_first', firstMm: r[0].mm };
  const i = r.findIndex((x) => x.hrc <= hrc);
  if (i < 0) return { status: 'above_to_last', lastMm: r[r.length - 1].mm };
  if (r[i].hrc === hrc || i === 0) return { status: 'crossed', mm: r[i].mm };
  const f = monotoneCubic(
    r.map((x) => x.mm),
    r.map((x) => x.hrc),
  );
  // The interpolant is monotone between r[i-1] (above) and r[i] (at or below): bisect.
  let lo = r[i - 1].mm;
  let hi = r[i].mm;
  for (let k = 0; k < 60 && hi - lo > 1e-9; k++) {
    const mid = 0.5 * (lo + hi);
    if ((f.at(mid) as number) > hrc) lo = mid;
    else hi = mid;
  }
  return { status: 'crossed', mm: 0.5 * (lo + hi) };
}

// Ideal-quench (H = ∞) centre equivalence of round bars: bar diameter (mm) against the end-quench distance
// (mm) whose cooling rate at 700 °C matches the bar's centre. Computed with src/hardenability/quench
// (default austenite properties and grid) by `idealQuenchCentreDistance` and written down here so that no
// request waits for the solver; test/unit/hardenability/curveFigures.test.ts recomputes entries of it.
export const IDEAL_QUENCH_CENTRE: ReadonlyArray<{ diameterMm: number; jMm: number }> = [
  { diameterMm: 10, jMm: 2.2 },
  { diameterMm: 15, jMm: 3.32 },
  { diameterMm: 20, jMm: 4.44 },
  { diameterMm: 25, jMm: 5.59 },
  { diameterMm: 30, jMm: 6.74 },
  { diameterMm: 40, jMm: 9.13 },
  { diameterMm: 50, jMm: 11.63 },
  { diameterMm: 60, jMm: 14.31 },
  { diameterMm: 75, jMm: 18.75 },
  { diameterMm: 90, jMm: 23.82 },
  { diameterMm: 110, jMm: 31.84 },
  { diameterMm: 130, jMm: 41.8 },
  { diameterMm: 160, jMm: 66.28 },
];

/** Recomputes one row of IDEAL_QUENCH_CENTRE with the heat-conduction solver (about 0.05 s, plus the specimen once). */
export function idealQuenchCentreDistance(diameterMm: number): number | null {
  const rate = barCooling({ diameterMm, severity: Infinity, fractions: [0] }).points[0].rate700;
  return matchDistance(cachedSpecimen(), rate, 'rate700').mm;
}

export interface CurveFigures {
  /** Distance at the chosen hardness (default 40 HRC). */
  atHardness: { hrc: number; crossing: Crossing };
  /** Distance of 50 % martensite, with that hardness; null when the carbon is outside the relation's range. */
  halfMartensite: { hrc: number; crossing: Crossing } | null;
  /** DI (mm) from the 50 %-martensite distance; null with the reason when it cannot be had. */
  idealDiameter: { mm: number | null; reason: string | null };
  notes: string[];
}

/** The whole-curve figures of one measured curve. */
export function curveFigures(readings: readonly Reading[], carbon: number | undefined, options: { hrc?: number } = {}): CurveFigures {
  const hrc = options.hrc ?? 40;
  const notes: string[] = [];
  const atHardness = { hrc, crossing: distanceAtHardness(readings, hrc) };
  let halfMartensite: CurveFigures['halfMartensite'] = null;
  let idealDiameter: CurveFigures['idealDiameter'] = { mm: null, reason: 'carbon not reported' };
  if (carbon !== undefined && carbon >= MARTENSITE_CARBON_DOMAIN.min && carbon <= MARTENSITE_CARBON_DOMAIN.max) {
    const h50 = halfMartensiteHardness(carbon);
    if (carbon < HALF_MARTENSITE_VALID_CARBON.min || carbon > HALF_MARTENSITE_VALID_CARBON.max) {
      notes.push(`C ${carbon} % is outside ${HALF_MARTENSITE_VALID_CARBON.min}-${HALF_MARTENSITE_VALID_CARBON.max} %, the range of the 50 % martensite relation`);
    }
    halfMartensite = { hrc: h50, crossing: distanceAtHardness(readings, h50) };
    const c = halfMartensite.crossing;
    if (c.status !== 'crossed') {
      idealDiameter = { mm: null, reason: c.status === 'above_to_last' ? `the curve stays above ${h50.toFixed(1)} HRC to its last reading (${c.lastMm} mm): DI is larger than this curve can show` : `the curve is below ${h50.toFixed(1)} HRC at its first reading` };
    } else {
      const table = IDEAL_QUENCH_CENTRE;
      const first = table[0];
      const last = table[table.length - 1];
      if (c.mm < first.jMm || c.mm > last.jMm) {
        idealDiameter = { mm: null, reason: `the 50 % martensite distance ${c.mm.toFixed(1)} mm is outside ${first.jMm.toFixed(1)}-${last.jMm.toFixed(1)} mm, the range of the bar table (${first.diameterMm}-${last.diameterMm} mm)` };
      } else {
        const f = monotoneCubic(
          table.map((t) => t.jMm),
          table.map((t) => t.diameterMm),
        );
        idealDiameter = { mm: f.at(c.mm) as number, reason: null };
      }
    }
  } else if (carbon !== undefined) {
    idealDiameter = { mm: null, reason: `C ${carbon} % is outside the range of the martensite relations` };
  }
  return { atHardness, halfMartensite, idealDiameter, notes };
}
