// Small derivative-free minimisers for smooth low-dimensional likelihoods.
// - brentMinimize: Brent, R. P. (1973), Algorithms for Minimization without Derivatives, ch. 5
//   (golden section with parabolic interpolation), on a bracket [a, b].
// - nelderMead: Nelder, J. A. & Mead, R. (1965), Computer Journal 7:308–313, with the standard
//   coefficients reflection 1, expansion 2, contraction 1/2, shrink 1/2 (Lagarias et al. 1998,
//   SIAM J. Optim. 9:112–147); stops when the simplex's spread of values and of points is below tol.
import { StatsInputError } from './descriptive.ts';

/** Minimum of f on [a, b] (Brent 1973); returns the abscissa and value. */
export function brentMinimize(f: (x: number) => number, a: number, b: number, tol = 1e-10, maxIter = 200): { x: number; value: number } {
  if (!(b > a)) throw new StatsInputError('brentMinimize needs a < b');
  const golden = 0.3819660112501051;
  let x = a + golden * (b - a);
  let w = x;
  let v = x;
  let fx = f(x);
  let fw = fx;
  let fv = fx;
  let d = 0;
  let e = 0;
  for (let i = 0; i < maxIter; i++) {
    const m = 0.5 * (a + b);
    const tol1 = tol * Math.abs(x) + 1e-12;
    const tol2 = 2 * tol1;
    if (Math.abs(x - m) <= tol2 - 0.5 * (b - a)) break;
    let useGolden = true;
    if (Math.abs(e) > tol1) {
      const r = (x - w) * (fx - fv);
      let q = (x - v) * (fx - fw);
      let p = (x - v) * q - (x - w) * r;
      q = 2 * (q - r);
      if (q > 0) p = -p;
      else q = -q;
      if (Math.abs(p) < Math.abs(0.5 * q * e) && p > q * (a - x) && p < q * (b - x)) {
        e = d;
        d = p / q;
        const u = x + d;
        if (u - a < tol2 || b - u < tol2) d = x < m ? tol1 : -tol1;
        useGolden = false;
      }
    }
    if (useGolden) {
      e = (x < m ? b : a) - x;
      d = golden * e;
    }
    const u = Math.abs(d) >= tol1 ? x + d : x + (d > 0 ? tol1 : -tol1);
    const fu = f(u);
    if (fu <= fx) {
      if (u < x) b = x;
      else a = x;
      v = w;
      fv = fw;
      w = x;
      fw = fx;
      x = u;
      fx = fu;
    } else {
      if (u < x) a = u;
      else b = u;
      if (fu <= fw || w === x) {
        v = w;
        fv = fw;
        w = u;
        fw = fu;
      } else if (fu <= fv || v === x || v === w) {
        v = u;
        fv = fu;
      }
    }
  }
  return { x, value: fx };
}

/** Minimum of f from a start point with initial steps (Nelder & Mead 1965). */
export function nelderMead(f: (x: number[]) => number, start: readonly number[], steps: readonly number[], options: { tol?: number; maxIter?: number } = {}): { x: number[]; value: number; iterations: number } {
  const tol = options.tol ?? 1e-12;
  const maxIter = options.maxIter ?? 2000;
  const p = start.length;
  let simplex = [start.slice()];
  for (let j = 0; j < p; j++) {
    const x = start.slice();
    x[j] += steps[j];
    simplex.push(x);
  }
  let values = simplex.map(f);
  let it = 0;
  const combine = (a: number[], b: number[], t: number) => a.map((ai, j) => ai + t * (b[j] - ai));
  for (; it < maxIter; it++) {
    const order = values.map((_, i) => i).sort((i, j) => values[i] - values[j]);
    simplex = order.map((i) => simplex[i]);
    values = order.map((i) => values[i]);
    const spreadF = Math.abs(values[p] - values[0]);
    const spreadX = Math.max(...simplex.slice(1).map((x) => Math.max(...x.map((xi, j) => Math.abs(xi - simplex[0][j])))));
    if (spreadF <= tol * (Math.abs(values[0]) + 1e-12) && spreadX <= Math.sqrt(tol)) break;
    const centroid = Array.from({ length: p }, (_, j) => simplex.slice(0, p).reduce((s, x) => s + x[j], 0) / p);
    const worst = simplex[p];
    const reflected = combine(centroid, worst, -1);
    const fr = f(reflected);
    if (fr < values[0]) {
      const expanded = combine(centroid, worst, -2);
      const fe = f(expanded);
      if (fe < fr) [simplex[p], values[p]] = [expanded, fe];
      else [simplex[p], values[p]] = [reflected, fr];
    } else if (fr < values[p - 1]) {
      [simplex[p], values[p]] = [reflected, fr];
    } else {
      const outside = fr < values[p];
      const contracted = outside ? combine(centroid, reflected, 0.5) : combine(centroid, worst, 0.5);
      const fc = f(contracted);
      if (fc < (outside ? fr : values[p])) [simplex[p], values[p]] = [contracted, fc];
      else {
        for (let i = 1; i <= p; i++) {
          simplex[i] = combine(simplex[0], simplex[i], 0.5);
          values[i] = f(simplex[i]);
        }
      }
    }
  }
  const best = values.indexOf(Math.min(...values));
  return { x: simplex[best], value: values[best], iterations: it };
}
