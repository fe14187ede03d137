// Householder QR factorisation with limited column pivoting, for least squares.
//
// Sources:
// - Householder reflections and their accumulation: G. H. Golub & C. F. Van Loan, Matrix Computations,
//   4th ed. (2013), Algorithms 5.1.1 (house vector) and 5.2.1 (Householder QR); least squares via QR, §5.3.
// - Rank decision ("limited pivoting"): a column whose part orthogonal to the columns already accepted is
//   smaller than `tolerance` times its own norm is moved to the end, as in LINPACK's dqrdc2 used by R's
//   lm.fit (default tolerance 1e-7). Unlike full Businger–Golub pivoting this keeps the user's column
//   order, so the columns reported as dependent are the later members of a collinear set.
//
// ml-matrix's QrDecomposition is a true Householder QR (the JAMA code) but has no pivoting and no rank
// decision, so it cannot name collinear predictors; hence this module.

/** Anything that looks like a dense matrix: an array of rows, or an object with rows/columns/get (ml-matrix). */
export type MatrixInput =
  | readonly (readonly number[])[]
  | { readonly rows: number; readonly columns: number; get(row: number, column: number): number };

export class MatrixShapeError extends Error {
  override name = 'MatrixShapeError';
}

/** Copy a matrix into one Float64Array per column (the layout the QR works on). */
export function toColumns(x: MatrixInput): { rows: number; cols: number; columns: Float64Array[] } {
  if (Array.isArray(x)) {
    const rowsArr = x as readonly (readonly number[])[];
    const rows = rowsArr.length;
    const cols = rows > 0 ? rowsArr[0].length : 0;
    const columns = Array.from({ length: cols }, () => new Float64Array(rows));
    for (let i = 0; i < rows; i++) {
      const r = rowsArr[i];
      if (!r || r.length !== cols) {
        throw new MatrixShapeError(`row ${i} has ${r ? r.length : 0} values, expected ${cols}`);
      }
      for (let j = 0; j < cols; j++) columns[j][i] = r[j];
    }
    return { rows, cols, columns };
  }
  const m = x as { rows: number; columns: number; get(i: number, j: number): number };
  const columns = Array.from({ length: m.columns }, () => new Float64Array(m.rows));
  for (let j = 0; j < m.columns; j++) for (let i = 0; i < m.rows; i++) columns[j][i] = m.get(i, j);
  return { rows: m.rows, cols: m.columns, columns };
}

export interface HouseholderQrOptions {
  /** Relative tolerance for the rank decision (default 1e-7). */
  tolerance?: number;
}

/** A factorisation A·P = Q·R of an m×n matrix A, with P a column permutation. */
export interface HouseholderQr {
  readonly rows: number;
  readonly cols: number;
  /** Factored columns by position: R strictly above the diagonal, Householder vector (v_k = 1 implied) below. */
  readonly factored: Float64Array[];
  /** Diagonal of R, by position. */
  readonly rdiag: Float64Array;
  /** Householder scalars: H_k = I − beta_k v v'. Zero means no reflection at that step. */
  readonly beta: Float64Array;
  /** pivot[k] = index in A of the column at position k. */
  readonly pivot: Int32Array;
  /** Number of linearly independent columns (positions 0..rank-1). */
  readonly rank: number;
  readonly tolerance: number;
}

function columnNormFrom(c: Float64Array, start: number): number {
  // Scaled sum of squares (as in LAPACK dnrm2) so large or tiny entries do not overflow or underflow.
  let scale = 0;
  let ssq = 1;
  for (let i = start; i < c.length; i++) {
    const a = Math.abs(c[i]);
    if (a === 0) continue;
    if (scale < a) {
      ssq = 1 + ssq * (scale / a) * (scale / a);
      scale = a;
    } else {
      ssq += (a / scale) * (a / scale);
    }
  }
  return scale * Math.sqrt(ssq);
}

