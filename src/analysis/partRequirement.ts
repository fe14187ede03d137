// From a part to a band requirement: a round section of diameter D, quenched in a medium (or at a given
// Grossmann H), needing R HRC at a location (surface, 3/4 radius, centre, any fraction of the radius).
//  1. The equivalent end-quench distance J at that location (Lamont's principle, src/hardenability/quench),
//     at the low, middle and high end of the medium's typical H range.
//  2. The band minimum it implies: "at least R HRC at J", written at the standard position at or beyond the
//     distance from the slowest quench of the range (farther from the quenched end is softer, so the
//     rounding is on the safe side), in the grade's distance system (ISO 642 mm or ASTM A255 sixteenths).
//  3. For a stored grade: per mill, the share of historical heats whose curve met it at that position (the
//     one series loader, src/db/series.ts via seriesData.ts; between measured distances a heat's curve is
//     interpolated by monotone cubics, Fritsch & Carlson 1980) with a Wilson (1927) 95 % score interval, and
//     the predicted probability from chemistry (src/analysis/prediction.ts): P(HRC ≥ R) = 1 − F_t((R − ŷ)/s)
//     at that position, for the chemistry given or else each mill's mean chemistry over its heats.
// An estimate for a long cylinder; see docs/part-to-band.md for its limits.
import type { Db } from '../db/connection.ts';
import { findGrade } from '../db/referenceData.ts';
import { A255_POSITIONS_SIXTEENTHS, iso642PositionsMm, MM_PER_SIXTEENTH } from '../hardenability/distances.ts';
import type { Chemistry } from '../hardenability/types.ts';
import { barEquivalence, criticalDiameter, type Criterion, type LocationEquivalence } from '../hardenability/quench/equivalence.ts';
import { severityFor, type Agitation, type Medium, SEVERITY_TABLE } from '../hardenability/quench/severity.ts';
import { monotoneCubic } from '../stats/monotoneInterpolation.ts';
import { normalCdf, normalQuantile, tCdf } from '../stats/distributions.ts';
import { invalidInput, notFound } from './errors.ts';
import { predictCurve, predictWithModel, type PredictedPointView } from './prediction.ts';
import { getModel } from '../db/models.ts';
import type { StoredModel } from './chemistryModel.ts';
import { groupByHeat, loadSeriesCurves, millsOf, pointsAt, type HeatCurve, type SeriesSource } from './seriesData.ts';

export type PartLocation = 'surface' | 'three_quarter_radius' | 'half_radius' | 'centre';
export const LOCATION_FRACTIONS: Record<PartLocation, number> = { surface: 1, three_quarter_radius: 0.75, half_radius: 0.5, centre: 0 };
export const LOCATION_LABELS: Record<PartLocation, string> = { surface: 'surface', three_quarter_radius: '3/4 radius', half_radius: 'half radius', centre: 'centre' };

export type QuenchInput = { medium: Medium; agitation?: Agitation } | { severity: number };

export interface PartInput {
  diameterMm: number;
  quench: QuenchInput;
  /** A named location or a fraction of the radius from the centre (0) to the surface (1). */
  location: PartLocation | number;
  requiredHrc: number;
  criterion?: Criterion;
  /** Austenitizing temperature of both the part and the end-quench test (°C, default 850). */
  austenitize?: number;
}

export interface SeverityUsed {
  medium: Medium | null;
  agitation: Agitation | null;
  /** Grossmann H (in⁻¹): the range and the value the middle figure uses. */
  low: number;
  mid: number;
  high: number;
  bathTemperature: number;
  source: string;
}

export interface EquivalentAt {
  severity: number;
  rate700: number | null;
  t85: number | null;
  lambda: number | null;
  distanceMm: number | null;
  status: LocationEquivalence['byRate']['status'];
  /** Distances of the specimen the match can use (mm). */
  rangeMm: [number, number];
}

export interface BandMinimum {
  /** The standard position (mm) the minimum is written at, its label, and the exact distance behind it. */
  distanceMm: number;
  label: string;
  system: 'mm' | 'sixteenths';
  exactDistanceMm: number;
  minHrc: number;
  statement: string;
}

