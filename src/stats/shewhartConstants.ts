// Control-chart constants for subgroups of size n, computed rather than typed in.
//   d2(n) = E[W] for the range W of n standard normal values = ∫ [1 − Φ(x)^n − (1 − Φ(x))^n] dx
//     (Tippett 1925, Biometrika 17:364–387; ASTM E2587 and Montgomery, Introduction to Statistical
//     Quality Control, App. VI print the table).
//   d3(n) = sd(W), from E[W²] = 2 ∬_{x<y} [1 − (1 − Φ(x))^n − Φ(y)^n + (Φ(y) − Φ(x))^n] dx dy
//     (the range's second moment; David & Nagaraja, Order Statistics, 3rd ed., §4.6).
//   c4(n) = √(2/(n−1)) Γ(n/2)/Γ((n−1)/2)   (E[s]/σ for normal samples; ASTM E2587).
//   A2 = 3/(d2√n), A3 = 3/(c4√n), D3 = max(0, 1 − 3d3/d2), D4 = 1 + 3d3/d2,
//   B3 = max(0, 1 − 3√(1−c4²)/c4), B4 = 1 + 3√(1−c4²)/c4, E2 = 3/d2   (ASTM E2587; Montgomery App. VI).
// The integrals use the adaptive Gauss–Kronrod rule in integrate.ts; values are cached per n.
import { normalCdf } from './distributions.ts';
import { integrate } from './integrate.ts';
import { lnGamma } from './gamma.ts';

export class ConstantsInputError extends Error {
  override name = 'ConstantsInputError';
}

export interface ShewhartConstants {
  n: number;
  d2: number;
  d3: number;
  c4: number;
  A2: number;
  A3: number;
  B3: number;
  B4: number;
  D3: number;
  D4: number;
  E2: number;
}

const cache = new Map<number, ShewhartConstants>();
const d2Cache = new Map<number, number>();

function checkN(n: number): void {
  if (!Number.isInteger(n) || n < 2) throw new ConstantsInputError(`subgroup size must be an integer >= 2, got ${n}`);
}

/** Half-width beyond which n·Φ(−x) is below 1e-18: the integrands vanish to double precision there. */
function halfWidth(n: number): number {
  // (Found by stepping Φ rather than by Φ⁻¹, whose far-tail inverse is not reliable below 1e-16.)
  let L = 6;
  while (n * normalCdf(-L) > 1e-18) L += 0.25;
  return L;
}

/** Expected range of n standard normal values, d2(n) (Tippett 1925). */
export function d2(n: number): number {
  checkN(n);
  const hit = d2Cache.get(n);
  if (hit !== undefined) return hit;
  // The integrand is even in x; with q = Φ(−x): 1 − (1 − q)^n − q^n, written with expm1/log1p to
  // keep full relative precision in the tails.
  const g = (x: number): number => {
    const q = normalCdf(-x);
    return -Math.expm1(n * Math.log1p(-q)) - Math.pow(q, n);
  };
  const value = 2 * integrate(g, 0, halfWidth(n), { absTol: 1e-14, relTol: 1e-14 }).value;
  d2Cache.set(n, value);
  return value;
}

/** Second moment of the range of n standard normal values, E[W²] (double integral). */
function rangeSecondMoment(n: number): number {
  const L = halfWidth(n);
  // Substitute x = u − w/2, y = u + w/2 (w = y − x > 0); the integrand is even in u.
  // With P = Φ(x) and Q = 1 − Φ(y) = Φ(−y):
  //   h = 1 − (1 − P)^n − (1 − Q)^n + (1 − P − Q)^n
  //     = −expm1(n·log1p(−P)) + (1 − Q)^n · expm1(n·log1p(−P/(1 − Q)))
  const inner = (w: number): number => {
    const h = (u: number): number => {
      const P = normalCdf(u - w / 2);
      const Q = normalCdf(-(u + w / 2));
      const oneMinusQ = 1 - Q;
      return -Math.expm1(n * Math.log1p(-P)) + Math.pow(oneMinusQ, n) * Math.expm1(n * Math.log1p(-P / oneMinusQ));
    };
    return 2 * integrate(h, 0, L, { absTol: 1e-12, relTol: 1e-12 }).value;
  };
  return 2 * integrate(inner, 0, 2 * L, { absTol: 1e-11, relTol: 1e-12 }).value;
}

/** Standard deviation of the range of n standard normal values, d3(n). */
export function d3(n: number): number {
  checkN(n);
  const m = d2(n);
  return Math.sqrt(rangeSecondMoment(n) - m * m);
}

/** c4(n) = E[s]/σ for a normal sample of size n (ASTM E2587). */
export function c4(n: number): number {
  checkN(n);
  return Math.sqrt(2 / (n - 1)) * Math.exp(lnGamma(n / 2) - lnGamma((n - 1) / 2));
}

/** All Shewhart constants for subgroup size n (cached). Sources in the module header. */
export function shewhartConstants(n: number): ShewhartConstants {
  checkN(n);
  const hit = cache.get(n);
  if (hit) return hit;
  const D2 = d2(n);
  const D3v = d3(n);
  const C4 = c4(n);
  const sq = Math.sqrt(n);
  const bWidth = (3 * Math.sqrt(1 - C4 * C4)) / C4;
  const constants: ShewhartConstants = Object.freeze({
    n,
    d2: D2,
    d3: D3v,
    c4: C4,
    A2: 3 / (D2 * sq),
    A3: 3 / (C4 * sq),
    B3: Math.max(0, 1 - bWidth),
    B4: 1 + bWidth,
    D3: Math.max(0, 1 - (3 * D3v) / D2),
    D4: 1 + (3 * D3v) / D2,
    E2: 3 / D2,
  });
  cache.set(n, constants);
  return constants;
}
