// Retry delays: exponential back-off with "equal jitter" (M. Brooker, "Exponential Backoff And
// Jitter", AWS Architecture Blog, 2015): the ceiling doubles with each failed attempt up to a cap, and
// the delay is half the ceiling plus a uniformly random share of the other half, so retries always
// spread out in time and many failing deliveries do not come back at the same instant.
//
// The default schedule is meant to outlast a receiver's maintenance window or a lost night: first retry
// 30-60 s after the first failure, doubling to a 4 h ceiling, 20 attempts in all. With equal jitter the
// 19 waits between attempt 1 and attempt 20 add up to between 24.1 h (every draw 0) and 48.3 h (every
// draw near 1): see retrySpanMs.

export interface BackoffOptions {
  /** Ceiling after the first failure, in ms. */
  baseMs: number;
  /** Largest ceiling, in ms. */
  maxMs: number;
}

/** Attempts before a delivery is dead, first ceiling and cap of the default schedule. */
export const DEFAULT_RETRY_SCHEDULE = { maxAttempts: 20, baseMs: 60_000, maxMs: 4 * 3_600_000 } as const;
/** The shortest time from first to last attempt the service accepts without a warning. */
export const MIN_RECOMMENDED_SPAN_MS = 24 * 3_600_000;

export class BackoffInputError extends Error {}

/**
 * Delay before the next attempt after `failedAttempts` failures (1 for the first failure).
 * `random` is a uniform number in [0, 1).
 */
export function backoffDelayMs(failedAttempts: number, options: BackoffOptions, random: number): number {
  if (!Number.isInteger(failedAttempts) || failedAttempts < 1) throw new BackoffInputError(`failed attempts must be a whole number >= 1, not ${failedAttempts}`);
  if (!(options.baseMs > 0) || !(options.maxMs >= options.baseMs)) throw new BackoffInputError('back-off needs 0 < baseMs <= maxMs');
  if (!(random >= 0 && random < 1)) throw new BackoffInputError(`random must lie in [0, 1), not ${random}`);
  return Math.round(ceilingMs(failedAttempts, options) / 2 + random * (ceilingMs(failedAttempts, options) / 2));
}

function ceilingMs(failedAttempts: number, options: BackoffOptions): number {
  return Math.min(options.maxMs, options.baseMs * 2 ** Math.min(failedAttempts - 1, 52));
}

/**
 * The shortest and longest time from the first attempt to the last one (attempt `maxAttempts`): the
 * sum of the waits after failures 1 .. maxAttempts-1, each between half its ceiling and the ceiling.
 * A delivery is dead only after that last attempt fails. (Attempts themselves and the dispatcher's
 * round interval add to both.)
 */
export function retrySpanMs(maxAttempts: number, options: BackoffOptions): { minMs: number; maxMs: number } {
  if (!Number.isInteger(maxAttempts) || maxAttempts < 1) throw new BackoffInputError(`maxAttempts must be a whole number >= 1, not ${maxAttempts}`);
  if (!(options.baseMs > 0) || !(options.maxMs >= options.baseMs)) throw new BackoffInputError('back-off needs 0 < baseMs <= maxMs');
  let max = 0;
  for (let n = 1; n < maxAttempts; n++) max += ceilingMs(n, options);
  return { minMs: max / 2, maxMs: max };
}

/** The schedule in words, for logs and docs: "20 attempts over 24.1-48.3 h (first retry after 30-60 s, ceiling 4 h)". */
export function describeSchedule(maxAttempts: number, options: BackoffOptions): string {
  const span = retrySpanMs(maxAttempts, options);
  return `${maxAttempts} attempts over ${hours(span.minMs)}-${hours(span.maxMs)} h (first retry after ${options.baseMs / 2000}-${options.baseMs / 1000} s, ceiling ${hours(options.maxMs)} h)`;
}

const hours = (ms: number) => String(Math.round((ms / 3_600_000) * 10) / 10);
