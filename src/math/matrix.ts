/**
 * Small dense matrices as arrays of rows (number[][]). Sizes here are the
 * handful of locus coefficients, anchors and targets (tens at most), so plain
 * O(n^3) loops are the right tool. Every function returns a new array and
 * never mutates its inputs.
 */
import { choleskyOfRows, NotPositiveDefiniteError, solveCholesky } from './cholesky.ts';

export type Matrix = number[][];

export function zeros(rows: number, cols: number): Matrix {
  return Array.from({ length: rows }, () => new Array<number>(cols).fill(0));
}

export function identity(n: number): Matrix {
  const m = zeros(n, n);
  for (let i = 0; i < n; i++) m[i][i] = 1;
  return m;
}

export function diag(values: readonly number[]): Matrix {
  const m = zeros(values.length, values.length);
  values.forEach((v, i) => (m[i][i] = v));
  return m;
}

export function transpose(a: Matrix): Matrix {
  if (a.length === 0) return [];
  return a[0].map((_, j) => a.map((row) => row[j]));
}

/** Product A B; cost O(n m k). */
export function matMul(a: Matrix, b: Matrix): Matrix {
  const k = b.length;
  const cols = k === 0 ? 0 : b[0].length;
  return a.map((row) => {
    const out = new Array<number>(cols).fill(0);
    for (let p = 0; p < k; p++) {
      const aip = row[p];
      if (aip === 0) continue;
      const bp = b[p];
      for (let j = 0; j < cols; j++) out[j] += aip * bp[j];
    }
    return out;
  });
}

export function matVec(a: Matrix, x: readonly number[]): number[] {
  return a.map((row) => row.reduce((s, v, j) => s + v * x[j], 0));
}

export function dot(x: readonly number[], y: readonly number[]): number {
  let s = 0;
  for (let i = 0; i < x.length; i++) s += x[i] * y[i];
  return s;
}

export function outer(x: readonly number[], y: readonly number[]): Matrix {
  return x.map((xi) => y.map((yj) => xi * yj));
}

export function addMatrices(...terms: Matrix[]): Matrix {
  const [first, ...rest] = terms;
  const out = first.map((row) => [...row]);
  for (const t of rest) for (let i = 0; i < out.length; i++) for (let j = 0; j < out[i].length; j++) out[i][j] += t[i][j];
  return out;
}

export function scaleMatrix(a: Matrix, k: number): Matrix {
  return a.map((row) => row.map((v) => v * k));
}

/** Congruence J C J^T: the covariance of J x when Cov(x) = C. Cost O(n m^2 + n^2 m). */
export function sandwich(j: Matrix, c: Matrix): Matrix {
  return matMul(matMul(j, c), transpose(j));
}

/**
 * Cholesky factor L (lower triangular, A = L L^T) of a symmetric matrix, or null when A is
 * not positive definite by the numerical core's one policy (src/math/cholesky.ts: a pivot not
 * above PIVOT_RELATIVE_FLOOR times its diagonal element, or not finite). The factorisation is
 * the core's; this is its adapter for matrices stored as rows. Cost n^3/3.
 */
export function cholesky(a: Matrix): Matrix | null {
  let flat: Float64Array;
  try {
    flat = choleskyOfRows(a);
  } catch (e) {
    if (e instanceof NotPositiveDefiniteError) return null;
    throw e;
  }
  const n = a.length;
  return Array.from({ length: n }, (_, i) => Array.from(flat.subarray(i * n, (i + 1) * n)));
}

/** Solve (L L^T) x = b by forward and back substitution (the core's, src/math/cholesky.ts). Cost n^2. */
export function choleskySolve(l: Matrix, b: readonly number[]): number[] {
  const n = l.length;
  return Array.from(solveCholesky(Float64Array.from(l.flat()), n, b));
}

/** Inverse of a symmetric positive definite matrix via Cholesky, or null if not SPD. Cost n^3. */
export function spdInverse(a: Matrix): Matrix | null {
  const l = cholesky(a);
  if (l === null) return null;
  const n = a.length;
  const cols = Array.from({ length: n }, (_, j) => choleskySolve(l, identity(n)[j]));
  // cols[j] is column j of the inverse; the inverse is symmetric, so rows = columns.
  return symmetrize(cols);
}

/** (A + A^T) / 2: removes round-off asymmetry from covariance products. */
export function symmetrize(a: Matrix): Matrix {
  return a.map((row, i) => row.map((v, j) => 0.5 * (v + a[j][i])));
}

/** Sub-matrix with the given row and column indices. */
export function subMatrix(a: Matrix, rows: readonly number[], cols: readonly number[] = rows): Matrix {
  return rows.map((i) => cols.map((j) => a[i][j]));
}