/**
 * Householder QR with limited column pivoting. The input columns are copied, not modified.
 * Every column is factored (also dependent ones, at the end), so R is complete: A·P = Q·R exactly up to
 * rounding; `rank` counts the leading columns that passed the tolerance test.
 */
export function householderQr(columns: readonly Float64Array[], options: HouseholderQrOptions = {}): HouseholderQr {
  const tolerance = options.tolerance ?? 1e-7;
  if (!(tolerance >= 0 && tolerance < 1)) throw new RangeError(`tolerance must be in [0, 1), got ${tolerance}`);
  const n = columns.length;
  const m = n > 0 ? columns[0].length : 0;
  const a = columns.map((c, j) => {
    if (c.length !== m) throw new MatrixShapeError(`column ${j} has ${c.length} values, expected ${m}`);
    return Float64Array.from(c);
  });
  const pivot = Int32Array.from({ length: n }, (_, j) => j);
  const originalNorm = a.map((c) => columnNormFrom(c, 0));
  const steps = Math.min(m, n);
  const rdiag = new Float64Array(n);
  const beta = new Float64Array(steps);
  let end = n; // positions end..n-1 hold columns found dependent

  for (let k = 0; k < steps; k++) {
    let norm = columnNormFrom(a[k], k);
    // Limited pivoting: move a column that is (numerically) in the span of the accepted ones to the end.
    while (k < end && !(norm > tolerance * originalNorm[pivot[k]])) {
      const col = a[k];
      const idx = pivot[k];
      for (let j = k; j < n - 1; j++) {
        a[j] = a[j + 1];
        pivot[j] = pivot[j + 1];
      }
      a[n - 1] = col;
      pivot[n - 1] = idx;
      end--;
      norm = columnNormFrom(a[k], k);
    }
    const c = a[k];
    if (norm === 0) {
      rdiag[k] = 0;
      beta[k] = 0;
      continue;
    }
    // House vector (Golub & Van Loan Alg. 5.1.1, sign chosen to avoid cancellation).
    const alpha = c[k] >= 0 ? -norm : norm;
    const v0 = c[k] - alpha;
    let vtv = 1;
    for (let i = k + 1; i < m; i++) {
      c[i] /= v0;
      vtv += c[i] * c[i];
    }
    const b = 2 / vtv;
    beta[k] = b;
    rdiag[k] = alpha;
    c[k] = alpha; // diagonal of R kept here too; v_k = 1 is implicit
    // Apply H_k to the remaining columns.
    for (let j = k + 1; j < n; j++) {
      const d = a[j];
      let s = d[k];
      for (let i = k + 1; i < m; i++) s += c[i] * d[i];
      s *= b;
      d[k] -= s;
      for (let i = k + 1; i < m; i++) d[i] -= s * c[i];
    }
  }
  for (let k = steps; k < n; k++) rdiag[k] = 0;
  return { rows: m, cols: n, factored: a, rdiag, beta, pivot, rank: Math.min(end, steps), tolerance };
}

/** Qᵀ·y (length m). */
export function qtMultiply(qr: HouseholderQr, y: ArrayLike<number>): Float64Array {
  if (y.length !== qr.rows) throw new MatrixShapeError(`vector has ${y.length} values, expected ${qr.rows}`);
  const out = Float64Array.from(y);
  const m = qr.rows;
  for (let k = 0; k < qr.beta.length; k++) {
    const b = qr.beta[k];
    if (b === 0) continue;
    const v = qr.factored[k];
    let s = out[k];
    for (let i = k + 1; i < m; i++) s += v[i] * out[i];
    s *= b;
    out[k] -= s;
    for (let i = k + 1; i < m; i++) out[i] -= s * v[i];
  }
  return out;
}

