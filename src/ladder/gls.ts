/**
 * Generalised least squares that exploits the structure of the ladder.
 *
 * Model y = X q + e, Cov(e) = C, with C block-diagonal: most rows are independent
 * (a diagonal block), a few come in small dense blocks (the distance priors of the
 * anchors and main-sequence targets). Each block is whitened with its own Cholesky
 * factor and the p x p normal matrix F = X^T C^-1 X and b = X^T C^-1 y are accumulated
 * row by row; the N x N covariance is never formed.
 *   q = F^-1 b,  Cov(q) = F^-1,  chi2 = (y - Xq)^T C^-1 (y - Xq)       (methods.md h)
 * Cost: N k^2 for the accumulation (k = non-zeros per row, <= 5 here) plus p^3/3 for the
 * Cholesky of F; the covariance and leverages add p^3 and N k^2.
 *
 * Error budget: with C = sum_k C_k for independent sources, Cov(q) = sum_k W C_k W^T
 * where W = F^-1 X^T C^-1. For a linear function g^T q its variance splits exactly as
 * sum_k w^T C_k w with w = C^-1 X F^-1 g, which is again accumulated block by block.
 */
import { NotPositiveDefiniteError } from '../math/linalg.ts';

export interface SparseRow {
  /** Parameter indices with non-zero design coefficients. */
  idx: number[];
  coef: number[];
}

/** A covariance contribution of one source to a block (they add up to the block's covariance). */
export type CovarianceComponent =
  | { source: string; diagonal: number[] }
  | { source: string; dense: number[][] };

export interface RowBlock {
  /** Rows of the design matrix. */
  rows: SparseRow[];
  y: number[];
  /** Independent sources whose covariances add up to this block's covariance. */
  components: CovarianceComponent[];
  /** true: every component is diagonal, so rows are independent. */
  diagonal: boolean;
}

export interface GlsProblem {
  nParams: number;
  paramNames: string[];
  blocks: RowBlock[];
}

export interface GlsSolution {
  q: Float64Array;
  chi2: number;
  nRows: number;
  /** Cholesky factor of F (row-major, lower), kept for later solves. */
  factor: Float64Array;
}

export class SingularFitError extends Error {
  constructor(readonly parameter: string) {
    super(`the data do not determine the parameter "${parameter}"`);
    this.name = 'SingularFitError';
  }
}

/** Total covariance of a block: the sum of its components (diagonal form or dense). */
export function blockVariance(block: RowBlock): number[] | number[][] {
  const n = block.rows.length;
  if (block.diagonal) {
    const v = new Array<number>(n).fill(0);
    for (const c of block.components) {
      if (!('diagonal' in c)) throw new Error('diagonal block with a dense component');
      for (let i = 0; i < n; i++) v[i] += c.diagonal[i];
    }
    return v;
  }
  const m = Array.from({ length: n }, () => new Array<number>(n).fill(0));
  for (const c of block.components) {
    if ('diagonal' in c) for (let i = 0; i < n; i++) m[i][i] += c.diagonal[i];
    else for (let i = 0; i < n; i++) for (let j = 0; j < n; j++) m[i][j] += c.dense[i][j];
  }
  return m;
}

/** Whitened form of a block: rows (dense over the block's parameter set) and y. */
interface WhitenedBlock {
  params: number[];
  /** rows x params.length, row-major */
  x: Float64Array;
  y: Float64Array;
  /** Cholesky factor of a dense block (row-major lower), or sqrt of variances of a diagonal one. */
  chol: Float64Array;
  n: number;
}

