// A control chart of the paired bias between two laboratories: one value per item tested by both
// (the mean difference over the distances both measured), charted by EWMA with exact limits
// (Roberts 1959; NIST/SEMATECH e-Handbook §6.3.2.4; src/stats/ewma.ts). The width L comes from the
// caller (designed for a stated in-control ARL by src/stats/monitoringDesign.ts); this module adds the
// out-of-control ARLs at that width for shifts of 1 and 2 σ of one pair (Lucas & Saccucci 1990,
// Technometrics 32:1–12, Markov chain in src/stats/runLength.ts), so a page can say how fast a moved
// laboratory is found. The centre and σ also come from the caller (a reference window of earlier pairs):
// the chart asks whether the laboratory has moved from its own established bias.
import { ewmaChart, type EwmaChart } from './ewma.ts';
import { ewmaArl } from './runLength.ts';

export interface PairedBiasChartOptions {
  /** Established bias of the laboratory pair (centre line). */
  target: number;
  /** In-control SD of one pair's bias. */
  sigma: number;
  /** EWMA weight. */
  lambda: number;
  /** Width of the limits in σ of the EWMA statistic. */
  L: number;
}

export interface PairedBiasChart extends EwmaChart {
  /** ARL (pairs) to a shift of the bias by 1 and 2 σ of one pair, at this width (known parameters). */
  arlAtShift: { oneSigma: number; twoSigma: number };
}

const arlMemo = new Map<string, PairedBiasChart['arlAtShift']>();

/** EWMA chart of paired biases with the ARLs of its width (memoised per λ and L: each is a chain solve). */
export function pairedBiasChart(values: readonly number[], options: PairedBiasChartOptions): PairedBiasChart {
  const { lambda, L } = options;
  const chart = ewmaChart(values, { target: options.target, sigma: options.sigma, lambda, L });
  const key = `${lambda}/${L}`;
  let arlAtShift = arlMemo.get(key);
  if (!arlAtShift) arlMemo.set(key, (arlAtShift = { oneSigma: ewmaArl({ lambda, L, shift: 1 }), twoSigma: ewmaArl({ lambda, L, shift: 2 }) }));
  return { ...chart, arlAtShift };
}
