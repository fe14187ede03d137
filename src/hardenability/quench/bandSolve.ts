// Direct solution of the linear systems of the heat-conduction solver.
//  - Tridiagonal: the Thomas algorithm (Gaussian elimination without pivoting on a tridiagonal matrix;
//    G. H. Golub & C. F. Van Loan, Matrix Computations, 4th ed., §4.3.6).
//  - Banded: Gaussian elimination without pivoting on a matrix of half-bandwidth p, O(N·p²)
//    (Golub & Van Loan §4.3.5). No pivoting is needed: the finite-volume matrices here are symmetric and
//    strictly diagonally dominant (each diagonal is the sum of its conductances plus the positive heat
//    capacity term), for which elimination without pivoting is stable (Golub & Van Loan §4.1.1).
// Pure: the inputs are overwritten where said.

/** Solves a tridiagonal system; lower[0] and upper[n−1] are ignored. Overwrites diag and rhs; returns rhs as the solution. */
export function solveTridiagonal(lower: Float64Array, diag: Float64Array, upper: Float64Array, rhs: Float64Array): Float64Array {
  const n = diag.length;
  for (let i = 1; i < n; i++) {
    const m = lower[i] / diag[i - 1];
    diag[i] -= m * upper[i - 1];
    rhs[i] -= m * rhs[i - 1];
  }
  rhs[n - 1] /= diag[n - 1];
  for (let i = n - 2; i >= 0; i--) rhs[i] = (rhs[i] - upper[i] * rhs[i + 1]) / diag[i];
  return rhs;
}

/**
 * A square matrix of order n with half-bandwidth p, stored by rows: entry (i, j) for |i − j| ≤ p at
 * band[i·(2p + 1) + (j − i + p)].
 */
export class BandMatrix {
  readonly width: number;
  readonly band: Float64Array;
  constructor(
    readonly n: number,
    readonly p: number,
  ) {
    this.width = 2 * p + 1;
    this.band = new Float64Array(n * this.width);
  }
  clear(): void {
    this.band.fill(0);
  }
  add(i: number, j: number, v: number): void {
    this.band[i * this.width + (j - i + this.p)] += v;
  }
  get(i: number, j: number): number {
    return Math.abs(j - i) > this.p ? 0 : this.band[i * this.width + (j - i + this.p)];
  }
}

/** Solves A·x = rhs in place (A is destroyed, rhs becomes x). */
export function solveBanded(a: BandMatrix, rhs: Float64Array): Float64Array {
  const { n, p, width, band } = a;
  for (let k = 0; k < n; k++) {
    const pivot = band[k * width + p];
    if (!(Math.abs(pivot) > 0)) throw new Error(`zero pivot at row ${k}`);
    const last = Math.min(n - 1, k + p);
    for (let i = k + 1; i <= last; i++) {
      const ik = i * width + (k - i + p);
      const m = band[ik] / pivot;
      if (m === 0) continue;
      band[ik] = 0;
      const kRow = k * width + p; // (k, k)
      const iRow = i * width + (k - i + p); // (i, k)
      for (let j = 1; j <= last - k; j++) band[iRow + j] -= m * band[kRow + j];
      rhs[i] -= m * rhs[k];
    }
  }
  for (let k = n - 1; k >= 0; k--) {
    let s = rhs[k];
    const last = Math.min(n - 1, k + p);
    for (let j = k + 1; j <= last; j++) s -= band[k * width + (j - k + p)] * rhs[j];
    rhs[k] = s / band[k * width + p];
  }
  return rhs;
}
