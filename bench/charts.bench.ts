// Benchmark: the univariate charts on 1,000,000 points and Hotelling T² on 100,000 × 13.
// Run: node --import tsx bench/charts.bench.ts   (prints timings; no assertions on time)
import { timeBest } from './timing.ts';
import { individualsChart } from '../src/stats/individualsChart.ts';
import { nelsonRules } from '../src/stats/nelsonRules.ts';
import { ewmaChart } from '../src/stats/ewma.ts';
import { cusumChart } from '../src/stats/cusum.ts';
import { estimateIndividualsLimits } from '../src/stats/phaseOne.ts';
import { hotellingT2PhaseOne } from '../src/stats/hotellingT2.ts';

// Deterministic normal variates: mulberry32 uniforms, Box–Muller transform.
function normals(n: number, seed: number): number[] {
  let a = seed >>> 0;
  const u = (): number => {
    a = (a + 0x6d2b79f5) >>> 0;
    let t = a;
    t = Math.imul(t ^ (t >>> 15), t | 1);
    t ^= t + Math.imul(t ^ (t >>> 7), t | 61);
    return ((t ^ (t >>> 14)) >>> 0) / 4294967296;
  };
  const out = new Array<number>(n);
  for (let i = 0; i < n; i += 2) {
    const r = Math.sqrt(-2 * Math.log(1 - u()));
    const th = 2 * Math.PI * u();
    out[i] = r * Math.cos(th);
    if (i + 1 < n) out[i + 1] = r * Math.sin(th);
  }
  return out;
}

const N = 1_000_000;
const x = normals(N, 42).map((z, i) => 45 + 1.5 * z + (i > 900_000 ? 0.8 : 0));
console.log(`univariate series: ${N.toLocaleString('en')} points`);

const ind = timeBest('individuals + MR chart', 5, () => individualsChart(x)).result;
const limits = { center: ind.center, sigma: ind.sigma };
timeBest('Nelson rules 1-8', 5, () => nelsonRules(x, limits));
timeBest('EWMA (lambda 0.2, L 3, exact limits)', 5, () => ewmaChart(x, { target: ind.center, sigma: ind.sigma, lambda: 0.2, L: 3 }));
timeBest('CUSUM (k 0.5, h 5, FIR 2.5)', 5, () => cusumChart(x, { target: ind.center, sigma: ind.sigma, k: 0.5, h: 5, headStart: 2.5 }));
timeBest('phase I (iterative exclusion, rule 1)', 5, () => estimateIndividualsLimits(x));
timeBest('all univariate charts together', 3, () => {
  const c = individualsChart(x);
  const l = { center: c.center, sigma: c.sigma };
  nelsonRules(x, l);
  ewmaChart(x, { target: c.center, sigma: c.sigma, lambda: 0.2 });
  cusumChart(x, { target: c.center, sigma: c.sigma, headStart: 2.5 });
  return estimateIndividualsLimits(x);
});

const M = 100_000;
const P = 13;
const z = normals(M * P, 7);
const rows: number[][] = [];
for (let i = 0; i < M; i++) {
  const r = new Array<number>(P);
  let carry = 0;
  for (let j = 0; j < P; j++) {
    carry = 0.7 * carry + z[i * P + j]; // correlated along the curve
    r[j] = 55 - 2.2 * j + carry;
  }
  rows.push(r);
}
console.log(`multivariate: ${M.toLocaleString('en')} x ${P}`);
timeBest('Hotelling T2 phase I (sample covariance)', 3, () => hotellingT2PhaseOne(rows));
timeBest('Hotelling T2 phase I (Ledoit-Wolf)', 3, () => hotellingT2PhaseOne(rows, { covariance: 'ledoit-wolf' }));