/** The first `count` columns of Q (default: rank), each of length m. */
export function thinQ(qr: HouseholderQr, count: number = qr.rank): Float64Array[] {
  const m = qr.rows;
  if (count > Math.min(m, qr.cols)) throw new RangeError(`Q has at most ${Math.min(m, qr.cols)} useful columns`);
  const q: Float64Array[] = [];
  for (let c = 0; c < count; c++) {
    const e = new Float64Array(m);
    e[c] = 1;
    // Q e_c = H_0 H_1 ... H_{s-1} e_c: apply reflectors in reverse order.
    for (let k = Math.min(qr.beta.length, c + 1) - 1; k >= 0; k--) {
      const b = qr.beta[k];
      if (b === 0) continue;
      const v = qr.factored[k];
      let s = e[k];
      for (let i = k + 1; i < m; i++) s += v[i] * e[i];
      s *= b;
      e[k] -= s;
      for (let i = k + 1; i < m; i++) e[i] -= s * v[i];
    }
    q.push(e);
  }
  return q;
}

/** R entry (row i, position j), i ≤ j. */
export function rEntry(qr: HouseholderQr, i: number, j: number): number {
  if (i > j) return 0;
  return i === j ? qr.rdiag[j] : qr.factored[j][i];
}

/** Solve R[0:r,0:r]·x = b[0:r] by back substitution (r = rank by default). */
export function solveUpper(qr: HouseholderQr, b: ArrayLike<number>, r: number = qr.rank): Float64Array {
  const x = new Float64Array(r);
  for (let i = r - 1; i >= 0; i--) {
    let s = b[i];
    for (let j = i + 1; j < r; j++) s -= qr.factored[j][i] * x[j];
    x[i] = s / qr.rdiag[i];
  }
  return x;
}

/**
 * Inverse of the leading r×r block of R (upper triangular), as rows: inv[i][j], zero for j < i.
 * (AᵀA)⁻¹ in pivoted order is then inv·invᵀ — never formed from the normal equations.
 */
export function upperInverse(qr: HouseholderQr, r: number = qr.rank): Float64Array[] {
  const inv = Array.from({ length: r }, () => new Float64Array(r));
  for (let j = 0; j < r; j++) {
    inv[j][j] = 1 / qr.rdiag[j];
    for (let i = j - 1; i >= 0; i--) {
      let s = 0;
      for (let k = i + 1; k <= j; k++) s += qr.factored[k][i] * inv[k][j];
      inv[i][j] = -s / qr.rdiag[i];
    }
  }
  return inv;
}

/** How a dependent column is (approximately) a combination of independent ones. */
export interface ColumnDependency {
  /** Index in A of the dependent column. */
  column: number;
  /** A[:,column] ≈ Σ coefficient · A[:,with.column]; only terms that matter (|share| ≥ 1e-6 of the largest). */
  with: { column: number; coefficient: number }[];
}

/** For each column beyond the rank, the least-squares combination of the independent columns that reproduces it. */
export function columnDependencies(qr: HouseholderQr): ColumnDependency[] {
  const r = qr.rank;
  const out: ColumnDependency[] = [];
  for (let pos = r; pos < qr.cols; pos++) {
    const top = new Float64Array(r);
    for (let i = 0; i < r; i++) top[i] = qr.factored[pos][i];
    const z = solveUpper(qr, top, r);
    // Judge size by contribution: |z_i|·‖A[:,i]‖ is the norm of that term of the combination.
    const contrib = Array.from(z, (zi, i) => {
      let ss = 0; // ‖A[:,pivot[i]]‖² = squared norm of column i of R
      for (let l = 0; l <= i; l++) ss += rEntry(qr, l, i) ** 2;
      return Math.abs(zi) * Math.sqrt(ss);
    });
    const largest = Math.max(0, ...contrib);
    const terms: { column: number; coefficient: number }[] = [];
    for (let i = 0; i < r; i++) {
      if (largest > 0 && contrib[i] >= 1e-6 * largest) terms.push({ column: qr.pivot[i], coefficient: z[i] });
    }
    out.push({ column: qr.pivot[pos], with: terms });
  }
  return out;
}