function whitenDense(block: RowBlock): WhitenedBlock {
  const n = block.rows.length;
  const cov = blockVariance(block) as number[][];
  const paramSet = new Map<number, number>();
  for (const r of block.rows) for (const j of r.idx) if (!paramSet.has(j)) paramSet.set(j, paramSet.size);
  const params = [...paramSet.keys()];
  const k = params.length;
  const l = new Float64Array(n * n);
  for (let j = 0; j < n; j++) {
    let d = cov[j][j];
    for (let t = 0; t < j; t++) d -= l[j * n + t] ** 2;
    if (!(d > 0)) throw new NotPositiveDefiniteError(j);
    const djj = Math.sqrt(d);
    l[j * n + j] = djj;
    for (let i = j + 1; i < n; i++) {
      let s = cov[i][j];
      for (let t = 0; t < j; t++) s -= l[i * n + t] * l[j * n + t];
      l[i * n + j] = s / djj;
    }
  }
  // forward-substitute every column of X and y
  const x = new Float64Array(n * k);
  const y = new Float64Array(n);
  for (let i = 0; i < n; i++) {
    const r = block.rows[i];
    for (let t = 0; t < r.idx.length; t++) x[i * k + paramSet.get(r.idx[t])!] += r.coef[t];
    y[i] = block.y[i];
  }
  for (let i = 0; i < n; i++) {
    for (let t = 0; t < i; t++) {
      const lit = l[i * n + t];
      if (lit === 0) continue;
      y[i] -= lit * y[t];
      for (let c = 0; c < k; c++) x[i * k + c] -= lit * x[t * k + c];
    }
    const lii = l[i * n + i];
    y[i] /= lii;
    for (let c = 0; c < k; c++) x[i * k + c] /= lii;
  }
  return { params, x, y, chol: l, n };
}

/** Normal equations of a set of blocks: F = X^T C^-1 X, b = X^T C^-1 y, c = y^T C^-1 y. */
export interface NormalEquations {
  f: Float64Array;
  b: Float64Array;
  c: number;
  nRows: number;
}

/** Accumulate the normal equations of some blocks (cost N k^2, plus m^3/3 per dense block of m rows). */
export function accumulateNormal(p: number, blocks: readonly RowBlock[]): NormalEquations {
  const f = new Float64Array(p * p);
  const b = new Float64Array(p);
  let c = 0;
  let nRows = 0;
  for (const block of blocks) {
    nRows += block.rows.length;
    if (block.diagonal) {
      const v = blockVariance(block) as number[];
      for (let i = 0; i < block.rows.length; i++) {
        const r = block.rows[i];
        const w = 1 / v[i];
        const yi = block.y[i];
        c += yi * yi * w;
        for (let s = 0; s < r.idx.length; s++) {
          const js = r.idx[s];
          const cs = r.coef[s] * w;
          b[js] += cs * yi;
          for (let t = 0; t < r.idx.length; t++) f[js * p + r.idx[t]] += cs * r.coef[t];
        }
      }
    } else {
      const wb = whitenDense(block);
      const k = wb.params.length;
      for (let i = 0; i < wb.n; i++) {
        c += wb.y[i] * wb.y[i];
        for (let s = 0; s < k; s++) {
          const xs = wb.x[i * k + s];
          if (xs === 0) continue;
          const js = wb.params[s];
          b[js] += xs * wb.y[i];
          for (let t = 0; t < k; t++) f[js * p + wb.params[t]] += xs * wb.x[i * k + t];
        }
      }
    }
  }
  return { f, b, c, nRows };
}

/** Sum of two sets of normal equations (independent blocks). */
export function addNormal(a: NormalEquations, b: NormalEquations): NormalEquations {
  return {
    f: a.f.map((x, i) => x + b.f[i]),
    b: a.b.map((x, i) => x + b.b[i]),
    c: a.c + b.c,
    nRows: a.nRows + b.nRows,
  };
}

/**
 * Solve normal equations; chi2 at the minimum is c - b^T q. Throws SingularFitError naming
 * the first parameter the data leave undetermined.
 */
export function solveNormal(ne: NormalEquations, paramNames: string[]): GlsSolution {
  const p = paramNames.length;
  const factor = choleskyFlat(ne.f, p, paramNames);
  const q = solveWithFactor(factor, p, ne.b);
  let bq = 0;
  for (let i = 0; i < p; i++) bq += ne.b[i] * q[i];
  return { q, chi2: Math.max(0, ne.c - bq), nRows: ne.nRows, factor };
}

/**
 * Eliminate every parameter not in `keep` from normal equations (Schur complement):
 *   F_red = F_KK - F_KO F_OO^-1 F_OK,  b_red = b_K - F_KO F_OO^-1 b_O,  c_red = c - b_O^T F_OO^-1 b_O,
 * so that adding rows that touch only `keep` and solving the small system gives the same q_K and
 * the same minimum chi-square as the full system. Cost (p-k)^3/3 + (p-k)^2 k.
 * The result is indexed 0..k-1 in the order of `keep`.
 */
