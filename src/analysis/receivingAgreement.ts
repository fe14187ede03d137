// Laboratory agreement of a mill with the plant's receiving laboratory: each heat that has both the mill's
// certificate curve and the plant's own receiving test is a pair; the difference mill − plant is taken at
// every distance both measured. Methods (src/stats/blandAltman.ts, src/stats/pairedBiasChart.ts):
// - per pair, the mean difference over the common distances ("pair bias"): one value per heat, so the
//   Bland & Altman (1986) bias, its interval and the limits of agreement are not inflated by the
//   correlation of the readings of one curve;
// - per distance, Bland–Altman on that distance's differences (one per heat);
// - by hardness level: the difference against the mean of the two readings, in bands of 10 HRC, and the
//   regression of difference on level (Bland & Altman 1999, §3.2); readings of one curve are correlated,
//   so the slope's p-value reads optimistic and is shown as a guide only;
// - a chart of the pair bias in time order (cast date, then heat number): EWMA centred on the
//   laboratory's established bias in a reference window of the first pairs, σ of one pair from their
//   moving ranges (MR̄/d2, d2(2) = 2/√π; ASTM E2587). The limits have the drift monitoring's designed
//   false-alarm rate — at most one false alarm per mill × grade in `yearsPerFalseAlarm` (3) years at the
//   series' own re-test rate, so an in-control ARL of pairs-a-year × 3 pairs (at least `minTargetArl`,
//   rounded up to an R10 preferred number) — and are widened for the reference being estimated from m
//   pairs so that 90 % of references meet it (Gandy & Kvaløy 2013; ewmaLimitForEstimated and
//   targetArlHeats in src/stats/monitoringDesign.ts). Each standardised pair bias is clipped to
//   ±`clipSigma` before charting (a Huber-type
//   winsorisation, as in the robust CUSUM of Lucas & Crosier 1982, Commun. Statist. 11:2669), so that
//   one lot whose bars truly differ from the certificate — a failure on receipt, which raises its own
//   alert — does not read as a laboratory that moved; a lasting shift still passes through.
// When several receiving tests exist for a heat (several lots), the plant side is their mean at each
// distance. Outside-laboratory tests are a third laboratory and are left out.
import type { Db, Executor } from '../db/connection.ts';
import { loadCurves, type HeatCurve } from '../db/series.ts';
import { blandAltman, levelRegression, type BlandAltmanResult, type LevelRegression } from '../stats/blandAltman.ts';
import { pairedBiasChart, type PairedBiasChart } from '../stats/pairedBiasChart.ts';
import { ewmaLimitForEstimated, targetArlHeats } from '../stats/monitoringDesign.ts';
import { DISTANCE_MATCH_MM } from './seriesData.ts';

export interface LabPair {
  heatId: number;
  heatNumber: string;
  mill: string;
  castDate: string;
  /** Lots of the plant's receiving tests averaged into this pair. */
  lots: string[];
  plantTests: number;
  /** mill − plant at each common distance (mm), ascending by distance. */
  differences: Array<{ distanceMm: number; mill: number; plant: number; difference: number }>;
  /** Mean difference over the common distances. */
  bias: number;
}

export interface AgreementSettings {
  /** At most one false alarm per series in this many years at its re-test rate (default 3). */
  yearsPerFalseAlarm: number;
  /** Re-test pairs a year; null: the series' own rate (pairs over the years they span, at least one year). */
  pairsPerYear: number | null;
  /** Floor of the designed in-control ARL, in pairs (default 20). */
  minTargetArl: number;
  /** Share of estimated references that meet the target (default 0.9, as the drift monitoring). */
  guarantee: number;
  /** EWMA weight (default 0.2: few pairs a year, so a quicker chart than the certificates' 0.1). */
  lambda: number;
  /** Pairs of the reference window (the first of the series; default 12). */
  referencePairs: number;
  /** Fewer reference pairs than this: no chart (default 8). */
  minReferencePairs: number;
  /** Standardised pair biases are clipped to ±this before charting (default 3). */
  clipSigma: number;
  /** Plant repeatability SD of one reading (HRC), when known. */
  plantRepeatabilitySd: number | null;
}

