// A simulated probability in words that never claims more than the simulation can show: all draws
// inside reads "> 99.98 %" (the lower Clopper–Pearson bound, src/stats/binomialBounds.ts), none inside
// "< 0.02 %", anything else the estimate with its bounds, with as many decimals as the bounds need.
import { clopperPearson, type ProportionBounds } from '../stats/binomialBounds.ts';

const down = (v: number, d: number) => (Math.floor(v * 10 ** d + 1e-9) / 10 ** d).toFixed(d);
const up = (v: number, d: number) => (Math.ceil(v * 10 ** d - 1e-9) / 10 ** d).toFixed(d);

/** Decimals (1–4) that show a percentage bound apart from 0 % and 100 %. */
function decimalsFor(percentBound: number): number {
  const gap = Math.min(percentBound, 100 - percentBound);
  if (!(gap > 0)) return 4;
  return Math.max(1, Math.min(4, Math.ceil(-Math.log10(gap)) + 1));
}

/** "> 99.98 %", "< 0.02 %" or "97.3 % (95 % bounds 97.1–97.5 %)". */
export function simulatedPercentText(b: ProportionBounds): string {
  const conf = `${Math.round(b.confidence * 100)} %`;
  if (b.successes === b.trials) {
    const lo = 100 * b.lower;
    return `> ${down(lo, decimalsFor(lo))} %`;
  }
  if (b.successes === 0) {
    const hi = 100 * b.upper;
    return `< ${up(hi, decimalsFor(hi))} %`;
  }
  const lo = 100 * b.lower;
  const hi = 100 * b.upper;
  const d = Math.max(decimalsFor(lo), decimalsFor(hi), 1);
  return `${(100 * b.estimate).toFixed(d)} % (${conf} bounds ${down(lo, d)}–${up(hi, d)} %)`;
}

/** The text for a probability estimated as a share of Monte Carlo draws. */
export function simulatedProbabilityText(probability: number, draws: number, confidence = 0.95): string {
  return simulatedPercentText(clopperPearson(Math.round(probability * draws), draws, confidence));
}