export interface PartEstimate {
  input: { diameterMm: number; location: string; fraction: number; requiredHrc: number; criterion: Criterion; austenitize: number };
  severity: SeverityUsed;
  /** At the slowest (low H), middle and fastest (high H) quench of the range. */
  slowest: EquivalentAt;
  middle: EquivalentAt;
  fastest: EquivalentAt;
  /** Across the section at the middle H: fraction of the radius → figures (for the picture). */
  profile: Array<{ fraction: number; distanceMm: number | null; lambda: number | null; rate700: number | null }>;
  bandMinimum: BandMinimum | null;
  notes: string[];
  limits: string[];
}

export const LIMITS: readonly string[] = [
  'Long round bar only: no end effects, no other shapes; a short part or a part with holes or steps cools differently.',
  'Quench severity is a typical range for the medium; real baths vary with agitation, temperature, contamination, part surface and loading.',
  'Equivalence by equal cooling at 700 °C (Lamont) assumes the bar and the end-quench specimen transform alike at equal cooling; transformation heat is not modelled.',
  'An estimate to be confirmed by testing parts; acceptance follows the purchase specification, local practice and qualified personnel.',
];

function severityOf(quench: QuenchInput): SeverityUsed {
  if ('severity' in quench) {
    if (!(quench.severity > 0)) throw invalidInput('the quench severity H must be positive (in⁻¹)');
    return { medium: null, agitation: null, low: quench.severity, mid: quench.severity, high: quench.severity, bathTemperature: 20, source: 'given by the caller' };
  }
  const row = severityFor(quench.medium, quench.agitation ?? 'none');
  return { medium: row.medium, agitation: row.agitation, low: row.low, mid: (row.low + row.high) / 2, high: row.high, bathTemperature: row.bathTemperature, source: 'ASM Handbook Vol. 4 (1991) table after Grossmann, typical values (from memory)' };
}

function fractionOf(location: PartLocation | number): { fraction: number; label: string } {
  if (typeof location === 'number') {
    if (!(location >= 0 && location <= 1)) throw invalidInput('a location is a fraction of the radius from 0 (centre) to 1 (surface)');
    return { fraction: location, label: `${location} of the radius` };
  }
  const fraction = LOCATION_FRACTIONS[location];
  if (fraction === undefined) throw invalidInput(`unknown location "${location}"; use ${Object.keys(LOCATION_FRACTIONS).join(', ')} or a fraction`);
  return { fraction, label: LOCATION_LABELS[location] };
}

const fmt1 = (v: number) => v.toFixed(1);

/** Standard positions of a distance system, in mm, ascending. */
export function positionsOf(system: 'mm' | 'sixteenths'): Array<{ mm: number; label: string }> {
  return system === 'mm' ? iso642PositionsMm(80).map((mm) => ({ mm, label: `${mm} mm` })) : A255_POSITIONS_SIXTEENTHS.map((s) => ({ mm: s * MM_PER_SIXTEENTH, label: `J${s}` }));
}

/** The band minimum at the first standard position at or beyond the exact distance. */
export function bandMinimumAt(exactMm: number, minHrc: number, system: 'mm' | 'sixteenths'): BandMinimum | null {
  const p = positionsOf(system).find((q) => q.mm >= exactMm - 1e-9);
  if (!p) return null;
  const shown = system === 'mm' ? `${p.label}` : `${p.label} (${fmt1(p.mm)} mm)`;
  return { distanceMm: p.mm, label: p.label, system, exactDistanceMm: exactMm, minHrc, statement: `at least ${minHrc} HRC at ${shown}` };
}

