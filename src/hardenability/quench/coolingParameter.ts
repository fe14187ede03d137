// The cooling parameter λ: t8/5, the time from 800 to 500 °C, in hectoseconds (λ = t8/5 / 100 s), as
// continuous-cooling diagrams for hardening are read (common practice). The mean rate over the range is
// 300 K / t8/5.
import { HardenabilityInputError } from '../errors.ts';

/** λ from t8/5 in seconds. */
export function lambdaOf(t85Seconds: number): number {
  if (!(t85Seconds > 0)) throw new HardenabilityInputError('t8/5 must be a positive number of seconds');
  return t85Seconds / 100;
}

/** Mean cooling rate from 800 to 500 °C (K/s) for a cooling parameter λ. */
export function meanRate85(lambda: number): number {
  if (!(lambda > 0)) throw new HardenabilityInputError('λ must be positive');
  return 300 / (100 * lambda);
}