export const DEFAULT_AGREEMENT_SETTINGS: AgreementSettings = Object.freeze({
  yearsPerFalseAlarm: 3,
  pairsPerYear: null,
  minTargetArl: 20,
  guarantee: 0.9,
  lambda: 0.2,
  referencePairs: 12,
  minReferencePairs: 8,
  clipSigma: 3,
  plantRepeatabilitySd: null,
});

export interface LevelBin {
  fromHrc: number;
  toHrc: number;
  n: number;
  bias: number;
  sd: number | null;
}

export interface BiasChart {
  referencePairs: number;
  /** Established bias (mean of the reference pairs) and σ of one pair (MR̄/d2). */
  target: number;
  sigma: number;
  lambda: number;
  L: number;
  /** Designed in-control ARL (pairs), the re-test rate it came from, and the L for known parameters. */
  targetArl: number;
  pairsPerYear: number;
  knownL: number;
  guarantee: number;
  arlAtShift: PairedBiasChart['arlAtShift'];
  clipSigma: number;
  points: Array<{ heatNumber: string; castDate: string; bias: number; charted: number; z: number; ucl: number; lcl: number; signal: 'high' | 'low' | null }>;
  /** First pair beyond a limit after the reference window, or null. */
  firstSignal: { index: number; heatNumber: string; castDate: string; side: 'high' | 'low' } | null;
}

export interface LabAgreement {
  mill: string;
  grade: string;
  pairs: number;
  /** Bland–Altman on the pair biases (null with fewer than 3 pairs). */
  overall: BlandAltmanResult | null;
  byDistance: Array<{ distanceMm: number; result: BlandAltmanResult }>;
  byLevel: { bins: LevelBin[]; regression: LevelRegression | null };
  chart: BiasChart | null;
  /** Why there is no chart, when there is none. */
  chartNote: string | null;
  plantRepeatabilitySd: number | null;
  pairList: LabPair[];
}

/** Pairs of a mill's certificate curve with the plant's receiving tests of the same heat (pure). */
export function labPairs(curves: readonly HeatCurve[]): LabPair[] {
  const byHeat = new Map<number, { mill?: HeatCurve; plant: HeatCurve[] }>();
  for (const c of curves) {
    let entry = byHeat.get(c.heatId);
    if (!entry) byHeat.set(c.heatId, (entry = { plant: [] }));
    if (c.source === 'mill_certificate') entry.mill = c;
    else if (c.source === 'receiving_inspection') entry.plant.push(c);
  }
  const pairs: LabPair[] = [];
  for (const { mill, plant } of byHeat.values()) {
    if (!mill || plant.length === 0) continue;
    const differences: LabPair['differences'] = [];
    for (const [mm, millHrc] of [...mill.readings].sort((a, b) => a[0] - b[0])) {
      const plantValues: number[] = [];
      for (const p of plant) {
        for (const [pmm, hrc] of p.readings) if (Math.abs(pmm - mm) <= DISTANCE_MATCH_MM) plantValues.push(hrc);
      }
      if (plantValues.length === 0) continue;
      const plantHrc = plantValues.reduce((s, v) => s + v, 0) / plantValues.length;
      differences.push({ distanceMm: mm, mill: millHrc, plant: plantHrc, difference: millHrc - plantHrc });
    }
    if (differences.length === 0) continue;
    pairs.push({
      heatId: mill.heatId,
      heatNumber: mill.heatNumber,
      mill: mill.mill,
      castDate: mill.castDate,
      lots: plant.map((p) => p.lotNumber ?? '?'),
      plantTests: plant.length,
      differences,
      bias: differences.reduce((s, d) => s + d.difference, 0) / differences.length,
    });
  }
  pairs.sort((a, b) => a.castDate.localeCompare(b.castDate) || a.heatNumber.localeCompare(b.heatNumber));
  return pairs;
}

