// A whole-curve figure (J at a hardness, J of 50 % martensite, DI from the curve; curveFigures.ts) over a
// mill's heats, charted and studied for capability like a band distance: the same series loader, an
// individuals chart (moving-range sigma, 3σ limits; ASTM E2587, Montgomery §6.4) and capability
// (src/stats/capability.ts) against limits the band itself implies. For "J at H HRC" those limits are
// where the band's minimum and maximum curves fall to H (the monotone cubic through the band's limits,
// as for a test): a curve inside the band near that hardness has its crossing between them. The 50 %
// martensite distance has no single hardness across heats of differing carbon, and DI no band at all:
// they are charted and described without limits.
import type { Db } from '../db/connection.ts';
import type { Band } from '../hardenability/bands.ts';
import { curveFigures, distanceAtHardness } from '../hardenability/curveFigures.ts';
import { capability, type CapabilityResult } from '../stats/capability.ts';
import { individualsChart } from '../stats/individualsChart.ts';
import { bandOn, bandSummary, type BandSummary } from './bandOf.ts';
import { insufficientData } from './errors.ts';
import { asTest, groupByHeat, loadSeriesCurves, todayIso, type SeriesQuery } from './seriesData.ts';

export type FigureName = 'j_at_hardness' | 'j_half_martensite' | 'ideal_diameter';

export interface FigurePoint {
  heatId: number;
  heatNumber: string;
  castDate: string;
  value: number;
}

export interface FigureSeries {
  figure: FigureName;
  hrc: number | null;
  band: BandSummary | null;
  /** Implied by the band (j_at_hardness only); null where a side does not cross. */
  limits: { lsl: number | null; usl: number | null; how: string } | null;
  points: FigurePoint[];
  /** Heats whose figure could not be had (curve never reaches the hardness in its measured range, ...). */
  without: number;
  chart: { center: number; ucl: number; lcl: number; sigma: number; beyond: number[] } | null;
  capability: CapabilityResult | null;
  notes: string[];
}

/** Where the band's minimum and maximum curves fall to `hrc` (mm), from the band points that have them. */
export function bandLimitsAtHardness(band: Band, hrc: number): { lsl: number | null; usl: number | null } {
  const side = (pick: 'minHrc' | 'maxHrc') => {
    const pts = band.points.filter((p) => p[pick] !== undefined).map((p) => ({ mm: p.mm, hrc: p[pick]! }));
    if (pts.length < 2) return null;
    const c = distanceAtHardness(pts, hrc);
    return c.status === 'crossed' ? c.mm : null;
  };
  return { lsl: side('minHrc'), usl: side('maxHrc') };
}

export async function curveFigureSeries(db: Db, query: SeriesQuery & { figure?: FigureName; hrc?: number }): Promise<FigureSeries> {
  const figure = query.figure ?? 'j_at_hardness';
  const hrc = figure === 'j_at_hardness' ? (query.hrc ?? 40) : null;
  const curves = await loadSeriesCurves(db, { ...query, source: query.source ?? 'mill_certificate' });
  const band = await bandOn(db, query.grade, query.to ?? todayIso());
  const notes: string[] = [];
  const points: FigurePoint[] = [];
  let without = 0;
  for (const tests of groupByHeat(curves)) {
    const c = tests[tests.length - 1];
    const f = curveFigures(asTest(c).readings, c.chemistry.C, { hrc: hrc ?? 40 });
    const value =
      figure === 'j_at_hardness'
        ? f.atHardness.crossing.status === 'crossed' ? f.atHardness.crossing.mm : null
        : figure === 'j_half_martensite'
          ? f.halfMartensite?.crossing.status === 'crossed' ? f.halfMartensite.crossing.mm : null
          : f.idealDiameter.mm;
    if (value === null) without++;
    else points.push({ heatId: c.heatId, heatNumber: c.heatNumber, castDate: c.castDate, value });
  }
  if (points.length < 2) throw insufficientData(`${points.length} heat(s) with this figure: too few for a chart`);
  if (without) notes.push(`${without} heat(s) left out: their curve does not give the figure within its measured range`);
  let limits: FigureSeries['limits'] = null;
  if (figure === 'j_at_hardness' && band) {
    const l = bandLimitsAtHardness(band, hrc!);
    limits = { ...l, how: `where the band's minimum and maximum curves fall to ${hrc} HRC` };
    if (l.lsl === null && l.usl === null) notes.push(`the band's limits do not cross ${hrc} HRC within its distances: no limits for this figure`);
  }
  const values = points.map((p) => p.value);
  const ind = individualsChart(values);
  const beyond = ind.outOfControl;
  let cap: CapabilityResult | null = null;
  if (limits && (limits.lsl !== null || limits.usl !== null)) {
    try {
      cap = capability({ values }, { lsl: limits.lsl, usl: limits.usl });
    } catch (error) {
      notes.push(`capability: ${(error as Error).message}`);
    }
  }
  return { figure, hrc, band: band ? bandSummary(band) : null, limits, points, without, chart: { center: ind.center, ucl: ind.ucl, lcl: ind.lcl, sigma: ind.sigma, beyond }, capability: cap, notes };
}
