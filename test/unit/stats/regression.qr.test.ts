// Householder QR with limited pivoting: algebraic identities that must hold for any matrix
// (Golub & Van Loan, Matrix Computations, 4th ed., §5.2: QᵀQ = I, A·P = Q·R with R upper triangular).
import { describe, expect, it } from 'vitest';
import { Matrix, solve } from 'ml-matrix';
import {
  columnDependencies,
  householderQr,
  MatrixShapeError,
  qtMultiply,
  rEntry,
  solveUpper,
  thinQ,
  toColumns,
  upperInverse,
} from '../../../src/stats/householderQr.ts';
import { createRng } from '../../../src/stats/random.ts';

function randomColumns(m: number, n: number, seed: number): Float64Array[] {
  const rng = createRng(seed);
  return Array.from({ length: n }, () => Float64Array.from({ length: m }, () => rng.normal()));
}

describe('householderQr', () => {
  it('gives orthonormal Q and reproduces A·P = Q·R', () => {
    const a = randomColumns(30, 5, 1);
    const qr = householderQr(a);
    expect(qr.rank).toBe(5);
    const q = thinQ(qr, 5);
    for (let i = 0; i < 5; i++) {
      for (let j = 0; j < 5; j++) {
        const dot = q[i].reduce((s, v, r) => s + v * q[j][r], 0);
        expect(Math.abs(dot - (i === j ? 1 : 0))).toBeLessThan(1e-14);
      }
    }
    for (let k = 0; k < 5; k++) {
      const col = a[qr.pivot[k]];
      for (let r = 0; r < 30; r++) {
        let s = 0;
        for (let i = 0; i <= k; i++) s += q[i][r] * rEntry(qr, i, k);
        expect(Math.abs(s - col[r])).toBeLessThan(1e-13);
      }
    }
  });

  it('solves least squares like an independent LU solve of a well-conditioned square system', () => {
    // For square non-singular A, the LS solution is A⁻¹b; compare with ml-matrix's LU solve.
    const a = randomColumns(6, 6, 3);
    const b = Float64Array.from({ length: 6 }, (_, i) => i - 2.5);
    const qr = householderQr(a);
    const xPiv = solveUpper(qr, qtMultiply(qr, b), 6);
    const x = new Float64Array(6);
    qr.pivot.forEach((col, k) => (x[col] = xPiv[k]));
    const A = new Matrix(6, 6);
    a.forEach((c, j) => c.forEach((v, i) => A.set(i, j, v)));
    const ref = solve(A, Matrix.columnVector(Array.from(b)));
    for (let j = 0; j < 6; j++) expect(Math.abs(x[j] - ref.get(j, 0))).toBeLessThan(1e-10);
  });

  it('upperInverse is the inverse of R', () => {
    const qr = householderQr(randomColumns(20, 4, 7));
    const inv = upperInverse(qr);
    for (let i = 0; i < 4; i++) {
      for (let j = 0; j < 4; j++) {
        let s = 0;
        for (let k = 0; k < 4; k++) s += rEntry(qr, i, k) * inv[k][j];
        expect(Math.abs(s - (i === j ? 1 : 0))).toBeLessThan(1e-13);
      }
    }
  });

  it('keeps the user order and reports the later member of a dependent set, with its combination', () => {
    const [x0, x1, x2] = randomColumns(25, 3, 11);
    const dep = Float64Array.from(x0, (v, i) => 2 * v - 0.5 * x2[i]);
    // Columns: x0, x1, dep, x2 — dep is new when reached; x2 = 4·x0 − 2·dep is the redundant one.
    const qr = householderQr([x0, x1, dep, x2]);
    expect(qr.rank).toBe(3);
    expect(Array.from(qr.pivot)).toEqual([0, 1, 2, 3]);
    const [d] = columnDependencies(qr);
    expect(d.column).toBe(3);
    const coef = new Map(d.with.map((w) => [w.column, w.coefficient]));
    expect([...coef.keys()].sort()).toEqual([0, 2]); // x1 plays no part
    expect(coef.get(0)).toBeCloseTo(4, 10);
    expect(coef.get(2)).toBeCloseTo(-2, 10);
  });

  it('moves a dependent column found early to the end', () => {
    const [x0, x1, x2] = randomColumns(25, 3, 12);
    const dup = Float64Array.from(x0, (v) => 3 * v);
    const qr = householderQr([x0, dup, x1, x2]);
    expect(qr.rank).toBe(3);
    expect(Array.from(qr.pivot)).toEqual([0, 2, 3, 1]);
    const [d] = columnDependencies(qr);
    expect(d.column).toBe(1);
    expect(d.with.map((w) => w.column)).toEqual([0]);
    expect(d.with[0].coefficient).toBeCloseTo(3, 12);
  });

  it('treats a zero column as dependent, and caps the rank at the number of rows', () => {
    const [x0, x1] = randomColumns(10, 2, 5);
    const qr = householderQr([x0, new Float64Array(10), x1]);
    expect(qr.rank).toBe(2);
    expect(columnDependencies(qr)).toEqual([{ column: 1, with: [] }]);
    const wide = householderQr(randomColumns(3, 5, 9));
    expect(wide.rank).toBe(3);
  });

  it('tolerance decides near-dependence', () => {
    const [x0, x1] = randomColumns(40, 2, 13);
    const near = Float64Array.from(x0, (v, i) => v + 1e-9 * x1[i]);
    expect(householderQr([x0, near]).rank).toBe(1); // 1e-9 relative < default 1e-7
    expect(householderQr([x0, near], { tolerance: 1e-12 }).rank).toBe(2);
  });

  it('checks shapes', () => {
    expect(() => toColumns([[1, 2], [3]])).toThrow(MatrixShapeError);
    expect(() => householderQr([new Float64Array(3), new Float64Array(4)])).toThrow(MatrixShapeError);
    expect(() => qtMultiply(householderQr(randomColumns(4, 2, 1)), [1, 2])).toThrow(MatrixShapeError);
    const m = new Matrix([[1, 2], [3, 4], [5, 7]]);
    expect(toColumns(m).columns.map((c) => Array.from(c))).toEqual([[1, 3, 5], [2, 4, 7]]);
  });
});