const D2_OF_TWO = 2 / Math.sqrt(Math.PI);

/**
 * The next R10 preferred number (ISO 3: 1, 1.25, 1.6, 2, 2.5, 3.15, 4, 5, 6.3, 8 per decade) at or above x.
 * The designed ARL is rounded up to it — fewer false alarms than asked, never more — so that the few
 * designs a plant needs are computed once each (a design with an estimated reference costs about a second).
 */
export function preferredAtLeast(x: number): number {
  const R10 = [1, 1.25, 1.6, 2, 2.5, 3.15, 4, 5, 6.3, 8, 10];
  const decade = 10 ** Math.floor(Math.log10(x));
  const m = x / decade;
  return decade * R10.find((r) => r >= m - 1e-9)!;
}

/** The bias chart of time-ordered pairs, or a note why there is none (pure). */
export function biasChart(pairs: readonly LabPair[], settings: AgreementSettings = DEFAULT_AGREEMENT_SETTINGS): { chart: BiasChart | null; note: string | null } {
  const reference = pairs.slice(0, Math.min(settings.referencePairs, pairs.length));
  if (reference.length < settings.minReferencePairs)
    return { chart: null, note: `${pairs.length} pair(s) on file: the chart needs ${settings.minReferencePairs} reference pairs before it can judge later ones` };
  if (pairs.length <= reference.length) return { chart: null, note: `all ${pairs.length} pairs are the reference window; the chart judges the pairs after it` };
  const values = pairs.map((p) => p.bias);
  const ref = values.slice(0, reference.length);
  const target = ref.reduce((s, v) => s + v, 0) / ref.length;
  let mr = 0;
  for (let i = 1; i < ref.length; i++) mr += Math.abs((ref[i] as number) - (ref[i - 1] as number));
  const sigma = mr / (ref.length - 1) / D2_OF_TWO;
  if (!(sigma > 1e-9)) return { chart: null, note: 'the reference pairs have no spread: no limits can be set' };
  const c = settings.clipSigma;
  const charted = values.map((v) => target + sigma * Math.max(-c, Math.min(c, (v - target) / sigma)));
  const years = Math.max(1, (Date.parse(pairs[pairs.length - 1]!.castDate) - Date.parse(pairs[0]!.castDate)) / (365.25 * 86_400_000));
  const pairsPerYear = settings.pairsPerYear ?? pairs.length / years;
  const targetArl = preferredAtLeast(Math.max(settings.minTargetArl, targetArlHeats({ heatsPerYear: pairsPerYear, yearsPerFalseAlarm: settings.yearsPerFalseAlarm })));
  const design = ewmaLimitForEstimated({ lambda: settings.lambda, targetArl, m: reference.length, guarantee: settings.guarantee });
  const chart = pairedBiasChart(charted, { target, sigma, lambda: settings.lambda, L: design.L });
  const points = pairs.map((p, i) => {
    const z = chart.z[i] as number;
    const ucl = chart.ucl[i] as number;
    const lcl = chart.lcl[i] as number;
    return { heatNumber: p.heatNumber, castDate: p.castDate, bias: p.bias, charted: charted[i] as number, z, ucl, lcl, signal: z > ucl ? ('high' as const) : z < lcl ? ('low' as const) : null };
  });
  const first = points.findIndex((p, i) => i >= reference.length && p.signal !== null);
  return {
    chart: {
      referencePairs: reference.length,
      target,
      sigma,
      lambda: chart.lambda,
      L: chart.L,
      targetArl,
      pairsPerYear,
      knownL: design.knownL,
      guarantee: settings.guarantee,
      arlAtShift: chart.arlAtShift,
      clipSigma: c,
      points,
      firstSignal: first < 0 ? null : { index: first, heatNumber: points[first]!.heatNumber, castDate: points[first]!.castDate, side: points[first]!.signal! },
    },
    note: null,
  };
}

