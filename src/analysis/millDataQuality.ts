// Mill-level signs of edited or invented end-quench data, per mill and grade over a window: a
// preference for even readings (Pearson's chi-square on even/odd) and curves too smooth to have been
// measured (scatter about local quadratics far below a reading's repeatability). Both tests are in
// src/hardenability/dataQuality.ts with their sources; this module chooses the data (each heat's
// current mill-certificate curves: it is the mill's reporting that is judged) and the yardstick:
// - the reporting step is what the values show: 2 HRC when every reading is even, 1 when whole,
//   0.5 when halves; rounding to a step h adds h²/12 to the variance (Sheppard 1898);
// - the repeatability of a reading is taken from the other mills of the same grade in the window
//   (their pooled scatter about the local quadratics, less their own rounding), because end-quench
//   readings scatter more than the Rockwell repeatability on test blocks; with no other mill on
//   file, the library default applies (see dataQuality.ts).
import type { Db, Executor } from '../db/connection.ts';
import { smoothnessTest, terminalDigitTest } from '../hardenability/dataQuality.ts';
import type { CheckEvidence, Reading } from '../hardenability/types.ts';
import { curvesOfMill, loadSeriesCurves, millsOf, type HeatCurve } from './seriesData.ts';

export interface DataQualityQuery {
  grade: string;
  mill?: string;
  from?: string;
  to?: string;
}

export interface MillDataQuality {
  mill: string;
  grade: string;
  heats: number;
  readings: number;
  /** Reporting step inferred from the values (HRC): 2 (all even), 1 (whole), 0.5 (halves), 0 (finer). */
  stepHrc: number;
  /** Repeatability SD used as the yardstick, and where it came from. */
  repeatabilitySdHrc: number | null;
  repeatabilityFrom: 'other_mills' | 'default';
  evenReadings: CheckEvidence<Record<string, unknown>>;
  smoothness: CheckEvidence<Record<string, unknown>>;
  /** The worse of the two verdicts. */
  verdict: CheckEvidence['verdict'];
}

const ORDER: Record<CheckEvidence['verdict'], number> = { not_applicable: 0, pass: 1, warn: 2, fail: 3 };

const onGrid = (values: readonly number[], step: number) => values.every((v) => Math.abs(v / step - Math.round(v / step)) < 1e-9);

/**
 * Readings at or below 20 HRC are left out of the digit test: 20 is the bottom of the useful range of
 * the Rockwell C scale, and softer points are commonly written as 20 (common practice), which would
 * read as a preference for an even number.
 */
export const HRC_SCALE_FLOOR = 20;

/** The coarsest grid every value lies on: 2, 1 or 0.5 HRC; 0 when finer. */
export function reportingStep(values: readonly number[]): number {
  return [2, 1, 0.5].find((step) => onGrid(values, step)) ?? 0;
}

const certificateReadings = (curves: readonly HeatCurve[]) => curves.filter((c) => c.source === 'mill_certificate');
const asReadings = (curves: readonly HeatCurve[]): Reading[][] => curves.map((c) => [...c.readings].map(([mm, hrc]) => ({ mm, hrc })));

/**
 * Repeatability of one reading estimated from other mills' curves: their pooled variance about the
 * local quadratics less each one's rounding variance (h²/12), weighted by degrees of freedom.
 * Null when no other mill gives a usable estimate.
 */
export function peerRepeatability(peers: ReadonlyArray<readonly HeatCurve[]>): number | null {
  let weighted = 0;
  let dfTotal = 0;
  for (const curves of peers) {
    const own = certificateReadings(curves);
    const values = own.flatMap((c) => [...c.readings.values()]);
    if (values.length === 0) continue;
    const step = reportingStep(values);
    // Repeatability 0 plus the rounding: the test then reports the apparent SD on its own.
    const result = smoothnessTest(asReadings(own), { step: Math.max(step, 1e-6), repeatabilitySdHrc: 0 });
    const v = result.values as { apparentSdHrc?: number; degreesOfFreedom: number };
    if (v.apparentSdHrc === undefined || v.degreesOfFreedom <= 0) continue;
    weighted += Math.max(v.apparentSdHrc ** 2 - step ** 2 / 12, 0) * v.degreesOfFreedom;
    dfTotal += v.degreesOfFreedom;
  }
  return dfTotal > 0 ? Math.sqrt(weighted / dfTotal) : null;
}

/** The two tests on one mill's curves of a grade. Pure: the curves are given. */
export function assessCurves(mill: string, grade: string, curves: readonly HeatCurve[], repeatabilitySdHrc: number | null = null): MillDataQuality {
  const certificateCurves = certificateReadings(curves);
  const values = certificateCurves.flatMap((c) => [...c.readings.values()]);
  const step = reportingStep(values);
  // Even/odd is counted on whole points (or on half points for half-point reporting).
  const digitStep = step >= 1 ? 1 : 0.5;
  // Readings on neither grid (e.g. 43.3) cannot be tested for digit preference.
  const evenReadings: CheckEvidence<Record<string, unknown>> = step > 0
    ? (terminalDigitTest(
        values.filter((v) => v > HRC_SCALE_FLOOR),
        { mode: 'even_odd', step: digitStep },
      ) as CheckEvidence<Record<string, unknown>>)
    : {
        check: 'terminal_digit',
        title: 'Even and odd readings equally frequent',
        verdict: 'not_applicable',
        summary: 'Readings are reported finer than half points; the even/odd test does not apply.',
        threshold: {},
        values: { n: values.length },
      };
  const smoothness = smoothnessTest(asReadings(certificateCurves), {
    step: Math.max(step, 1e-6),
    ...(repeatabilitySdHrc !== null ? { repeatabilitySdHrc } : {}),
  }) as CheckEvidence<Record<string, unknown>>;
  const verdict = ORDER[evenReadings.verdict] >= ORDER[smoothness.verdict] ? evenReadings.verdict : smoothness.verdict;
  return {
    mill,
    grade,
    heats: new Set(certificateCurves.map((c) => c.heatId)).size,
    readings: values.length,
    stepHrc: step,
    repeatabilitySdHrc,
    repeatabilityFrom: repeatabilitySdHrc === null ? 'default' : 'other_mills',
    evenReadings,
    smoothness,
    verdict,
  };
}

/** Data-quality signals per mill of a grade (or one mill) over a cast-date window. */
export async function millDataQuality(db: Db | Executor, query: DataQualityQuery): Promise<MillDataQuality[]> {
  // Peers are the grade's other mills, so the mill filter applies only to what is reported.
  const curves = await loadSeriesCurves(db, { grade: query.grade, from: query.from, to: query.to, source: 'mill_certificate' });
  const mills = millsOf(curves);
  return mills
    .filter((mill) => !query.mill || mill === query.mill)
    .map((mill) => {
      const peers = mills.filter((m) => m !== mill).map((m) => curvesOfMill(curves, m));
      return assessCurves(mill, query.grade, curvesOfMill(curves, mill), peerRepeatability(peers));
    });
}
