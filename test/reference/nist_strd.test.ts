// NIST Statistical Reference Datasets (StRD), linear least squares, certified values computed in
// 500-digit arithmetic: https://www.itl.nist.gov/div898/strd/lls/lls.shtml
// Data and certified values typed from the NIST files Longley.dat and Norris.dat. The Longley data
// are also shipped at NIST's scale in statsmodels.datasets.longley, and its certified values are repeated
// in statsmodels' test results (statsmodels/regression/tests/results/results_regression.py) — they agree.
// Norris.dat data agree with the copy in the GNU Scientific Library's fit tests.
import { describe, expect, it } from 'vitest';
import { Matrix, solve } from 'ml-matrix';
import { fitOls } from '../../src/stats/ols.ts';

/** Relative error, the measure NIST uses (its LRE is −log10 of this). */
const rel = (got: number, want: number) => Math.abs(got - want) / Math.abs(want);

// Longley.dat: y = total employment; x1 GNP deflator, x2 GNP, x3 unemployed, x4 armed forces,
// x5 population, x6 year (16 observations, 1947–1962).
const longley: [number, number, number, number, number, number, number][] = [
  [60323, 83.0, 234289, 2356, 1590, 107608, 1947],
  [61122, 88.5, 259426, 2325, 1456, 108632, 1948],
  [60171, 88.2, 258054, 3682, 1616, 109773, 1949],
  [61187, 89.5, 284599, 3351, 1650, 110929, 1950],
  [63221, 96.2, 328975, 2099, 3099, 112075, 1951],
  [63639, 98.1, 346999, 1932, 3594, 113270, 1952],
  [64989, 99.0, 365385, 1870, 3547, 115094, 1953],
  [63761, 100.0, 363112, 3578, 3350, 116219, 1954],
  [66019, 101.2, 397469, 2904, 3048, 117388, 1955],
  [67857, 104.6, 419180, 2822, 2857, 118734, 1956],
  [68169, 108.4, 442769, 2936, 2798, 120445, 1957],
  [66513, 110.8, 444546, 4681, 2637, 121950, 1958],
  [68655, 112.6, 482704, 3813, 2552, 123366, 1959],
  [69564, 114.2, 502601, 3931, 2514, 125368, 1960],
  [69331, 115.7, 518173, 4806, 2572, 127852, 1961],
  [70551, 116.9, 554894, 4007, 2827, 130081, 1962],
];

// Longley.dat certified values (B0..B6 and their standard deviations).
const longleyCertified = {
  estimate: [
    -3482258.63459582, 15.0618722713733, -0.358191792925910e-1, -2.02022980381683, -1.03322686717359,
    -0.511041056535807e-1, 1829.15146461355,
  ],
  sd: [
    890420.383607373, 84.9149257747669, 0.334910077722432e-1, 0.488399681651699, 0.214274163161675,
    0.226073200069370, 455.478499142212,
  ],
  residualSd: 304.854073561965,
  rSquared: 0.995479004577296,
  // Certified ANOVA table: regression SS 184172401.944494 (6 df), residual SS 836424.055505915 (9 df),
  // F 330.285339234588.
  regressionSs: 184172401.944494,
  residualSs: 836424.055505915,
  f: 330.285339234588,
};

// Norris.dat: NIST ozone-monitor calibration, y = customer's measurement, x = NIST's (36 observations).
const norrisY = [
  0.1, 338.8, 118.1, 888.0, 9.2, 228.1, 668.5, 998.5, 449.1, 778.9, 559.2, 0.3, 0.1, 778.1, 668.8, 339.3, 448.9, 10.8,
  557.7, 228.3, 998.0, 888.8, 119.6, 0.3, 0.6, 557.6, 339.3, 888.0, 998.5, 778.9, 10.2, 117.6, 228.9, 668.4, 449.2, 0.2,
];
const norrisX = [
  0.2, 337.4, 118.2, 884.6, 10.1, 226.5, 666.3, 996.3, 448.6, 777.0, 558.2, 0.4, 0.6, 775.5, 666.9, 338.0, 447.5, 11.6,
  556.0, 228.1, 995.8, 887.6, 120.2, 0.3, 0.3, 556.8, 339.1, 887.2, 999.0, 779.0, 11.1, 118.3, 229.2, 669.1, 448.9, 0.5,
];
// Norris.dat certified values.
const norrisCertified = {
  estimate: [-0.262323073774029, 1.00211681802045],
  sd: [0.232818234301152, 0.429796848199937e-3],
  residualSd: 0.884796396144373,
  rSquared: 0.999993745883712,
  regressionSs: 4255954.13232369,
  residualSs: 26.6173985294224,
  f: 5436385.54079785,
};

