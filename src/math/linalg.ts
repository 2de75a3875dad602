/**
 * Small dense linear algebra for the p x p problems of the ladder (p up to a few hundred).
 * Matrices are row-major number[][]; nothing here is meant for N x N data covariances
 * (the global fit never forms those; see src/ladder/gls.ts).
 */

export type Matrix = number[][];

export function zeros(rows: number, cols: number): Matrix {
  return Array.from({ length: rows }, () => new Array<number>(cols).fill(0));
}

export function identity(n: number): Matrix {
  const m = zeros(n, n);
  for (let i = 0; i < n; i++) m[i][i] = 1;
  return m;
}

export function transpose(a: Matrix): Matrix {
  const rows = a.length;
  const cols = rows ? a[0].length : 0;
  const t = zeros(cols, rows);
  for (let i = 0; i < rows; i++) for (let j = 0; j < cols; j++) t[j][i] = a[i][j];
  return t;
}

export function matMul(a: Matrix, b: Matrix): Matrix {
  const n = a.length;
  const m = b.length ? b[0].length : 0;
  const k = b.length;
  const c = zeros(n, m);
  for (let i = 0; i < n; i++) {
    const ai = a[i];
    const ci = c[i];
    for (let l = 0; l < k; l++) {
      const x = ai[l];
      if (x === 0) continue;
      const bl = b[l];
      for (let j = 0; j < m; j++) ci[j] += x * bl[j];
    }
  }
  return c;
}

export function matVec(a: Matrix, v: ArrayLike<number>): number[] {
  return a.map((row) => {
    let s = 0;
    for (let j = 0; j < row.length; j++) s += row[j] * v[j];
    return s;
  });
}

export function dot(a: ArrayLike<number>, b: ArrayLike<number>): number {
  let s = 0;
  for (let i = 0; i < a.length; i++) s += a[i] * b[i];
  return s;
}

export function addMatrices(a: Matrix, b: Matrix): Matrix {
  return a.map((row, i) => row.map((x, j) => x + b[i][j]));
}

export function scaleMatrix(a: Matrix, s: number): Matrix {
  return a.map((row) => row.map((x) => x * s));
}

/** J A J^T for a (rows x n) Jacobian J and a symmetric n x n matrix A. */
export function sandwich(j: Matrix, a: Matrix): Matrix {
  return matMul(matMul(j, a), transpose(j));
}

export class NotPositiveDefiniteError extends Error {
  constructor(readonly index: number) {
    super(`matrix is not positive definite (pivot ${index})`);
    this.name = 'NotPositiveDefiniteError';
  }
}

/**
 * Cholesky factor L (lower triangular, A = L L^T) of a symmetric positive-definite matrix.
 * Cost n^3/3. Throws NotPositiveDefiniteError on a non-positive pivot.
 */
export function cholesky(a: Matrix): Matrix {
  const n = a.length;
  const l = zeros(n, n);
  for (let j = 0; j < n; j++) {
    const lj = l[j];
    let d = a[j][j];
    for (let k = 0; k < j; k++) d -= lj[k] * lj[k];
    if (!(d > 0) || !Number.isFinite(d)) throw new NotPositiveDefiniteError(j);
    const djj = Math.sqrt(d);
    lj[j] = djj;
    for (let i = j + 1; i < n; i++) {
      const li = l[i];
      let s = a[i][j];
      for (let k = 0; k < j; k++) s -= li[k] * lj[k];
      li[j] = s / djj;
    }
  }
  return l;
}

/** Solve L x = b (forward substitution) for lower-triangular L. */
export function forwardSubstitute(l: Matrix, b: ArrayLike<number>): number[] {
  const n = l.length;
  const x = new Array<number>(n);
  for (let i = 0; i < n; i++) {
    let s = b[i];
    const li = l[i];
    for (let k = 0; k < i; k++) s -= li[k] * x[k];
    x[i] = s / li[i];
  }
  return x;
}

/** Solve L^T x = b (back substitution) for lower-triangular L. */
export function backSubstituteTransposed(l: Matrix, b: ArrayLike<number>): number[] {
  const n = l.length;
  const x = new Array<number>(n);
  for (let i = n - 1; i >= 0; i--) {
    let s = b[i];
    for (let k = i + 1; k < n; k++) s -= l[k][i] * x[k];
    x[i] = s / l[i][i];
  }
  return x;
}

/** Solve A x = b given the Cholesky factor L of A. */
export function choleskySolve(l: Matrix, b: ArrayLike<number>): number[] {
  return backSubstituteTransposed(l, forwardSubstitute(l, b));
}

/** Inverse of A from its Cholesky factor (symmetric result). Cost ~ n^3. */
export function choleskyInverse(l: Matrix): Matrix {
  const n = l.length;
  const inv = zeros(n, n);
  const e = new Array<number>(n).fill(0);
  for (let j = 0; j < n; j++) {
    e.fill(0);
    e[j] = 1;
    const col = choleskySolve(l, e);
    for (let i = 0; i < n; i++) inv[i][j] = col[i];
  }
  for (let i = 0; i < n; i++) for (let j = 0; j < i; j++) {
    const s = 0.5 * (inv[i][j] + inv[j][i]);
    inv[i][j] = s;
    inv[j][i] = s;
  }
  return inv;
}

/** Inverse of a symmetric positive-definite matrix. */
export function spdInverse(a: Matrix): Matrix {
  return choleskyInverse(cholesky(a));
}

/** log determinant of A from its Cholesky factor. */
export function choleskyLogDet(l: Matrix): number {
  let s = 0;
  for (let i = 0; i < l.length; i++) s += 2 * Math.log(l[i][i]);
  return s;
}