/** Agreement of bins of 10 HRC of the mean level (pure). */
function levelBins(pairs: readonly LabPair[]): LevelBin[] {
  const bins = new Map<number, number[]>();
  for (const p of pairs)
    for (const d of p.differences) {
      const from = Math.floor((d.mill + d.plant) / 2 / 10) * 10;
      const list = bins.get(from);
      if (list) list.push(d.difference);
      else bins.set(from, [d.difference]);
    }
  return [...bins]
    .sort((a, b) => a[0] - b[0])
    .map(([from, diffs]) => {
      const n = diffs.length;
      const m = diffs.reduce((s, v) => s + v, 0) / n;
      const sd = n > 1 ? Math.sqrt(diffs.reduce((s, v) => s + (v - m) ** 2, 0) / (n - 1)) : null;
      return { fromHrc: from, toHrc: from + 10, n, bias: m, sd };
    });
}

/** The whole agreement study of a mill and grade from its curves (pure). */
export function labAgreementOf(mill: string, grade: string, curves: readonly HeatCurve[], settings: AgreementSettings = DEFAULT_AGREEMENT_SETTINGS): LabAgreement {
  const pairs = labPairs(curves.filter((c) => c.mill === mill));
  const ref = settings.plantRepeatabilitySd;
  // The pair bias averages k readings of the plant: its share of the plant's repeatability is σ_r/√k.
  const meanK = pairs.length ? pairs.reduce((s, p) => s + p.differences.length * p.plantTests, 0) / pairs.length : 1;
  // Each pair as the mean of the mill's and of the plant's readings over the common distances: their
  // difference is the pair bias, and their mean the level of that curve (for the regression on level).
  const meanOf = (p: LabPair, side: 'mill' | 'plant') => p.differences.reduce((s, d) => s + d[side], 0) / p.differences.length;
  const overall = pairs.length >= 3 ? blandAltman(pairs.map((p) => meanOf(p, 'mill')), pairs.map((p) => meanOf(p, 'plant')), { referenceRepeatabilitySd: ref === null ? null : ref / Math.sqrt(meanK) }) : null;
  const distances = [...new Set(pairs.flatMap((p) => p.differences.map((d) => d.distanceMm)))].sort((a, b) => a - b);
  const byDistance: LabAgreement['byDistance'] = [];
  for (const mm of distances) {
    const at = pairs.flatMap((p) => p.differences.filter((d) => d.distanceMm === mm).map((d) => ({ d, k: p.plantTests })));
    if (at.length < 3) continue;
    const k = at.reduce((s, x) => s + x.k, 0) / at.length;
    byDistance.push({ distanceMm: mm, result: blandAltman(at.map((x) => x.d.mill), at.map((x) => x.d.plant), { referenceRepeatabilitySd: ref === null ? null : ref / Math.sqrt(k) }) });
  }
  const all = pairs.flatMap((p) => p.differences);
  const { chart, note } = biasChart(pairs, settings);
  return {
    mill,
    grade,
    pairs: pairs.length,
    overall,
    byDistance,
    byLevel: { bins: levelBins(pairs), regression: levelRegression(all.map((d) => (d.mill + d.plant) / 2), all.map((d) => d.difference)) },
    chart,
    chartNote: note,
    plantRepeatabilitySd: ref,
    pairList: pairs,
  };
}

export interface AgreementQuery {
  grade: string;
  mill?: string;
  from?: string;
  to?: string;
}

/** Agreement of every mill of a grade (or one mill) with the plant's receiving laboratory. */
export async function receivingAgreement(db: Db | Executor, query: AgreementQuery, settings: AgreementSettings = DEFAULT_AGREEMENT_SETTINGS): Promise<LabAgreement[]> {
  const curves = await loadCurves(db as Db, { grade: query.grade, mill: query.mill, from: query.from, to: query.to, source: 'both' });
  const mills = [...new Set(curves.map((c) => c.mill))].sort();
  return mills.map((m) => labAgreementOf(m, query.grade, curves, settings));
}
