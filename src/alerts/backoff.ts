// Retry delays: exponential back-off with "equal jitter" (M. Brooker, "Exponential Backoff And
// Jitter", AWS Architecture Blog, 2015): the ceiling doubles with each failed attempt up to a cap, and
// the delay is half the ceiling plus a uniformly random share of the other half, so retries always
// spread out in time and many failing deliveries do not come back at the same instant.

export interface BackoffOptions {
  /** Ceiling after the first failure, in ms. */
  baseMs: number;
  /** Largest ceiling, in ms. */
  maxMs: number;
}

export class BackoffInputError extends Error {}

/**
 * Delay before the next attempt after `failedAttempts` failures (1 for the first failure).
 * `random` is a uniform number in [0, 1).
 */
export function backoffDelayMs(failedAttempts: number, options: BackoffOptions, random: number): number {
  if (!Number.isInteger(failedAttempts) || failedAttempts < 1) throw new BackoffInputError(`failed attempts must be a whole number >= 1, not ${failedAttempts}`);
  if (!(options.baseMs > 0) || !(options.maxMs >= options.baseMs)) throw new BackoffInputError('back-off needs 0 < baseMs <= maxMs');
  if (!(random >= 0 && random < 1)) throw new BackoffInputError(`random must lie in [0, 1), not ${random}`);
  const ceiling = Math.min(options.maxMs, options.baseMs * 2 ** Math.min(failedAttempts - 1, 52));
  return Math.round(ceiling / 2 + random * (ceiling / 2));
}
