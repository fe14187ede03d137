// Mean and standard deviation of a normal sample in which some values are known only as bounds: "below
// c" (left-censored, e.g. a hardness under the C scale written "<20") or "above d" (right-censored).
// Maximum likelihood (A. C. Cohen, "Simplified estimators for the normal distribution when samples are
// singly censored or truncated", Technometrics 1 (1959) 217-237), computed by the EM algorithm
// (Dempster, Laird & Rubin, JRSS B 39 (1977) 1-38): each censored value is replaced by its conditional
// moments under the current estimate, for X < c
//   E[X] = μ − σλ,  E[X²] = μ² + σ² − σλ(c + μ),  λ = φ(z)/Φ(z), z = (c − μ)/σ,
// and for X > d
//   E[X] = μ + σλ', E[X²] = μ² + σ² + σλ'(d + μ), λ' = φ(z)/(1 − Φ(z)), z = (d − μ)/σ;
// then μ and σ² are the means of those moments. The MLE of σ divides by n; `sd` rescales it by
// √(n/(n − 1)) so that a sample with nothing censored gives exactly the usual sample SD.
import { normalCdf, normalPdf } from './distributions.ts';
import { StatsInputError } from './descriptive.ts';

export type Censoring = 'below' | 'above' | null | undefined;

export interface CensoredNormalFit {
  mean: number;
  /** MLE of σ (divisor n). */
  sigmaMle: number;
  /** σ rescaled by √(n/(n − 1)): the sample SD when nothing is censored. */
  sd: number;
  n: number;
  below: number;
  above: number;
  iterations: number;
  logLikelihood: number;
}

function logLikelihood(values: readonly number[], censoring: readonly Censoring[], mu: number, sigma: number): number {
  let ll = 0;
  values.forEach((x, i) => {
    const z = (x - mu) / sigma;
    const c = censoring[i];
    if (c === 'below') ll += Math.log(Math.max(normalCdf(z), 1e-300));
    else if (c === 'above') ll += Math.log(Math.max(normalCdf(-z), 1e-300));
    else ll += Math.log(normalPdf(z)) - Math.log(sigma);
  });
  return ll;
}

/** Censored-normal MLE. `censoring[i]` says whether values[i] is a bound ('below' c, 'above' d) or a reading. */
export function censoredNormalFit(values: readonly number[], censoring: readonly Censoring[], options: { tolerance?: number; maxIterations?: number } = {}): CensoredNormalFit {
  const n = values.length;
  if (censoring.length !== n) throw new StatsInputError('censoring must give one entry per value');
  for (const x of values) if (!Number.isFinite(x)) throw new StatsInputError('values must be finite');
  const observed = values.filter((_, i) => !censoring[i]);
  if (observed.length < 2) throw new StatsInputError('a censored-normal fit needs at least 2 values that are not bounds');
  const below = censoring.filter((c) => c === 'below').length;
  const above = censoring.filter((c) => c === 'above').length;
  const tolerance = options.tolerance ?? 1e-10;
  const maxIterations = options.maxIterations ?? 10_000;
  // Start from the observed values alone.
  let mu = observed.reduce((a, b) => a + b, 0) / observed.length;
  let sigma = Math.sqrt(observed.reduce((s, x) => s + (x - mu) ** 2, 0) / observed.length) || 1;
  let iterations = 0;
  for (; iterations < maxIterations; iterations++) {
    let s1 = 0;
    let s2 = 0;
    values.forEach((x, i) => {
      const c = censoring[i];
      if (c === 'below') {
        const z = (x - mu) / sigma;
        const lambda = normalPdf(z) / Math.max(normalCdf(z), 1e-300);
        s1 += mu - sigma * lambda;
        s2 += mu * mu + sigma * sigma - sigma * lambda * (x + mu);
      } else if (c === 'above') {
        const z = (x - mu) / sigma;
        const lambda = normalPdf(z) / Math.max(normalCdf(-z), 1e-300);
        s1 += mu + sigma * lambda;
        s2 += mu * mu + sigma * sigma + sigma * lambda * (x + mu);
      } else {
        s1 += x;
        s2 += x * x;
      }
    });
    const nextMu = s1 / n;
    const nextSigma = Math.sqrt(Math.max(s2 / n - nextMu * nextMu, 1e-300));
    const done = Math.abs(nextMu - mu) < tolerance * (1 + Math.abs(mu)) && Math.abs(nextSigma - sigma) < tolerance * (1 + sigma);
    mu = nextMu;
    sigma = nextSigma;
    if (done) break;
  }
  return { mean: mu, sigmaMle: sigma, sd: sigma * Math.sqrt(n / (n - 1)), n, below, above, iterations: iterations + 1, logLikelihood: logLikelihood(values, censoring, mu, sigma) };
}
