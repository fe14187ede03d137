// Weighted isotonic (monotone) least-squares regression by the pool-adjacent-violators algorithm.
// Sources: Ayer, Brunk, Ewing, Reid & Silverman (1955), "An empirical distribution function for
// sampling with incomplete information", Ann. Math. Statist. 26, 641-647; Barlow, Bartholomew,
// Bremner & Brunk (1972), "Statistical Inference under Order Restrictions", Wiley, ch. 1.
// The fit minimises sum w_i (y_i - f_i)^2 subject to f being non-increasing (or non-decreasing)
// in the order the values are given; each fitted value is the weighted mean of its pooled block.

export type MonotoneDirection = 'non-increasing' | 'non-decreasing';

export interface IsotonicOptions {
  /** Default 'non-increasing' (the shape of an end-quench curve). */
  direction?: MonotoneDirection;
  /** Positive finite weights, one per value (default all 1). */
  weights?: readonly number[];
}

/** One pooled block: indices start..end (inclusive) share the fitted value. */
export interface IsotonicBlock {
  start: number;
  end: number;
  value: number;
  weight: number;
}

export interface IsotonicResult {
  fitted: number[];
  blocks: IsotonicBlock[];
  direction: MonotoneDirection;
  /** Weighted sum of squared differences between data and fit. */
  weightedSse: number;
  /** True when the data already satisfied the order (no pooling was needed). */
  alreadyMonotone: boolean;
}

export class IsotonicInputError extends Error {
  constructor(message: string) {
    super(message);
    this.name = 'IsotonicInputError';
  }
}

/** Weighted PAVA. Throws IsotonicInputError for empty input, non-finite values or bad weights. */
export function isotonicRegression(values: readonly number[], options: IsotonicOptions = {}): IsotonicResult {
  const direction = options.direction ?? 'non-increasing';
  const n = values.length;
  if (n === 0) throw new IsotonicInputError('isotonic regression needs at least one value');
  const weights = options.weights ?? values.map(() => 1);
  if (weights.length !== n) {
    throw new IsotonicInputError(`got ${n} values but ${weights.length} weights`);
  }
  values.forEach((v, i) => {
    if (!Number.isFinite(v)) throw new IsotonicInputError(`value at index ${i} is not a finite number`);
  });
  weights.forEach((w, i) => {
    if (!Number.isFinite(w) || w <= 0) {
      throw new IsotonicInputError(`weight at index ${i} must be a positive finite number (got ${w})`);
    }
  });

  // Work on a non-decreasing problem; a non-increasing fit is the negated fit of the negated data.
  const sign = direction === 'non-increasing' ? -1 : 1;
  const blockValue: number[] = [];
  const blockWeight: number[] = [];
  const blockStart: number[] = [];
  let pooled = false;
  for (let i = 0; i < n; i++) {
    blockValue.push(sign * values[i]);
    blockWeight.push(weights[i]);
    blockStart.push(i);
    // Pool backwards while the last two blocks violate the order.
    while (blockValue.length > 1 && blockValue[blockValue.length - 2] > blockValue[blockValue.length - 1]) {
      const v2 = blockValue.pop() as number;
      const w2 = blockWeight.pop() as number;
      blockStart.pop();
      const k = blockValue.length - 1;
      const w = blockWeight[k] + w2;
      blockValue[k] = (blockValue[k] * blockWeight[k] + v2 * w2) / w;
      blockWeight[k] = w;
      pooled = true;
    }
  }

  const fitted = new Array<number>(n);
  const blocks: IsotonicBlock[] = [];
  for (let k = 0; k < blockValue.length; k++) {
    const start = blockStart[k];
    const end = k + 1 < blockValue.length ? blockStart[k + 1] - 1 : n - 1;
    const value = sign * blockValue[k];
    for (let i = start; i <= end; i++) fitted[i] = value;
    blocks.push({ start, end, value, weight: blockWeight[k] });
  }
  let weightedSse = 0;
  for (let i = 0; i < n; i++) weightedSse += weights[i] * (values[i] - fitted[i]) ** 2;
  return { fitted, blocks, direction, weightedSse, alreadyMonotone: !pooled };
}

/** True when the values respect the direction (ties allowed), within an optional tolerance. */
export function isMonotone(values: readonly number[], direction: MonotoneDirection, tolerance = 0): boolean {
  for (let i = 1; i < values.length; i++) {
    const step = values[i] - values[i - 1];
    if (direction === 'non-increasing' ? step > tolerance : step < -tolerance) return false;
  }
  return true;
}