/** Equivalent distance and the band minimum for a part (pure; no database). */
export function estimatePart(input: PartInput, system: 'mm' | 'sixteenths' = 'mm'): PartEstimate {
  if (!(input.diameterMm >= 5 && input.diameterMm <= 300)) throw invalidInput('the bar diameter must lie between 5 and 300 mm');
  if (!(input.requiredHrc >= 10 && input.requiredHrc <= 70)) throw invalidInput('the required hardness must lie between 10 and 70 HRC');
  const criterion = input.criterion ?? 'rate700';
  const austenitize = input.austenitize ?? 850;
  const { fraction, label } = fractionOf(input.location);
  const severity = severityOf(input.quench);
  const fractions = [...new Set([fraction, ...Array.from({ length: 11 }, (_, i) => i / 10)])];
  const at = (H: number, fr: readonly number[]) => barEquivalence({ diameterMm: input.diameterMm, severity: H, austenitize, bathTemperature: severity.bathTemperature, fractions: fr });
  const pick = (l: LocationEquivalence, H: number): EquivalentAt => {
    const m = criterion === 'rate700' ? l.byRate : criterion === 'rate500' ? l.byRate500 : l.byT85;
    return { severity: H, rate700: l.rate700, t85: l.t85, lambda: l.lambda, distanceMm: m.mm, status: m.status, rangeMm: m.rangeMm };
  };
  const mid = at(severity.mid, fractions);
  const middle = pick(mid.locations[0], severity.mid);
  const slowest = severity.low === severity.mid ? middle : pick(at(severity.low, [fraction]).locations[0], severity.low);
  const fastest = severity.high === severity.mid ? middle : pick(at(severity.high, [fraction]).locations[0], severity.high);
  const notes: string[] = [];
  let bandMinimum: BandMinimum | null = null;
  if (slowest.status === 'matched') {
    bandMinimum = bandMinimumAt(slowest.distanceMm!, input.requiredHrc, system);
    if (!bandMinimum) notes.push(`the equivalent distance ${fmt1(slowest.distanceMm!)} mm lies beyond the last standard position`);
  } else if (slowest.status === 'nearer_than_first') {
    bandMinimum = bandMinimumAt(0, input.requiredHrc, system);
    notes.push('this location cools faster than any point of the end-quench specimen that the computation resolves: the requirement is written at the first position');
  } else {
    notes.push(`this location cools more slowly than any point of the end-quench specimen that the computation matches (up to ${fmt1(slowest.rangeMm[1])} mm from the quenched end): no end-quench distance is equivalent, and the end-quench test cannot state the requirement`);
  }
  if (severity.low !== severity.high) notes.push(`the band minimum is written for the slowest quench of the range (H = ${severity.low} in⁻¹); at H = ${severity.high} the distance is ${fastest.distanceMm === null ? 'not resolved' : `${fmt1(fastest.distanceMm)} mm`}`);
  return {
    input: { diameterMm: input.diameterMm, location: label, fraction, requiredHrc: input.requiredHrc, criterion, austenitize },
    severity,
    slowest,
    middle,
    fastest,
    profile: mid.locations
      .map((l) => ({ fraction: l.fraction, distanceMm: (criterion === 'rate700' ? l.byRate : criterion === 'rate500' ? l.byRate500 : l.byT85).mm, lambda: l.lambda, rate700: l.rate700 }))
      .sort((a, b) => a.fraction - b.fraction),
    bandMinimum,
    notes,
    limits: [...LIMITS],
  };
}

/** Wilson (1927) score interval for a binomial share at 95 %. */
export function wilsonInterval(met: number, n: number, level = 0.95): [number, number] | null {
  if (n === 0) return null;
  const z = normalQuantile(1 - (1 - level) / 2);
  const p = met / n;
  const centre = (p + (z * z) / (2 * n)) / (1 + (z * z) / n);
  const half = (z * Math.sqrt((p * (1 - p)) / n + (z * z) / (4 * n * n))) / (1 + (z * z) / n);
  return [Math.max(0, centre - half), Math.min(1, centre + half)];
}

/** A heat's hardness at a distance: measured there, else interpolated on its curve (never extrapolated). */
function hardnessAt(curve: HeatCurve, mm: number): { hrc: number; interpolated: boolean } | null {
  for (const [d, v] of curve.readings) if (Math.abs(d - mm) <= 1e-6) return { hrc: v, interpolated: false };
  const pts = [...curve.readings].sort((a, b) => a[0] - b[0]);
  if (pts.length < 2) return null;
  const v = monotoneCubic(pts.map((p) => p[0]), pts.map((p) => p[1])).at(mm);
  return v === null ? null : { hrc: v, interpolated: true };
}

export interface MillShare {
  mill: string;
  heats: number;
  met: number;
  share: number | null;
  interval95: [number, number] | null;
  /** Heats whose curve does not reach the distance (not counted). */
  notReaching: number;
  interpolated: number;
  prediction: {
    chemistry: 'given' | 'mean of the mill heats';
    heatsAveraged: number;
    hrc: number | null;
    sd: number | null;
    df: number | null;
    probability: number | null;
    /** Mean over the mill's heats of each heat's predicted probability (plant model only). */
    predictedShare: number | null;
    heatsPredicted: number;
    answeredBy: string;
    notes: string[];
  } | null;
}

