// Regression benchmarks: OLS by Householder QR on 100,000 × 12 (diagnostics off, then on), and 5-fold
// cross-validated OLS on 10,000 × 12. Run: node --import tsx bench/regression.bench.ts
import { timeBest } from './timing.ts';
import { fitOls } from '../src/stats/ols.ts';
import { crossValidateOls } from '../src/stats/crossValidation.ts';
import { fitRidge } from '../src/stats/ridge.ts';
import { createRng } from '../src/stats/random.ts';

function dataset(n: number, p: number, seed: number) {
  const rng = createRng(seed);
  const X: number[][] = new Array(n);
  const y: number[] = new Array(n);
  for (let i = 0; i < n; i++) {
    const common = rng.normal();
    const row = new Array<number>(p);
    let s = 25;
    for (let j = 0; j < p; j++) {
      row[j] = 0.5 + 0.1 * (j + 1) + 0.05 * (0.4 * common + rng.normal());
      s += (j % 3 === 0 ? 8 : -3) * row[j];
    }
    X[i] = row;
    y[i] = s + rng.normal();
  }
  return { X, y, names: Array.from({ length: p }, (_, j) => `x${j + 1}`) };
}

const big = dataset(100_000, 12, 1);
timeBest('OLS 100,000 x 12 (diagnostics off)', 5, () => fitOls(big.X, big.y, { names: big.names }));
timeBest('OLS 100,000 x 12 (diagnostics on)', 3, () => fitOls(big.X, big.y, { names: big.names, diagnostics: true }));
timeBest('Ridge 100,000 x 12 (GCV-selected penalty)', 3, () => fitRidge(big.X, big.y, { names: big.names, lambda: 'gcv' }));

const mid = dataset(10_000, 12, 2);
const cv = timeBest('5-fold CV of OLS, 10,000 x 12', 5, () => crossValidateOls(mid.X, mid.y, { names: mid.names, k: 5, seed: 7 }));
console.log(`  (CV RMSE ${cv.result.rmse.toFixed(4)}; noise SD 1)`);
