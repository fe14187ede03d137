// Certificate check: the reported curve against a predicted one. At each distance where both exist,
// the standardised residual z = (reported - predicted mean) / predicted SD. The mean and SD come from
// the caller (a published predictor with an error SD, or the plant's own regression with its
// prediction SD). |z| above warnZ (default 2) warns, above failZ (default 3) fails.
// Also reported: sum of z^2 with its chi-square p-value on n degrees of freedom, which is exact
// only if the residuals are independent (readings along one bar are correlated, so treat it as a
// rough overall index).

import { chiSquareCdf } from '../../stats/distributions.ts';
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

export function checkAgainstPrediction(
  readings: readonly Reading[],
  prediction: readonly PredictionPoint[],
  options: { warnZ?: number; failZ?: number } = {},
): CheckEvidence<{ rows: ResidualRow[]; notCompared: number[]; sumZ2: number | null; pValue: number | null }> {
  const warnZ = options.warnZ ?? 2;
  const failZ = options.failZ ?? 3;
  if (!(warnZ > 0 && failZ >= warnZ)) throw new HardenabilityInputError('need 0 < warnZ <= failZ');
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
  const threshold = { warnZ, failZ };
  if (rows.length === 0) {
    return { check: 'prediction_residuals', title, verdict: 'not_applicable', summary: 'no distance in common with the prediction.', threshold, values: { rows, notCompared, sumZ2: null, pValue: null } };
  }
  const worst = rows.reduce((m, r) => (Math.abs(r.z) > Math.abs(m.z) ? r : m), rows[0]);
  const sumZ2 = rows.reduce((s, r) => s + r.z * r.z, 0);
  const pValue = 1 - chiSquareCdf(sumZ2, rows.length);
  const verdict = Math.abs(worst.z) > failZ ? 'fail' : Math.abs(worst.z) > warnZ ? 'warn' : 'pass';
  const summary = `largest standardised residual z = ${worst.z.toFixed(2)} at ${describeDistance(worst.mm)} (reported ${worst.reported}, predicted ${worst.predicted.toFixed(1)} +/- ${worst.sd.toFixed(1)} HRC); ${rows.length} distances compared.`;
  return { check: 'prediction_residuals', title, verdict, summary, threshold, values: { rows, notCompared, sumZ2, pValue } };
}