export function reduceNormal(ne: NormalEquations, p: number, keep: number[], names: string[]): NormalEquations {
  const k = keep.length;
  const isKept = new Uint8Array(p);
  for (const j of keep) isKept[j] = 1;
  const other: number[] = [];
  for (let j = 0; j < p; j++) if (!isKept[j]) other.push(j);
  const o = other.length;
  const fOO = new Float64Array(o * o);
  for (let a = 0; a < o; a++) for (let b = 0; b < o; b++) fOO[a * o + b] = ne.f[other[a] * p + other[b]];
  const l = choleskyFlat(fOO, o, other.map((j) => names[j]));
  const lt = transposeFlat(l, o);
  // Z = F_OO^-1 [F_OK | b_O]
  const cols: Float64Array[] = [];
  for (let c = 0; c <= k; c++) {
    const rhs = new Float64Array(o);
    for (let a = 0; a < o; a++) rhs[a] = c < k ? ne.f[other[a] * p + keep[c]] : ne.b[other[a]];
    cols.push(solveWithFactors(l, lt, o, rhs));
  }
  const f = new Float64Array(k * k);
  const b = new Float64Array(k);
  const fKO = new Float64Array(o); // row keep[i] of F restricted to `other`, gathered once
  for (let i = 0; i < k; i++) {
    for (let a = 0; a < o; a++) fKO[a] = ne.f[keep[i] * p + other[a]];
    for (let j = 0; j < k; j++) {
      let s = ne.f[keep[i] * p + keep[j]];
      const z = cols[j];
      for (let a = 0; a < o; a++) s -= fKO[a] * z[a];
      f[i * k + j] = s;
    }
    let sb = ne.b[keep[i]];
    const zb = cols[k];
    for (let a = 0; a < o; a++) sb -= fKO[a] * zb[a];
    b[i] = sb;
  }
  let c = ne.c;
  for (let a = 0; a < o; a++) c -= ne.b[other[a]] * cols[k][a];
  return { f, b, c, nRows: ne.nRows };
}

/** Accumulate diagonal blocks into normal equations over a subset of parameters (global -> local index). */
export function accumulateNormalSubset(blocks: readonly RowBlock[], local: Map<number, number>): NormalEquations {
  const k = local.size;
  const f = new Float64Array(k * k);
  const b = new Float64Array(k);
  let c = 0;
  let nRows = 0;
  for (const block of blocks) {
    if (!block.diagonal) throw new Error('subset accumulation is for diagonal blocks');
    const v = blockVariance(block) as number[];
    nRows += block.rows.length;
    for (let i = 0; i < block.rows.length; i++) {
      const r = block.rows[i];
      const w = 1 / v[i];
      const yi = block.y[i];
      c += yi * yi * w;
      for (let s = 0; s < r.idx.length; s++) {
        const js = local.get(r.idx[s])!;
        const cs = r.coef[s] * w;
        b[js] += cs * yi;
        for (let t = 0; t < r.idx.length; t++) f[js * k + local.get(r.idx[t])!] += cs * r.coef[t];
      }
    }
  }
  return { f, b, c, nRows };
}

/**
 * Accumulate F and b over all blocks and solve F q = b by Cholesky. The chi-square is
 * evaluated from the residuals (not as c - b^T q) for full precision.
 */
export function solveGls(problem: GlsProblem): GlsSolution {
  const ne = accumulateNormal(problem.nParams, problem.blocks);
  const sol = solveNormal(ne, problem.paramNames);
  return { ...sol, chi2: chiSquare(problem, sol.q) };
}

/** In-place style Cholesky of a flat p x p SPD matrix; returns the lower factor. */
export function choleskyFlat(a: Float64Array, p: number, names?: string[]): Float64Array {
  const l = new Float64Array(p * p);
  // Relative pivot threshold: a pivot this small against the diagonal means a direction
  // the data do not constrain (exact degeneracy shows up as rounding-level pivots).
  const PIVOT_RELATIVE_FLOOR = 1e-12;
  for (let j = 0; j < p; j++) {
    let d = a[j * p + j];
    const rowJ = j * p;
    for (let t = 0; t < j; t++) d -= l[rowJ + t] * l[rowJ + t];
    if (!(d > PIVOT_RELATIVE_FLOOR * Math.abs(a[j * p + j])) || !Number.isFinite(d)) {
      throw new SingularFitError(names?.[j] ?? `#${j}`);
    }
    const djj = Math.sqrt(d);
    l[rowJ + j] = djj;
    for (let i = j + 1; i < p; i++) {
      const rowI = i * p;
      let s = a[rowI + j];
      for (let t = 0; t < j; t++) s -= l[rowI + t] * l[rowJ + t];
      l[rowI + j] = s / djj;
    }
  }
  return l;
}