export interface PartRequirementRequest extends PartInput {
  grade: string;
  mill?: string;
  from?: string;
  to?: string;
  source?: SeriesSource;
  chemistry?: Chemistry;
  grainSize?: number;
  /** Ideal critical diameter (mm) for Grossmann's critical diameter at the quench's middle H. */
  diMm?: number;
}

export interface PartRequirementResult extends PartEstimate {
  grade: string;
  mills: MillShare[];
  criticalDiameter: { diMm: number; severity: number; mm: number } | null;
}

function meanChemistry(curves: readonly HeatCurve[]): { chemistry: Chemistry; grainSize: number | null; heats: number } {
  const heats = groupByHeat(curves).map((g) => g[0]);
  const sums = new Map<string, { s: number; n: number }>();
  let gs = 0;
  let gn = 0;
  for (const h of heats) {
    for (const [e, v] of Object.entries(h.chemistry)) {
      if (typeof v !== 'number') continue;
      const held = sums.get(e) ?? { s: 0, n: 0 };
      held.s += v;
      held.n += 1;
      sums.set(e, held);
    }
    if (h.grainSize !== null) {
      gs += h.grainSize;
      gn++;
    }
  }
  const chemistry: Chemistry = {};
  for (const [e, { s, n }] of sums) (chemistry as Record<string, number>)[e] = s / n;
  return { chemistry, grainSize: gn ? gs / gn : null, heats: heats.length };
}

/** Centre, SD, df and P(HRC ≥ min) at a distance of a predicted curve (linear between its points when not on one). */
function probabilityAt(points: readonly PredictedPointView[], mm: number, minHrc: number): { hrc: number | null; sd: number | null; df: number | null; probability: number | null; between: [string, string] | null } {
  const sorted = [...points].sort((a, b) => a.distanceMm - b.distanceMm);
  let hrc: number | null = null;
  let sd: number | null = null;
  let df: number | null = null;
  let between: [string, string] | null = null;
  const exact = sorted.find((p) => Math.abs(p.distanceMm - mm) <= 1e-6);
  if (exact) ({ hrc, sd, df } = exact);
  else {
    const i = sorted.findIndex((p) => p.distanceMm > mm);
    if (i > 0) {
      const a = sorted[i - 1];
      const b = sorted[i];
      const w = (mm - a.distanceMm) / (b.distanceMm - a.distanceMm);
      hrc = a.hrc + w * (b.hrc - a.hrc);
      sd = a.sd !== null && b.sd !== null ? a.sd + w * (b.sd - a.sd) : null;
      df = a.df !== null && b.df !== null ? Math.min(a.df, b.df) : null;
      between = [a.label, b.label];
    }
  }
  const z = hrc !== null && sd !== null && sd > 0 ? (minHrc - hrc) / sd : null;
  const probability = z === null ? null : df !== null ? 1 - tCdf(z, df) : 1 - normalCdf(z);
  return { hrc, sd, df, probability, between };
}