const TOL = 1e-9; // required relative error on every certified value

describe('NIST StRD Longley (higher difficulty)', () => {
  const fit = fitOls(
    longley.map((r) => r.slice(1)),
    longley.map((r) => r[0]),
    { names: ['x1', 'x2', 'x3', 'x4', 'x5', 'x6'] },
  );

  it('reproduces every certified coefficient and standard deviation to 1e-9 relative', () => {
    fit.coefficients.forEach((c, j) => {
      expect(rel(c.estimate, longleyCertified.estimate[j]), `B${j}`).toBeLessThan(TOL);
      expect(rel(c.standardError, longleyCertified.sd[j]), `SD(B${j})`).toBeLessThan(TOL);
    });
  });

  it('reproduces the certified residual SD, R², sums of squares and F', () => {
    expect(rel(fit.sigma, longleyCertified.residualSd)).toBeLessThan(TOL);
    expect(rel(fit.rSquared, longleyCertified.rSquared)).toBeLessThan(TOL);
    expect(rel(fit.rss, longleyCertified.residualSs)).toBeLessThan(TOL);
    expect(rel(fit.tss - fit.rss, longleyCertified.regressionSs)).toBeLessThan(TOL);
    expect(rel(fit.fStatistic, longleyCertified.f)).toBeLessThan(TOL);
    expect(fit.dfModel).toBe(6);
    expect(fit.dfResidual).toBe(9);
  });
});

describe('NIST StRD Longley is a discriminating check', () => {
  it('the normal equations (XᵀX)b = Xᵀy solved in doubles miss the 1e-9 bound that QR meets', () => {
    // Control: the same certified values, computed the way this library must not (LU on XᵀX, ml-matrix).
    const X = new Matrix(longley.map((r) => [1, ...r.slice(1)]));
    const y = Matrix.columnVector(longley.map((r) => r[0]));
    const b = solve(X.transpose().mmul(X), X.transpose().mmul(y));
    const worst = Math.max(...longleyCertified.estimate.map((e, j) => rel(b.get(j, 0), e)));
    expect(worst).toBeGreaterThan(TOL);
  });
});

describe('NIST StRD Norris (lower difficulty)', () => {
  const fit = fitOls(
    norrisX.map((v) => [v]),
    norrisY,
    { names: ['x'] },
  );

  it('reproduces the certified coefficients and standard deviations to 1e-9 relative', () => {
    fit.coefficients.forEach((c, j) => {
      expect(rel(c.estimate, norrisCertified.estimate[j]), `B${j}`).toBeLessThan(TOL);
      expect(rel(c.standardError, norrisCertified.sd[j]), `SD(B${j})`).toBeLessThan(TOL);
    });
  });

  it('reproduces the certified residual SD, R², sums of squares and F', () => {
    expect(rel(fit.sigma, norrisCertified.residualSd)).toBeLessThan(TOL);
    expect(rel(fit.rSquared, norrisCertified.rSquared)).toBeLessThan(TOL);
    expect(rel(fit.rss, norrisCertified.residualSs)).toBeLessThan(TOL);
    expect(rel(fit.tss - fit.rss, norrisCertified.regressionSs)).toBeLessThan(TOL);
    expect(rel(fit.fStatistic, norrisCertified.f)).toBeLessThan(TOL);
    expect(fit.dfResidual).toBe(34);
  });
});
