// Certificate check: the reported curve against a predicted one. At each distance where both exist,
// the standardised residual z = (reported - predicted mean) / predicted SD. The mean and SD come from
// the caller (a published predictor corrected for its bias on the plant's history, or the plant's own
// regression with its prediction SD).
// Thresholds are family-wise over the m distances compared, so that an honest certificate is flagged
// with a known overall probability however many distances it reports: the per-distance two-sided level
// is the Sidak one, a = 1 - (1 - alpha)^(1/m) (Sidak 1967, J. Amer. Statist. Assoc. 62:626-633; exact for
// independent residuals, conservative for positively dependent ones), or optionally the Bonferroni one,
// a = alpha/m (Dunn 1961, J. Amer. Statist. Assoc. 56:52-64), and the threshold is z* = Phi^-1(1 - a/2).
// Defaults: warn at overall alpha = 0.05, fail at alpha = 0.001 (m = 13: warn above |z| = 2.88, fail above 3.95).
// A fixed per-distance warnZ / failZ may still be passed (then no correction is made, and the rate of
// false flags grows with m: with |z| > 2 at 13 independent distances, 1 - 0.9545^13 = 45 %).
// Every per-distance z stays in the evidence with the thresholds used.
// Also reported: sum of z^2 with its chi-square p-value on m degrees of freedom, which is exact only if
// the residuals are independent (readings along one bar are correlated, so treat it as a rough index).
// Caution: if the prediction comes from a plant model trained on this very heat, its residuals are
// in-sample and smaller than a new heat's (|z| is understated); callers should predict from a model
// whose training window ends before the heat's cast date (src/analysis/prediction.ts, trainedBefore).

import { chiSquareCdf, normalQuantile } from '../../stats/distributions.ts';
import { HardenabilityInputError } from '../errors.ts';
import type { CheckEvidence, Reading } from '../types.ts';
import { describeDistance } from '../distances.ts';

export interface PredictionPoint {
  mm: number;
  mean: number;
  sd: number;
}

export interface ResidualRow {
  mm: number;
  reported: number;
  predicted: number;
  sd: number;
  z: number;
}

export type MultiplicityCorrection = 'sidak' | 'bonferroni';

export interface PredictionCheckOptions {
  /** Overall (family-wise) false-flag probabilities over the distances compared (defaults 0.05 and 0.001). */
  warnAlpha?: number;
  failAlpha?: number;
  /** How the overall level is shared among the distances (default 'sidak'). */
  correction?: MultiplicityCorrection;
  /** Fixed per-distance |z| thresholds instead (both or neither; no multiplicity correction). */
  warnZ?: number;
  failZ?: number;
}

/** Per-distance two-sided level giving overall level alpha over m comparisons (Sidak 1967 / Bonferroni). */
export function perComparisonAlpha(alpha: number, m: number, correction: MultiplicityCorrection = 'sidak'): number {
  if (!(alpha > 0 && alpha < 1)) throw new HardenabilityInputError('alpha must be in (0, 1)');
  if (!(Number.isInteger(m) && m >= 1)) throw new HardenabilityInputError('the number of comparisons must be a positive integer');
  // 1 - (1 - alpha)^(1/m) written with log1p/expm1 to keep precision for small alpha.
  return correction === 'sidak' ? -Math.expm1(Math.log1p(-alpha) / m) : alpha / m;
}

/** Two-sided |z| threshold with overall level alpha over m comparisons: Phi^-1(1 - a/2). */
export function familyWiseZ(alpha: number, m: number, correction: MultiplicityCorrection = 'sidak'): number {
  return normalQuantile(1 - perComparisonAlpha(alpha, m, correction) / 2);
}

export function checkAgainstPrediction(
  readings: readonly Reading[],
  prediction: readonly PredictionPoint[],
  options: PredictionCheckOptions = {},
): CheckEvidence<{ rows: ResidualRow[]; notCompared: number[]; sumZ2: number | null; pValue: number | null }> {
  const fixed = options.warnZ !== undefined || options.failZ !== undefined;
  if (fixed && (options.warnZ === undefined || options.failZ === undefined)) throw new HardenabilityInputError('give both warnZ and failZ, or neither');
  if (fixed && !(options.warnZ! > 0 && options.failZ! >= options.warnZ!)) throw new HardenabilityInputError('need 0 < warnZ <= failZ');
  const warnAlpha = options.warnAlpha ?? 0.05;
  const failAlpha = options.failAlpha ?? 0.001;
  const correction = options.correction ?? 'sidak';
  if (!fixed && !(warnAlpha > 0 && warnAlpha < 1 && failAlpha > 0 && failAlpha <= warnAlpha)) throw new HardenabilityInputError('need 0 < failAlpha <= warnAlpha < 1');
  for (const p of prediction) {
    if (!(p.sd > 0) || !Number.isFinite(p.mean)) throw new HardenabilityInputError(`prediction at ${p.mm} mm needs a finite mean and a positive SD`);
  }
  const rows: ResidualRow[] = [];
  const notCompared: number[] = [];
  for (const r of readings) {
    const p = prediction.find((q) => Math.abs(q.mm - r.mm) <= 1e-6);
    if (!p) {
      notCompared.push(r.mm);
      continue;
    }
    rows.push({ mm: r.mm, reported: r.hrc, predicted: p.mean, sd: p.sd, z: (r.hrc - p.mean) / p.sd });
  }
  rows.sort((a, b) => a.mm - b.mm);
  const title = 'Reported curve consistent with the curve predicted from chemistry';
  const m = rows.length;
  const warnZ = fixed ? options.warnZ! : m ? familyWiseZ(warnAlpha, m, correction) : NaN;
  const failZ = fixed ? options.failZ! : m ? familyWiseZ(failAlpha, m, correction) : NaN;
  const threshold: Record<string, number | string> = fixed
    ? { method: 'fixed_per_distance', warnZ, failZ, distances: m }
    : { method: correction, warnAlpha, failAlpha, distances: m, warnZ, failZ };
  if (m === 0) {
    return { check: 'prediction_residuals', title, verdict: 'not_applicable', summary: 'no distance in common with the prediction.', threshold, values: { rows, notCompared, sumZ2: null, pValue: null } };
  }
  const worst = rows.reduce((a, r) => (Math.abs(r.z) > Math.abs(a.z) ? r : a), rows[0]);
  const sumZ2 = rows.reduce((s, r) => s + r.z * r.z, 0);
  const pValue = 1 - chiSquareCdf(sumZ2, m);
  const verdict = Math.abs(worst.z) > failZ ? 'fail' : Math.abs(worst.z) > warnZ ? 'warn' : 'pass';
  const rule = fixed
    ? `warn above |z| ${warnZ.toFixed(2)}, fail above ${failZ.toFixed(2)} at any distance`
    : `warn above |z| ${warnZ.toFixed(2)}, fail above ${failZ.toFixed(2)}: overall false-flag rates ${warnAlpha} and ${failAlpha} over the ${m} distances (${correction === 'sidak' ? 'Sidak' : 'Bonferroni'})`;
  const summary = `largest standardised residual z = ${worst.z.toFixed(2)} at ${describeDistance(worst.mm)} (reported ${worst.reported}, predicted ${worst.predicted.toFixed(1)} +/- ${worst.sd.toFixed(1)} HRC); ${m} distances compared; ${rule}.`;
  return { check: 'prediction_residuals', title, verdict, summary, threshold, values: { rows, notCompared, sumZ2, pValue } };
}
