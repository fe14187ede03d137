// Analytic solutions of transient conduction with constant properties, for checking the solver.
//  - Bessel functions by their integral J_n(x) = (1/π)∫_0^π cos(nτ − x·sin τ) dτ (Abramowitz & Stegun 9.1.21),
//    evaluated by the trapezoid rule, which converges geometrically for this periodic integrand.
//  - Long cylinder, surface film coefficient h (Biot Bi = hR/k) or surface held (Bi = ∞), from a uniform
//    start (Carslaw & Jaeger, Conduction of Heat in Solids, 2nd ed. 1959, §7.6 and §7.4):
//      θ(r, t) = Σ 2·Bi·J0(β_n r/R) / ((β_n² + Bi²)·J0(β_n)) · exp(−β_n² Fo),  β J1(β) = Bi J0(β);
//      Bi = ∞: θ = Σ 2·J0(β_n r/R) / (β_n J1(β_n)) · exp(−β_n² Fo),  J0(β_n) = 0;   Fo = αt/R².
//  - Semi-infinite solid, surface held from t = 0 (Carslaw & Jaeger §2.4): θ = erf(z / (2√(αt))).
//  - Finite rod 0..L, end z = 0 held, z = L insulated (Carslaw & Jaeger §3.3):
//      θ = Σ 4/((2m+1)π) · sin((2m+1)πz/(2L)) · exp(−(2m+1)²π²αt/(4L²)).
export function besselJ(n: number, x: number): number {
  const m = 200;
  let s = 0;
  for (let i = 0; i <= m; i++) {
    const tau = (Math.PI * i) / m;
    const w = i === 0 || i === m ? 0.5 : 1;
    s += w * Math.cos(n * tau - x * Math.sin(tau));
  }
  return s / m;
}

function bisect(f: (x: number) => number, a: number, b: number): number {
  let fa = f(a);
  for (let i = 0; i < 60; i++) {
    const m = 0.5 * (a + b);
    const fm = f(m);
    if (fa * fm <= 0) b = m;
    else {
      a = m;
      fa = fm;
    }
  }
  return 0.5 * (a + b);
}

/** First `count` positive roots of β J1(β) − Bi J0(β) (Bi = Infinity: roots of J0). */
function scanZeros(f: (x: number) => number, count: number): number[] {
  const roots: number[] = [];
  let a = 1e-6;
  let fa = f(a);
  while (roots.length < count) {
    const b = a + 0.01;
    const fb = f(b);
    if (fa * fb < 0) roots.push(bisect(f, a, b));
    a = b;
    fa = fb;
  }
  return roots;
}
const zeros: { j0: number[]; j1: number[] } = { j0: [], j1: [] };
const rootCache = new Map<string, number[]>();

/**
 * First `count` positive roots of β J1(β) − Bi J0(β) (Bi = Infinity: the zeros of J0). The n-th root lies
 * between the (n−1)-th zero of J1 (0 for n = 1) and the n-th zero of J0 (Carslaw & Jaeger §7.6), where it is bisected.
 */
export function cylinderRoots(bi: number, count: number): number[] {
  const key = `${bi}:${count}`;
  const held = rootCache.get(key);
  if (held) return held;
  if (zeros.j0.length < count) {
    zeros.j0 = scanZeros((x) => besselJ(0, x), count);
    zeros.j1 = scanZeros((x) => besselJ(1, x), count);
  }
  const f = (b: number) => b * besselJ(1, b) - bi * besselJ(0, b);
  const roots = Array.from({ length: count }, (_, i) => (bi === Infinity ? zeros.j0[i] : bisect(f, i === 0 ? 1e-9 : zeros.j1[i - 1], zeros.j0[i])));
  rootCache.set(key, roots);
  return roots;
}

/** θ = (T − T∞)/(T0 − T∞) in a long cylinder at r/R, Fourier number Fo. */
export function cylinderTheta(bi: number, rOverR: number, fo: number, terms = 12): number {
  const roots = cylinderRoots(bi, terms);
  let s = 0;
  for (const b of roots) {
    const coef = bi === Infinity ? 2 / (b * besselJ(1, b)) : (2 * bi) / ((b * b + bi * bi) * besselJ(0, b));
    s += coef * besselJ(0, b * rOverR) * Math.exp(-b * b * fo);
  }
  return s;
}

/** dθ/dFo in a long cylinder (negative while cooling). */
export function cylinderThetaRate(bi: number, rOverR: number, fo: number, terms = 12): number {
  const roots = cylinderRoots(bi, terms);
  let s = 0;
  for (const b of roots) {
    const coef = bi === Infinity ? 2 / (b * besselJ(1, b)) : (2 * bi) / ((b * b + bi * bi) * besselJ(0, b));
    s -= b * b * coef * besselJ(0, b * rOverR) * Math.exp(-b * b * fo);
  }
  return s;
}

/** Fo at which the cylinder's θ at r/R falls to `theta`. */
export function cylinderFoAt(bi: number, rOverR: number, theta: number): number {
  return bisect((fo) => cylinderTheta(bi, rOverR, fo) - theta, 1e-4, 20);
}

/** erf by its Maclaurin series (Abramowitz & Stegun 7.1.5). */
export function erf(x: number): number {
  let sum = 0;
  let term = x;
  for (let n = 0; n < 200; n++) {
    sum += term / (2 * n + 1);
    term *= (-x * x) / (n + 1);
    if (Math.abs(term) < 1e-17) break;
  }
  return (2 / Math.sqrt(Math.PI)) * sum;
}

export function rodTheta(z: number, L: number, alphaT: number, terms = 120): number {
  let s = 0;
  for (let m = 0; m < terms; m++) {
    const k = (2 * m + 1) * Math.PI;
    s += (4 / k) * Math.sin((k * z) / (2 * L)) * Math.exp((-k * k * alphaT) / (4 * L * L));
  }
  return s;
}

export { bisect };
