// k-fold cross-validation with a reproducible (seeded) split.
//
// Sources:
// - k-fold cross-validation and its prediction-error estimate: M. Stone, "Cross-validatory choice and
//   assessment of statistical predictions", JRSS B 36(2), 1974; Hastie, Tibshirani & Friedman, The
//   Elements of Statistical Learning, 2nd ed., §7.10.
// - The split: a seeded Fisher–Yates permutation (random.ts) cut into k folds whose sizes differ by at
//   most one. With k = n this is leave-one-out, whose OLS residuals are the PRESS residuals
//   e_i / (1 − h_i) (D. M. Allen, Technometrics 16(1), 1974).
//
// The overall RMSE pools all out-of-fold squared errors: sqrt(Σ (y_i − ŷ_(−i))² / n).

import { createRng, permutation } from './random.ts';
import { fitOls, type MatrixInput } from './ols.ts';
import { toColumns } from './householderQr.ts';

export class CrossValidationError extends Error {
  override name = 'CrossValidationError';
}

/** fold[i] = the fold (0..k-1) observation i is held out in. Same (n, k, seed) → same folds. */
export function kFoldAssignment(n: number, k: number, seed: number | bigint): Int32Array {
  if (!Number.isInteger(n) || n < 2) throw new CrossValidationError(`need at least 2 observations, got ${n}`);
  if (!Number.isInteger(k) || k < 2 || k > n) throw new CrossValidationError(`k must be an integer in [2, n = ${n}], got ${k}`);
  const order = permutation(n, createRng(seed));
  const fold = new Int32Array(n);
  // Positions [floor(f·n/k), floor((f+1)·n/k)) of the shuffled order form fold f.
  for (let f = 0; f < k; f++) {
    const start = Math.floor((f * n) / k);
    const end = Math.floor(((f + 1) * n) / k);
    for (let pos = start; pos < end; pos++) fold[order[pos]] = f;
  }
  return fold;
}

export interface CrossValidateOptions {
  /** Observed responses; n = y.length. */
  y: readonly number[];
  /** Number of folds (2..n). */
  k: number;
  seed: number | bigint;
  /** Fit on the training indices, return predictions for the test indices (same order as testIdx). */
  fitPredict: (trainIdx: readonly number[], testIdx: readonly number[]) => ArrayLike<number>;
}

export interface CrossValidationResult {
  /** Pooled out-of-fold RMSE. */
  rmse: number;
  /** RMSE within each fold. */
  foldRmse: number[];
  foldSizes: number[];
  /** Out-of-fold prediction for each observation. */
  predictions: number[];
  /** Fold each observation was held out in. */
  fold: number[];
}

/** Cross-validate any fit/predict pair (a plant regression, a published predictor, ...). */
export function crossValidate(options: CrossValidateOptions): CrossValidationResult {
  const { y, k, seed, fitPredict } = options;
  const n = y.length;
  const fold = kFoldAssignment(n, k, seed);
  const predictions = new Array<number>(n).fill(NaN);
  const foldRmse: number[] = [];
  const foldSizes: number[] = [];
  let total = 0;
  for (let f = 0; f < k; f++) {
    const trainIdx: number[] = [];
    const testIdx: number[] = [];
    for (let i = 0; i < n; i++) (fold[i] === f ? testIdx : trainIdx).push(i);
    const pred = fitPredict(trainIdx, testIdx);
    if (pred.length !== testIdx.length) {
      throw new CrossValidationError(`fold ${f}: fitPredict returned ${pred.length} predictions for ${testIdx.length} rows`);
    }
    let ss = 0;
    testIdx.forEach((i, t) => {
      const yhat = pred[t];
      if (!Number.isFinite(yhat)) throw new CrossValidationError(`fold ${f}: prediction for row ${i} is not finite`);
      predictions[i] = yhat;
      ss += (y[i] - yhat) ** 2;
    });
    total += ss;
    foldRmse.push(Math.sqrt(ss / testIdx.length));
    foldSizes.push(testIdx.length);
  }
  return { rmse: Math.sqrt(total / n), foldRmse, foldSizes, predictions, fold: Array.from(fold) };
}

export interface CrossValidateOlsOptions {
  names: readonly string[];
  intercept?: boolean;
  k: number;
  seed: number | bigint;
}

/** k-fold CV of an OLS fit of y on X (convenience wrapper around crossValidate and fitOls). */
export function crossValidateOls(x: MatrixInput, y: readonly number[], options: CrossValidateOlsOptions): CrossValidationResult {
  const { rows, cols, columns } = toColumns(x);
  if (rows !== y.length) throw new CrossValidationError(`X has ${rows} rows but y has ${y.length} values`);
  const rowOf = (i: number) => {
    const r = new Array<number>(cols);
    for (let j = 0; j < cols; j++) r[j] = columns[j][i];
    return r;
  };
  return crossValidate({
    y,
    k: options.k,
    seed: options.seed,
    fitPredict: (trainIdx, testIdx) => {
      const fit = fitOls(
        trainIdx.map(rowOf),
        trainIdx.map((i) => y[i]),
        { names: options.names, intercept: options.intercept },
      );
      return fit.predict(testIdx.map(rowOf)).map((p) => p.fit);
    },
  });
}