/** The part estimate with each mill's history and predicted probability for a stored grade. */
export async function partRequirement(db: Db, request: PartRequirementRequest): Promise<PartRequirementResult> {
  const grade = await findGrade(db, request.grade);
  if (!grade) throw notFound(`grade ${request.grade} is not on file`);
  const estimate = estimatePart(request, grade.distanceSystem);
  const curves = await loadSeriesCurves(db, { grade: request.grade, mill: request.mill, from: request.from, to: request.to, source: request.source });
  const min = estimate.bandMinimum;
  const mills: MillShare[] = [];
  for (const mill of request.mill ? [request.mill] : millsOf(curves)) {
    const own = curves.filter((c) => c.mill === mill);
    const share: MillShare = { mill, heats: 0, met: 0, share: null, interval95: null, notReaching: 0, interpolated: 0, prediction: null };
    if (min) {
      // One curve per heat by the loader's rule (seriesAt): use its test where the heat was measured at the position.
      const measured = new Map(pointsAt(own, min.distanceMm).map((p) => [p.heatId, p.value]));
      for (const group of groupByHeat(own)) {
        const heatId = group[0].heatId;
        let hrc = measured.get(heatId);
        if (hrc === undefined) {
          const v = hardnessAt(group[group.length - 1], min.distanceMm);
          if (!v) {
            share.notReaching++;
            continue;
          }
          hrc = v.hrc;
          share.interpolated++;
        }
        share.heats++;
        if (hrc >= min.minHrc) share.met++;
      }
      share.share = share.heats ? share.met / share.heats : null;
      share.interval95 = wilsonInterval(share.met, share.heats);
      const chem = request.chemistry ? { chemistry: request.chemistry, grainSize: request.grainSize ?? null, heats: 0 } : meanChemistry(own);
      if (Object.keys(chem.chemistry).length) {
        const prediction = await predictCurve(db, { grade: request.grade, mill, chemistry: chem.chemistry, grainSize: chem.grainSize });
        const at = probabilityAt(prediction.points, min.distanceMm, min.minHrc);
        const { hrc, sd, df, probability } = at;
        const notes = [...prediction.notes];
        if (at.between) notes.push(`the prediction has no point at ${min.label}: centre and SD interpolated linearly between ${at.between[0]} and ${at.between[1]}`);
        else if (hrc === null) notes.push(`the prediction does not reach ${min.label}`);
        if (hrc !== null && sd === null) notes.push('no predictive SD: no probability');
        // With a plant model: the mean over the mill's heats of each heat's predicted probability, the model's counterpart of the observed share.
        let predictedShare: number | null = null;
        let heatsPredicted = 0;
        if (prediction.answeredBy.type === 'plant_model') {
          const model = (await getModel(db, prediction.answeredBy.modelId)) as StoredModel | null;
          if (model) {
            let sum = 0;
            for (const group of groupByHeat(own)) {
              const h = group[0];
              try {
                const p = probabilityAt(predictWithModel(model, { chemistry: h.chemistry as Chemistry, grainSize: h.grainSize }, null).points, min.distanceMm, min.minHrc).probability;
                if (p === null) continue;
                sum += p;
                heatsPredicted++;
              } catch {
                // a heat without a predictor the model needs is left out
              }
            }
            predictedShare = heatsPredicted ? sum / heatsPredicted : null;
          }
        }
        share.prediction = {
          chemistry: request.chemistry ? 'given' : 'mean of the mill heats',
          heatsAveraged: chem.heats,
          hrc,
          sd,
          df,
          probability,
          predictedShare,
          heatsPredicted,
          answeredBy: prediction.answeredBy.type === 'plant_model' ? `plant model ${prediction.answeredBy.modelId} (v${prediction.answeredBy.version})` : `published predictor (${prediction.answeredBy.methods.join('; ')})`,
          notes,
        };
      }
    }
    mills.push(share);
  }
  if (request.mill && !curves.length) estimate.notes.push(`no curves of ${request.grade} from mill ${request.mill} in the window`);
  let crit: PartRequirementResult['criticalDiameter'] = null;
  if (request.diMm !== undefined) {
    crit = { diMm: request.diMm, severity: estimate.severity.mid, mm: criticalDiameter(request.diMm, estimate.severity.mid, { austenitize: estimate.input.austenitize, bathTemperature: estimate.severity.bathTemperature }).mm };
  }
  return { ...estimate, grade: request.grade, mills, criticalDiameter: crit };
}

/** Equivalent distances at surface, 3/4 radius and centre for a set of diameters and media (the page's table). */
export function equivalenceTable(diametersMm: readonly number[], media: ReadonlyArray<{ medium: Medium; agitation?: Agitation }>, criterion: Criterion = 'rate700') {
  const rows: Array<{ medium: string; severity: number; diameterMm: number; surface: number | null; threeQuarter: number | null; centre: number | null; lambdaCentre: number | null }> = [];
  for (const m of media) {
    const s = severityFor(m.medium, m.agitation ?? 'none');
    const H = (s.low + s.high) / 2;
    for (const d of diametersMm) {
      const r = barEquivalence({ diameterMm: d, severity: H, bathTemperature: s.bathTemperature, fractions: [1, 0.75, 0] });
      const mm = (l: LocationEquivalence) => (criterion === 'rate700' ? l.byRate : criterion === 'rate500' ? l.byRate500 : l.byT85).mm;
      rows.push({ medium: `${m.medium}${m.agitation && m.agitation !== 'none' ? ` (${m.agitation})` : ''}`, severity: H, diameterMm: d, surface: mm(r.locations[0]), threeQuarter: mm(r.locations[1]), centre: mm(r.locations[2]), lambdaCentre: r.locations[2].lambda });
    }
  }
  return rows;
}

export { SEVERITY_TABLE };
