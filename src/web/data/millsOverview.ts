// The Mills overview: for every mill and grade in a cast-date window, the heats, the share inside the
// band in force on each heat's cast date, the lowest Ppk over the band's distances (with its interval)
// and the open alerts, plus a trend arrow read from the curve-level drift scheme the alerts run. Every number
// comes from src/analysis or src/hardenability; this module only loads once per grade and arranges.
import type { Db } from '../../db/connection.ts';
import { listBands, listGrades } from '../../db/referenceData.ts';
import { listAlerts } from '../../db/alerts.ts';
import { toBand } from '../../analysis/bandOf.ts';
import { capabilityAtBand, type DistanceCapability } from '../../analysis/capabilityStudy.ts';
import { minimumIndexInterval } from '../../stats/capability.ts';
import { curveSeries } from '../../analysis/curveSeries.ts';
import { asTest, curvesOfMill, groupByHeat, loadSeriesCurves, millsOf, todayIso } from '../../analysis/seriesData.ts';
import { bandInForce } from '../../hardenability/bands.ts';
import { heatConformance } from '../../hardenability/conformance.ts';
import { assessCurves, peerRepeatability, type MillDataQuality } from '../../analysis/millDataQuality.ts';

export type TrendWord = 'rising' | 'falling' | 'steady' | 'signal up' | 'signal down' | 'too few heats';

export interface MillGradeRow {
  mill: string;
  grade: string;
  heats: number;
  /** Heats judged against a band in force on their cast date, and how many of them conform. */
  judged: number;
  inBand: number;
  failed: number;
  shareInBand: number | null;
  /**
   * The smallest Ppk over the band distances (a minimum of `of` estimates: reads low) and an interval
   * for the weakest distance's true Ppk, simultaneous over the distances.
   */
  lowest: { distanceMm: number; label: string | null; ppk: number; lower: number; upper: number; n: number; of: number; intervalMethod: string } | null;
  openAlerts: number;
  trend: TrendWord;
  /** EWMA at the newest heat as a fraction of the way from centre to limit (signed), for the tooltip. */
  trendPosition: number | null;
  /** Certificate curves stated as calculated from chemistry: left out of every figure in the row. */
  calculatedCurves: number;
  /** Signs of edited data in the mill's certificates (even readings, too-smooth curves). */
  dataQuality: Pick<MillDataQuality, 'verdict'> & { findings: string[] };
}

/** The data-quality checks that did not pass, in words for the table. */
function dataQualityCell(q: MillDataQuality): MillGradeRow['dataQuality'] {
  const findings = [q.evenReadings, q.smoothness].filter((c) => c.verdict === 'fail' || c.verdict === 'warn').map((c) => `${c.title.toLowerCase()}: ${c.verdict === 'fail' ? 'no' : 'doubtful'} (${c.summary})`);
  return { verdict: q.verdict, findings };
}

export interface MillsOverview {
  window: { from: string | null; to: string | null };
  rows: MillGradeRow[];
}

/**
 * Lowest Ppk over the band distances that have a result, with an interval for the minimum: simultaneous
 * (Šidák) over the k distances, so it covers the weakest true Ppk at ≥ 95 % (minimumIndexInterval in
 * src/stats/capability.ts). The point value is the minimum of k estimates and so reads low.
 */
export function lowestPpk(distances: readonly DistanceCapability[]): MillGradeRow['lowest'] {
  const withResult = distances.filter((d) => d.result);
  if (withResult.length === 0) return null;
  const m = minimumIndexInterval(withResult.map((d) => ({ estimate: d.result!.ppk, n: d.result!.n, df: d.result!.intervals.df.overall })), 0.95);
  const d = withResult[m.at];
  return { distanceMm: d.distanceMm, label: d.label, ppk: m.estimate, lower: m.lower, upper: m.upper, n: d.result!.n, of: m.k, intervalMethod: `simultaneous over ${m.k} distance(s) (Šidák, ${(100 * m.perIndexConfidence).toFixed(2)} % each; Bissell 1990)` };
}