export function solveWithFactor(l: Float64Array, p: number, b: ArrayLike<number>): Float64Array {
  return solveWithFactors(l, transposeFlat(l, p), p, b);
}

/** The transpose of a flat p x p matrix. */
export function transposeFlat(a: Float64Array, p: number): Float64Array {
  const t = new Float64Array(p * p);
  for (let i = 0; i < p; i++) for (let j = 0; j < p; j++) t[j * p + i] = a[i * p + j];
  return t;
}

/**
 * Solve L L^T x = b given L and its transpose: both substitutions then run along rows
 * (contiguous memory), which matters for p in the hundreds; the arithmetic, and so the
 * result, is the same as with L alone. Pass the same transpose to many solves.
 */
export function solveWithFactors(l: Float64Array, lt: Float64Array, p: number, b: ArrayLike<number>): Float64Array {
  const z = new Float64Array(p);
  for (let i = 0; i < p; i++) {
    let s = b[i];
    const row = i * p;
    for (let t = 0; t < i; t++) s -= l[row + t] * z[t];
    z[i] = s / l[row + i];
  }
  const x = new Float64Array(p);
  for (let i = p - 1; i >= 0; i--) {
    let s = z[i];
    const row = i * p;
    for (let t = i + 1; t < p; t++) s -= lt[row + t] * x[t];
    x[i] = s / l[row + i];
  }
  return x;
}

/**
 * F^-1 from its Cholesky factor L, as a flat p x p array: invert L (triangular, p^3/6),
 * then F^-1 = L^-T L^-1 (p^3/6).
 */
export function inverseFromFactor(l: Float64Array, p: number): Float64Array {
  // Column j of X = L^-1 by forward substitution, stored as row j of xt (xt = X^T), so that
  // every inner loop below walks memory in order; same operations in the same order as the
  // textbook column-wise form.
  const xt = new Float64Array(p * p);
  for (let j = 0; j < p; j++) {
    const col = j * p;
    xt[col + j] = 1 / l[j * p + j];
    for (let i = j + 1; i < p; i++) {
      const row = i * p;
      let s = 0;
      for (let t = j; t < i; t++) s -= l[row + t] * xt[col + t];
      xt[col + i] = s / l[row + i];
    }
  }
  // F^-1 = X^T X: (i, j) is the dot product of columns i and j of X, rows t >= max(i, j).
  const inv = new Float64Array(p * p);
  for (let i = 0; i < p; i++) {
    const ci = i * p;
    for (let j = 0; j <= i; j++) {
      const cj = j * p;
      let s = 0;
      for (let t = i; t < p; t++) s += xt[ci + t] * xt[cj + t];
      inv[i * p + j] = s;
      inv[j * p + i] = s;
    }
  }
  return inv;
}

/** Residuals y - X q of one block. */
export function blockResiduals(block: RowBlock, q: ArrayLike<number>): number[] {
  return block.rows.map((r, i) => {
    let m = 0;
    for (let t = 0; t < r.idx.length; t++) m += r.coef[t] * q[r.idx[t]];
    return block.y[i] - m;
  });
}

/** chi2 = sum over blocks of r^T C_block^-1 r. */
export function chiSquare(problem: GlsProblem, q: ArrayLike<number>): number {
  let chi2 = 0;
  for (const block of problem.blocks) {
    const r = blockResiduals(block, q);
    if (block.diagonal) {
      const v = blockVariance(block) as number[];
      for (let i = 0; i < r.length; i++) chi2 += (r[i] * r[i]) / v[i];
    } else {
      const n = r.length;
      const l = whitenDense(block).chol;
      const z = new Float64Array(n);
      for (let i = 0; i < n; i++) {
        let s = r[i];
        for (let t = 0; t < i; t++) s -= l[i * n + t] * z[t];
        z[i] = s / l[i * n + i];
        chi2 += z[i] * z[i];
      }
    }
  }
  return chi2;
}

