/**
 * The numerical core: Cholesky factorisation of symmetric positive-definite matrices stored
 * row-major in a Float64Array, and solves with the factor. Every fit of the ladder goes
 * through here (the global fit's blocks, the whitening of dense covariance blocks).
 *
 * One policy for singular or not-positive-definite input: a pivot that is not finite, or not
 * larger than PIVOT_RELATIVE_FLOOR times the diagonal element it came from, stops the
 * factorisation with a NotPositiveDefiniteError naming the index (and its label when given).
 * Exact degeneracy (a direction the data do not constrain, a rank-deficient covariance)
 * shows up as a rounding-level pivot, not as an exact zero, hence the relative floor.
 * Nothing here forms an inverse to solve a system; inverses are only computed where a
 * covariance matrix is the published output (inverseFromCholesky).
 */

/** Relative pivot floor (numerical choice: ~1e4 times the double-precision epsilon). */
export const PIVOT_RELATIVE_FLOOR = 1e-12;

export class NotPositiveDefiniteError extends Error {
  constructor(
    /** Index of the first pivot that failed. */
    readonly index: number,
    /** Label of that row/column when the caller gave labels. */
    readonly label: string | undefined,
  ) {
    super(`matrix is not positive definite (pivot ${label ?? index})`);
    this.name = 'NotPositiveDefiniteError';
  }
}

/** Lower Cholesky factor L (A = L L^T) of the n x n SPD matrix a (row-major). Cost n^3/3. */
export function choleskyFactor(
  a: ArrayLike<number>,
  n: number,
  labels?: readonly string[],
  /**
   * The diagonal the floor is relative to, when a is itself the result of an elimination
   * (a Schur complement): the diagonal before elimination, so that the policy is the same as
   * for factoring the whole matrix at once. Default: a's own diagonal.
   */
  referenceDiagonal?: ArrayLike<number>,
): Float64Array {
  const l = new Float64Array(n * n);
  for (let j = 0; j < n; j++) {
    const rowJ = j * n;
    const ajj = a[rowJ + j];
    let d = ajj;
    for (let t = 0; t < j; t++) d -= l[rowJ + t] * l[rowJ + t];
    const ref = referenceDiagonal ? referenceDiagonal[j] : ajj;
    if (!(d > PIVOT_RELATIVE_FLOOR * Math.abs(ref)) || !Number.isFinite(d)) {
      throw new NotPositiveDefiniteError(j, labels?.[j]);
    }
    const djj = Math.sqrt(d);
    l[rowJ + j] = djj;
    for (let i = j + 1; i < n; i++) {
      const rowI = i * n;
      let s = a[rowI + j];
      for (let t = 0; t < j; t++) s -= l[rowI + t] * l[rowJ + t];
      l[rowI + j] = s / djj;
    }
  }
  return l;
}

/** Solve L z = b (forward substitution). */
export function forwardSubstitute(l: Float64Array, n: number, b: ArrayLike<number>): Float64Array {
  const z = new Float64Array(n);
  for (let i = 0; i < n; i++) {
    let s = b[i];
    const row = i * n;
    for (let t = 0; t < i; t++) s -= l[row + t] * z[t];
    z[i] = s / l[row + i];
  }
  return z;
}

/** Solve L^T x = z (back substitution, reading L by columns). */
export function backSubstituteTransposed(l: Float64Array, n: number, z: ArrayLike<number>): Float64Array {
  const x = new Float64Array(n);
  for (let i = n - 1; i >= 0; i--) {
    let s = z[i];
    for (let t = i + 1; t < n; t++) s -= l[t * n + i] * x[t];
    x[i] = s / l[i * n + i];
  }
  return x;
}

/** Solve (L L^T) x = b given the Cholesky factor L. Cost n^2. */
export function solveCholesky(l: Float64Array, n: number, b: ArrayLike<number>): Float64Array {
  return backSubstituteTransposed(l, n, forwardSubstitute(l, n, b));
}

/**
 * Solve (L L^T) X = B for an n x m right-hand side B (row-major), in place of a new array.
 * Cost n^2 m.
 */
export function solveCholeskyMany(l: Float64Array, n: number, b: Float64Array, m: number): Float64Array {
  const x = Float64Array.from(b);
  for (let i = 0; i < n; i++) {
    const row = i * n;
    for (let t = 0; t < i; t++) {
      const lit = l[row + t];
      if (lit === 0) continue;
      for (let c = 0; c < m; c++) x[i * m + c] -= lit * x[t * m + c];
    }
    const lii = l[row + i];
    for (let c = 0; c < m; c++) x[i * m + c] /= lii;
  }
  for (let i = n - 1; i >= 0; i--) {
    for (let t = i + 1; t < n; t++) {
      const lti = l[t * n + i];
      if (lti === 0) continue;
      for (let c = 0; c < m; c++) x[i * m + c] -= lti * x[t * m + c];
    }
    const lii = l[i * n + i];
    for (let c = 0; c < m; c++) x[i * m + c] /= lii;
  }
  return x;
}

/**
 * A^-1 from the Cholesky factor L of A, for when the inverse itself is the result (a
 * covariance matrix). Inverts L (n^3/6), then A^-1 = L^-T L^-1 (n^3/6); symmetric by construction.
 */
export function inverseFromCholesky(l: Float64Array, n: number): Float64Array {
  // Column j of X = L^-1, stored as row j of xt so that the inner loops walk memory in order.
  const xt = new Float64Array(n * n);
  for (let j = 0; j < n; j++) {
    const col = j * n;
    xt[col + j] = 1 / l[j * n + j];
    for (let i = j + 1; i < n; i++) {
      const row = i * n;
      let s = 0;
      for (let t = j; t < i; t++) s -= l[row + t] * xt[col + t];
      xt[col + i] = s / l[row + i];
    }
  }
  const inv = new Float64Array(n * n);
  for (let i = 0; i < n; i++) {
    const ci = i * n;
    for (let j = 0; j <= i; j++) {
      const cj = j * n;
      let s = 0;
      for (let t = i; t < n; t++) s += xt[ci + t] * xt[cj + t];
      inv[i * n + j] = s;
      inv[j * n + i] = s;
    }
  }
  return inv;
}

/** Cholesky factor of a small matrix given as rows (number[][]), same policy. */
export function choleskyOfRows(a: readonly (readonly number[])[], labels?: readonly string[]): Float64Array {
  const n = a.length;
  const flat = new Float64Array(n * n);
  for (let i = 0; i < n; i++) for (let j = 0; j < n; j++) flat[i * n + j] = a[i][j];
  return choleskyFactor(flat, n, labels);
}