/**
 * The word for the newest EWMA value: beyond a limit is a signal; more than half-way from the centre
 * to a limit is a drift up or down; otherwise steady. (Half-way is our display threshold, not a rule
 * from a standard; the Trends page shows the chart itself.)
 */
export function trendWord(position: number | null, signalled: boolean): TrendWord {
  if (position === null) return 'too few heats';
  if (signalled || Math.abs(position) >= 1) return position > 0 ? 'signal up' : 'signal down';
  if (position >= 0.5) return 'rising';
  if (position <= -0.5) return 'falling';
  return 'steady';
}

/**
 * The trend word from the curve-level drift scheme the alerts run (src/analysis/curveSeries.ts), at the
 * newest heat of the whole series: its level EWMA as a share of the designed limit, and whether the
 * newest heat signals (level or shape).
 */
async function trendAt(db: Db, meta: { grade: string; mill: string }) {
  const series = await curveSeries(db, { grade: meta.grade, mill: meta.mill, source: 'mill_certificate' });
  const last = series.monitoring.monitored[series.monitoring.monitored.length - 1];
  if (series.monitoring.status !== 'monitoring' || !last) return { trend: 'too few heats' as TrendWord, position: null };
  const position = last.point.limit > 0 ? last.point.ewma / last.point.limit : 0;
  return { trend: trendWord(position, last.point.level !== null || last.point.shape), position };
}

export async function millsOverview(db: Db, window: { from?: string; to?: string }): Promise<MillsOverview> {
  const [grades, alerts] = await Promise.all([listGrades(db), listAlerts(db, { status: 'open', limit: 10000 })]);
  const openByKey = new Map<string, number>();
  for (const a of alerts.alerts) {
    const key = `${a.mill}|${a.grade}`;
    openByKey.set(key, (openByKey.get(key) ?? 0) + 1);
  }
  const asOf = window.to ?? todayIso();
  const rows: MillGradeRow[] = [];
  const loaded = await Promise.all(
    grades.map(async (grade) => ({
      grade,
      versions: (await listBands(db, grade.code)).map(toBand),
      all: await loadSeriesCurves(db, { grade: grade.code, from: window.from, to: window.to, source: 'both' }),
      calculated: await loadSeriesCurves(db, { grade: grade.code, from: window.from, to: window.to, source: 'both', basis: 'calculated' }),
    })),
  );
  for (const { grade, versions, all, calculated } of loaded) {
    const activeBand = bandInForce(versions, asOf);
    const mills = millsOf(all);
    for (const mill of mills) {
      const own = curvesOfMill(all, mill);
      const certificates = own.filter((c) => c.source === 'mill_certificate');
      let judged = 0;
      let inBand = 0;
      let failed = 0;
      const heats = groupByHeat(own);
      for (const tests of heats) {
        const band = bandInForce(versions, tests[0].castDate);
        if (!band) continue;
        const verdict = heatConformance(tests.map(asTest), band).verdict;
        judged++;
        if (verdict === 'pass') inBand++;
        else if (verdict === 'fail') failed++;
      }
      const lowest = activeBand ? lowestPpk(capabilityAtBand(certificates, activeBand, { fitted: 'never' })) : null;
      const { trend, position } = await trendAt(db, { grade: grade.code, mill });
      rows.push({
        mill,
        grade: grade.code,
        heats: heats.length,
        judged,
        inBand,
        failed,
        shareInBand: judged ? inBand / judged : null,
        lowest,
        openAlerts: openByKey.get(`${mill}|${grade.code}`) ?? 0,
        calculatedCurves: curvesOfMill(calculated, mill).length,
        trend,
        trendPosition: position,
        dataQuality: dataQualityCell(
          assessCurves(mill, grade.code, certificates, peerRepeatability(mills.filter((m) => m !== mill).map((m) => curvesOfMill(all, m)))),
        ),
      });
    }
  }
  rows.sort((a, b) => a.mill.localeCompare(b.mill) || a.grade.localeCompare(b.grade));
  return { window: { from: window.from ?? null, to: window.to ?? null }, rows };
}