/**
 * Leverages h_i = x_i^T F^-1 x_i / v_i of the rows of a diagonal block
 * (the diagonal of the whitened hat matrix). Cost k^2 per row given F^-1.
 */
export function blockLeverages(block: RowBlock, fInv: Float64Array, p: number): number[] {
  if (!block.diagonal) throw new Error('leverages are defined here for diagonal blocks only');
  const v = blockVariance(block) as number[];
  return block.rows.map((r, i) => {
    let h = 0;
    for (let s = 0; s < r.idx.length; s++) {
      for (let t = 0; t < r.idx.length; t++) h += r.coef[s] * r.coef[t] * fInv[r.idx[s] * p + r.idx[t]];
    }
    return h / v[i];
  });
}

/**
 * Split the variance of g^T q by covariance source: sum_k w_k^T C_k w_k with
 * w = C^-1 X F^-1 g (methods.md h, "Error budget"). Returns source -> variance.
 * The parts add up to g^T F^-1 g exactly (up to rounding).
 */
export function varianceBySource(
  problem: GlsProblem,
  factor: Float64Array,
  g: ArrayLike<number>,
): Map<string, number> {
  const p = problem.nParams;
  const u = solveWithFactor(factor, p, g);
  const out = new Map<string, number>();
  const add = (source: string, v: number) => out.set(source, (out.get(source) ?? 0) + v);
  for (const block of problem.blocks) {
    const xu = block.rows.map((r) => {
      let s = 0;
      for (let t = 0; t < r.idx.length; t++) s += r.coef[t] * u[r.idx[t]];
      return s;
    });
    let w: number[];
    if (block.diagonal) {
      const v = blockVariance(block) as number[];
      w = xu.map((x, i) => x / v[i]);
    } else {
      const cov = blockVariance(block) as number[][];
      const n = cov.length;
      const l = whitenDense(block).chol;
      // w = C^-1 (X u) via the block's Cholesky factor
      const z = new Float64Array(n);
      for (let i = 0; i < n; i++) {
        let s = xu[i];
        for (let t = 0; t < i; t++) s -= l[i * n + t] * z[t];
        z[i] = s / l[i * n + i];
      }
      w = new Array<number>(n);
      for (let i = n - 1; i >= 0; i--) {
        let s = z[i];
        for (let t = i + 1; t < n; t++) s -= l[t * n + i] * w[t];
        w[i] = s / l[i * n + i];
      }
    }
    for (const c of block.components) {
      let s = 0;
      if ('diagonal' in c) for (let i = 0; i < w.length; i++) s += w[i] * w[i] * c.diagonal[i];
      else for (let i = 0; i < w.length; i++) for (let j = 0; j < w.length; j++) s += w[i] * c.dense[i][j] * w[j];
      add(c.source, s);
    }
  }
  return out;
}

/**
 * Reference solver: forms the dense N x N covariance and N x p design, and solves the
 * same problem by plain dense Cholesky (cost N^3/3). For tests and benchmarks only.
 */
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
  const lc = choleskyFlat(c, n);
  // whiten: solve L Z = X and L z = y column by column
  const xw = new Float64Array(n * p);
  const yw = new Float64Array(n);
  for (let i = 0; i < n; i++) {
    let sy = y[i];
    for (let t = 0; t < i; t++) sy -= lc[i * n + t] * yw[t];
    yw[i] = sy / lc[i * n + i];
    for (let j = 0; j < p; j++) {
      let s = x[i * p + j];
      for (let t = 0; t < i; t++) s -= lc[i * n + t] * xw[t * p + j];
      xw[i * p + j] = s / lc[i * n + i];
    }
  }
  const f = new Float64Array(p * p);
  const b = new Float64Array(p);
  for (let i = 0; i < n; i++) {
    for (let j = 0; j < p; j++) {
      const a = xw[i * p + j];
      if (a === 0) continue;
      b[j] += a * yw[i];
      for (let k = 0; k < p; k++) f[j * p + k] += a * xw[i * p + k];
    }
  }
  const lf = choleskyFlat(f, p, problem.paramNames);
  const q = solveWithFactor(lf, p, b);
  let chi2 = 0;
  for (let i = 0; i < n; i++) {
    let m = 0;
    for (let j = 0; j < p; j++) m += xw[i * p + j] * q[j];
    chi2 += (yw[i] - m) ** 2;
  }
  return { q, cov: inverseFromFactor(lf, p), chi2 };
}
