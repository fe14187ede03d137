// A control chart of the paired bias between two laboratories: one value per item tested by both
// (the mean difference over the distances both measured), charted by EWMA with exact limits
// (Roberts 1959; NIST/SEMATECH e-Handbook §6.3.2.4; src/stats/ewma.ts), the width L chosen so that the
// in-control average run length is a stated number of pairs. The ARL of a width is the Markov-chain
// value of J. M. Lucas & M. S. Saccucci, Technometrics 32(1), 1990, 1–12 (src/stats/runLength.ts); the
// width for a target ARL is found by bisection, the ARL rising monotonically with L.
// The in-control centre and σ come from the caller (a reference window of earlier pairs): the chart
// then asks whether the laboratory has moved from its own established bias.
import { StatsInputError } from './descriptive.ts';
import { ewmaChart, type EwmaChart } from './ewma.ts';
import { ewmaArl } from './runLength.ts';

/** The width L of an EWMA chart whose zero-state in-control ARL is `arl0` (Lucas & Saccucci 1990 chain). */
export function ewmaWidthForArl(lambda: number, arl0: number, tolerance = 1e-3): number {
  if (!(lambda > 0 && lambda <= 1)) throw new StatsInputError(`lambda must be in (0, 1], got ${lambda}`);
  if (!(arl0 >= 2 && arl0 <= 1e6)) throw new StatsInputError(`the in-control ARL must be between 2 and 10^6, got ${arl0}`);
  let lo = 0.5;
  let hi = 6;
  if (ewmaArl({ lambda, L: lo, shift: 0 }) > arl0) return lo;
  if (ewmaArl({ lambda, L: hi, shift: 0 }) < arl0) throw new StatsInputError(`an in-control ARL of ${arl0} needs L above ${hi}`);
  while (hi - lo > tolerance) {
    const mid = (lo + hi) / 2;
    if (ewmaArl({ lambda, L: mid, shift: 0 }) < arl0) lo = mid;
    else hi = mid;
  }
  return hi;
}

export interface PairedBiasChartOptions {
  /** Established bias of the laboratory pair (centre line). */
  target: number;
  /** In-control SD of one pair's bias. */
  sigma: number;
  /** EWMA weight (default 0.2). */
  lambda?: number;
  /** In-control ARL the limits are designed for, in pairs. */
  arl0: number;
}

export interface PairedBiasChart extends EwmaChart {
  arl0: number;
  /** ARL (pairs) to a shift of the bias by 1 and 2 σ of one pair, at the chosen width. */
  arlAtShift: { oneSigma: number; twoSigma: number };
}

/** EWMA chart of paired biases with limits for a designed in-control ARL. */
export function pairedBiasChart(values: readonly number[], options: PairedBiasChartOptions): PairedBiasChart {
  const lambda = options.lambda ?? 0.2;
  const L = ewmaWidthForArl(lambda, options.arl0);
  const chart = ewmaChart(values, { target: options.target, sigma: options.sigma, lambda, L });
  return {
    ...chart,
    arl0: options.arl0,
    arlAtShift: { oneSigma: ewmaArl({ lambda, L, shift: 1 }), twoSigma: ewmaArl({ lambda, L, shift: 2 }) },
  };
}
