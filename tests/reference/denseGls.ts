/**
 * Reference solver for tests: the textbook dense GLS, q = (X^T C^-1 X)^-1 X^T C^-1 y with the
 * N x N covariance C and the N x p design formed in full and solved by plain Cholesky
 * (cost N^3/3). Written without the engine's numerical core (src/math/cholesky.ts) or its
 * block elimination, so that agreement between the two means something. Not for production:
 * the engine never forms an N x N matrix.
 */
import { blockVariance, type GlsProblem } from '../../src/ladder/gls.ts';

/** Plain Cholesky of a flat n x n matrix; throws on a non-positive pivot. */
function plainCholesky(a: Float64Array, n: number): Float64Array {
  const l = new Float64Array(n * n);
  for (let j = 0; j < n; j++) {
    let d = a[j * n + j];
    for (let t = 0; t < j; t++) d -= l[j * n + t] ** 2;
    if (!(d > 0)) throw new Error(`dense reference: not positive definite at ${j}`);
    const djj = Math.sqrt(d);
    l[j * n + j] = djj;
    for (let i = j + 1; i < n; i++) {
      let s = a[i * n + j];
      for (let t = 0; t < j; t++) s -= l[i * n + t] * l[j * n + t];
      l[i * n + j] = s / djj;
    }
  }
  return l;
}

/** Inverse of a flat SPD matrix, column by column from its Cholesky factor. */
function plainInverse(a: Float64Array, n: number): Float64Array {
  const l = plainCholesky(a, n);
  const inv = new Float64Array(n * n);
  for (let c = 0; c < n; c++) {
    const z = new Float64Array(n);
    for (let i = 0; i < n; i++) {
      let s = i === c ? 1 : 0;
      for (let t = 0; t < i; t++) s -= l[i * n + t] * z[t];
      z[i] = s / l[i * n + i];
    }
    for (let i = n - 1; i >= 0; i--) {
      let s = z[i];
      for (let t = i + 1; t < n; t++) s -= l[t * n + i] * inv[t * n + c];
      inv[i * n + c] = s / l[i * n + i];
    }
  }
  return inv;
}

export function solveGlsDense(problem: GlsProblem): { q: Float64Array; cov: Float64Array; chi2: number } {
  const p = problem.nParams;
  const n = problem.blocks.reduce((s, b) => s + b.rows.length, 0);
  const c = new Float64Array(n * n);
  const x = new Float64Array(n * p);
  const y = new Float64Array(n);
  let off = 0;
  for (const block of problem.blocks) {
    const v = blockVariance(block);
    for (let i = 0; i < block.rows.length; i++) {
      const r = block.rows[i];
      for (let t = 0; t < r.idx.length; t++) x[(off + i) * p + r.idx[t]] += r.coef[t];
      y[off + i] = block.y[i];
      if (block.diagonal) c[(off + i) * n + off + i] = (v as number[])[i];
      else for (let j = 0; j < block.rows.length; j++) c[(off + i) * n + off + j] = (v as number[][])[i][j];
    }
    off += block.rows.length;
  }
  const cInv = plainInverse(c, n);
  // F = X^T C^-1 X, b = X^T C^-1 y
  const cx = new Float64Array(n * p);
  const cy = new Float64Array(n);
  for (let i = 0; i < n; i++) {
    for (let k = 0; k < n; k++) {
      const w = cInv[i * n + k];
      if (w === 0) continue;
      cy[i] += w * y[k];
      for (let j = 0; j < p; j++) cx[i * p + j] += w * x[k * p + j];
    }
  }
  const f = new Float64Array(p * p);
  const b = new Float64Array(p);
  for (let i = 0; i < n; i++) {
    for (let j = 0; j < p; j++) {
      b[j] += x[i * p + j] * cy[i];
      for (let k = 0; k < p; k++) f[j * p + k] += x[i * p + j] * cx[i * p + k];
    }
  }
  const cov = plainInverse(f, p);
  const q = new Float64Array(p);
  for (let i = 0; i < p; i++) for (let j = 0; j < p; j++) q[i] += cov[i * p + j] * b[j];
  const r = y.map((yi, i) => {
    let m = 0;
    for (let j = 0; j < p; j++) m += x[i * p + j] * q[j];
    return yi - m;
  });
  let chi2 = 0;
  for (let i = 0; i < n; i++) for (let k = 0; k < n; k++) chi2 += r[i] * cInv[i * n + k] * r[k];
  return { q, cov, chi2 };
}
