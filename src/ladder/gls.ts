/**
 * Generalised least squares that exploits the structure of the ladder.
 *
 * Model y = X q + e, Cov(e) = C, with C block-diagonal: most rows are independent
 * (a diagonal block), a few come in small dense blocks (the distance priors of the
 * anchors and main-sequence targets). Each block is whitened with its own Cholesky
 * factor, so the N x N covariance is never formed:
 *   q = F^-1 b,  F = X^T C^-1 X,  b = X^T C^-1 y,  Cov(q) = F^-1,  chi2 = (y - Xq)^T C^-1 (y - Xq).
 *
 * The parameters are of two kinds. A few are global (zero points, slopes, the Hubble-flow
 * intercept); the many others belong to one object each (a host's or a field star's distance)
 * and meet each other only through the rows of one object, or of one dense block. F is then an
 * arrowhead matrix: F_LL (locals) is block-diagonal, one small block per group of locals that
 * share rows ("component"), bordered by the g global columns. The locals are eliminated block
 * by block (Schur complement):
 *   U_c = F_cc^-1 F_cG,  S = F_GG - sum_c F_Gc U_c,  q_G = S^-1 (b_G - sum_c F_Gc F_cc^-1 b_c),
 *   q_c = F_cc^-1 b_c - U_c q_G,
 * the same solution as the dense one at cost N k^2 + sum_c (k_c^3 + k_c^2 g) + g^3 instead of
 * p^3: linear in the number of objects. Only the g x g system S is dense.
 *
 * Error budget: with C = sum_k C_k for independent sources, Cov(q) = sum_k W C_k W^T
 * where W = F^-1 X^T C^-1. For a linear function g^T q its variance splits exactly as
 * sum_k w^T C_k w with w = C^-1 X F^-1 g, which is again accumulated block by block.
 */
import {
  backSubstituteTransposed,
  choleskyFactor,
  choleskyOfRows,
  forwardSubstitute,
  inverseFromCholesky,
  NotPositiveDefiniteError,
  solveCholesky,
  solveCholeskyMany,
} from '../math/cholesky.ts';

export interface SparseRow {
  /** Parameter indices with non-zero design coefficients. */
  idx: number[];
  coef: number[];
}

/** A covariance contribution of one source to a block (they add up to the block's covariance). */
export type CovarianceComponent = { source: string; diagonal: number[] } | { source: string; dense: number[][] };

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
  /**
   * Indices of the global parameters (shared by many objects); the others are eliminated block
   * by block. Absent: every parameter is global (one dense p x p system).
   */
  globals?: readonly number[];
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

/**
 * blockVariance and a dense block's Cholesky factor, computed once per block object: a fit
 * iteration reads them several times (normal equations, chi-square, leverages, residuals), and a
 * block is never changed after it is built (buildModel makes new blocks for new values).
 */
const varianceCache = new WeakMap<RowBlock, number[] | number[][]>();
const factorCache = new WeakMap<RowBlock, Float64Array>();

/** blockVariance, computed once per block; the array is shared: read it, never change it. */
export function cachedVariance(block: RowBlock): number[] | number[][] {
  let v = varianceCache.get(block);
  if (!v) varianceCache.set(block, (v = blockVariance(block)));
  return v;
}

/** Whitened form of a dense block: rows (dense over the block's parameter set) and y. */
interface WhitenedBlock {
  params: number[];
  /** rows x params.length, row-major */
  x: Float64Array;
  y: Float64Array;
  /** Cholesky factor of the block's covariance (row-major lower). */
  chol: Float64Array;
  n: number;
}

/** Cholesky factor of a dense block's covariance (the core's policy: a typed error if not SPD). */
function denseBlockFactor(block: RowBlock): Float64Array {
  let l = factorCache.get(block);
  if (!l) factorCache.set(block, (l = choleskyOfRows(cachedVariance(block) as number[][])));
  return l;
}

function whitenDense(block: RowBlock): WhitenedBlock {
  const n = block.rows.length;
  const l = denseBlockFactor(block);
  const paramSet = new Map<number, number>();
  for (const r of block.rows) for (const j of r.idx) if (!paramSet.has(j)) paramSet.set(j, paramSet.size);
  const params = [...paramSet.keys()];
  const k = params.length;
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

/**
 * Which parameters are global and how the others group: a component is a set of local
 * parameters linked by shared rows (every local of one row, and every local of one dense block).
 * Fixed for a model whatever the values of its rows.
 */
export interface GlsStructure {
  p: number;
  /** Global parameter indices, ascending. */
  globals: Int32Array;
  /** Parameter -> position among the globals, -1 for a local. */
  gPos: Int32Array;
  /** Parameter -> its component, -1 for a global. */
  comp: Int32Array;
  /** Parameter -> its position inside its component. */
  pos: Int32Array;
  /** Component -> its parameters, ascending. */
  components: Int32Array[];
}

/** The structure of a problem (union-find over the local parameters of each row or dense block). */
export function glsStructure(problem: GlsProblem): GlsStructure {
  const p = problem.nParams;
  const gPos = new Int32Array(p).fill(-1);
  // no declared globals: every parameter is global, i.e. one dense p x p system
  const globals = Int32Array.from(problem.globals ?? Array.from({ length: p }, (_, i) => i)).sort();
  globals.forEach((j, i) => (gPos[j] = i));
  const parent = Int32Array.from({ length: p }, (_, i) => i);
  const find = (i: number): number => {
    while (parent[i] !== i) {
      parent[i] = parent[parent[i]];
      i = parent[i];
    }
    return i;
  };
  const union = (a: number, b: number) => {
    const ra = find(a);
    const rb = find(b);
    if (ra !== rb) parent[Math.max(ra, rb)] = Math.min(ra, rb);
  };
  for (const block of problem.blocks) {
    let first = -1; // for a dense block: all its locals join one component
    for (const r of block.rows) {
      let rowFirst = block.diagonal ? -1 : first;
      for (const j of r.idx) {
        if (gPos[j] >= 0) continue;
        if (rowFirst < 0) rowFirst = j;
        else union(rowFirst, j);
      }
      if (!block.diagonal) first = rowFirst;
    }
  }
  const comp = new Int32Array(p).fill(-1);
  const pos = new Int32Array(p).fill(-1);
  const members: number[][] = [];
  const rootComp = new Map<number, number>();
  for (let j = 0; j < p; j++) {
    if (gPos[j] >= 0) continue;
    const root = find(j);
    let c = rootComp.get(root);
    if (c === undefined) {
      c = members.length;
      rootComp.set(root, c);
      members.push([]);
    }
    comp[j] = c;
    pos[j] = members[c].length;
    members[c].push(j);
  }
  return { p, globals, gPos, comp, pos, components: members.map((m) => Int32Array.from(m)) };
}

/**
 * Normal equations F q = b in arrowhead form: F_cc for each component, F_cG (component rows x
 * global columns) and F_GG; b over all parameters; c = y^T C^-1 y.
 */
export interface NormalEquations {
  st: GlsStructure;
  fcc: Float64Array[];
  fcg: Float64Array[];
  fgg: Float64Array;
  b: Float64Array;
  c: number;
  nRows: number;
}

export function emptyNormal(st: GlsStructure): NormalEquations {
  const g = st.globals.length;
  return {
    st,
    fcc: st.components.map((m) => new Float64Array(m.length * m.length)),
    fcg: st.components.map((m) => new Float64Array(m.length * g)),
    fgg: new Float64Array(g * g),
    b: new Float64Array(st.p),
    c: 0,
    nRows: 0,
  };
}

export function copyNormal(ne: NormalEquations): NormalEquations {
  return {
    st: ne.st,
    fcc: ne.fcc.map((a) => Float64Array.from(a)),
    fcg: ne.fcg.map((a) => Float64Array.from(a)),
    fgg: Float64Array.from(ne.fgg),
    b: Float64Array.from(ne.b),
    c: ne.c,
    nRows: ne.nRows,
  };
}

/** Add w x x^T to F and w y x to b for one row x (parameter indices idx, coefficients x). */
function addRow(ne: NormalEquations, idx: ArrayLike<number>, x: ArrayLike<number>, len: number, w: number, y: number): void {
  const { gPos, comp, pos, globals } = ne.st;
  const g = globals.length;
  ne.c += y * y * w;
  for (let s = 0; s < len; s++) {
    const js = idx[s];
    const xs = x[s];
    if (xs === 0) continue;
    const cs = xs * w;
    ne.b[js] += cs * y;
    const gs = gPos[js];
    if (gs >= 0) {
      for (let t = 0; t < len; t++) {
        const gt = gPos[idx[t]];
        if (gt >= 0) ne.fgg[gs * g + gt] += cs * x[t];
      }
    } else {
      const c = comp[js];
      const k = ne.st.components[c].length;
      const ps = pos[js];
      const fcc = ne.fcc[c];
      const fcg = ne.fcg[c];
      for (let t = 0; t < len; t++) {
        const jt = idx[t];
        const gt = gPos[jt];
        if (gt >= 0) fcg[ps * g + gt] += cs * x[t];
        else fcc[ps * k + pos[jt]] += cs * x[t];
      }
    }
  }
}

/** Accumulate the rows of some blocks into ne (cost N k^2, plus m^3/3 per dense block of m rows). */
export function accumulateNormal(ne: NormalEquations, blocks: readonly RowBlock[]): NormalEquations {
  for (const block of blocks) {
    ne.nRows += block.rows.length;
    if (block.diagonal) {
      const v = cachedVariance(block) as number[];
      for (let i = 0; i < block.rows.length; i++) {
        const r = block.rows[i];
        addRow(ne, r.idx, r.coef, r.idx.length, 1 / v[i], block.y[i]);
      }
    } else {
      const wb = whitenDense(block);
      const k = wb.params.length;
      for (let i = 0; i < wb.n; i++) addRow(ne, wb.params, wb.x.subarray(i * k, (i + 1) * k), k, 1, wb.y[i]);
    }
  }
  return ne;
}

export class SingularFitError extends Error {
  constructor(readonly parameter: string) {
    super(`the data do not determine the parameter "${parameter}"`);
    this.name = 'SingularFitError';
  }
}

/**
 * The factorisation of arrowhead normal equations: the Cholesky factor of each F_cc, U_c =
 * F_cc^-1 F_cG, and the Cholesky factor of the Schur complement S. Solves with F cost
 * O(sum k_c^2 + p g + g^2); no inverse is formed for a solve.
 */
export class StructuredFactor {
  private covBlocks: CovarianceBlocks | null = null;

  constructor(
    readonly st: GlsStructure,
    private readonly lc: Float64Array[],
    private readonly u: Float64Array[],
    private readonly fcg: Float64Array[],
    private readonly ls: Float64Array,
  ) {}

  /** F^-1 r, by eliminating the locals block by block. */
  solve(r: ArrayLike<number>): Float64Array {
    const { st } = this;
    const g = st.globals.length;
    const x = new Float64Array(st.p);
    const rG = new Float64Array(g);
    for (let a = 0; a < g; a++) rG[a] = r[st.globals[a]];
    const w: Float64Array[] = st.components.map((m, c) => {
      const k = m.length;
      const rc = new Float64Array(k);
      for (let i = 0; i < k; i++) rc[i] = r[m[i]];
      const wc = solveCholesky(this.lc[c], k, rc);
      const fcg = this.fcg[c];
      for (let i = 0; i < k; i++) {
        const wi = wc[i];
        if (wi === 0) continue;
        for (let a = 0; a < g; a++) rG[a] -= fcg[i * g + a] * wi;
      }
      return wc;
    });
    const xG = solveCholesky(this.ls, g, rG);
    for (let a = 0; a < g; a++) x[st.globals[a]] = xG[a];
    st.components.forEach((m, c) => {
      const k = m.length;
      const u = this.u[c];
      for (let i = 0; i < k; i++) {
        let s = w[c][i];
        for (let a = 0; a < g; a++) s -= u[i * g + a] * xG[a];
        x[m[i]] = s;
      }
    });
    return x;
  }

  /**
   * The blocks of F^-1 that rows touching one component and the globals need:
   *   Cov_GG = S^-1,  Cov_cG = -U_c S^-1,  Cov_cc = F_cc^-1 + U_c S^-1 U_c^T.
   * Computed once (cost sum k_c^3 + k_c^2 g).
   */
  blocks(): CovarianceBlocks {
    if (this.covBlocks) return this.covBlocks;
    const { st } = this;
    const g = st.globals.length;
    const gg = inverseFromCholesky(this.ls, g);
    const cg: Float64Array[] = [];
    const cc: Float64Array[] = [];
    st.components.forEach((m, c) => {
      const k = m.length;
      const u = this.u[c];
      const cgc = new Float64Array(k * g);
      for (let i = 0; i < k; i++) {
        for (let b = 0; b < g; b++) {
          let s = 0;
          for (let a = 0; a < g; a++) s -= u[i * g + a] * gg[a * g + b];
          cgc[i * g + b] = s;
        }
      }
      const ccc = inverseFromCholesky(this.lc[c], k);
      for (let i = 0; i < k; i++) {
        for (let j = 0; j < k; j++) {
          let s = 0;
          for (let b = 0; b < g; b++) s -= cgc[i * g + b] * u[j * g + b];
          ccc[i * k + j] += s;
        }
      }
      cg.push(cgc);
      cc.push(ccc);
    });
    this.covBlocks = new CovarianceBlocks(st, cc, cg, gg, this.u);
    return this.covBlocks;
  }

  /** The full covariance F^-1 (flat p x p): the published covariance of the parameters. Cost p^2 g. */
  covariance(): Float64Array {
    const cb = this.blocks();
    const p = this.st.p;
    const out = new Float64Array(p * p);
    for (let i = 0; i < p; i++) for (let j = 0; j <= i; j++) out[i * p + j] = out[j * p + i] = cb.at(i, j);
    return out;
  }
}

/** Entries of F^-1 from its arrowhead blocks. */
export class CovarianceBlocks {
  constructor(
    private readonly st: GlsStructure,
    private readonly cc: Float64Array[],
    private readonly cg: Float64Array[],
    private readonly gg: Float64Array,
    private readonly u: Float64Array[],
  ) {}

  /** (F^-1)_ij. Between two components: U_c S^-1 U_d^T = -Cov_cG U_d^T (cost g). */
  at(i: number, j: number): number {
    const { gPos, comp, pos, components } = this.st;
    const g = this.st.globals.length;
    const gi = gPos[i];
    const gj = gPos[j];
    if (gi >= 0 && gj >= 0) return this.gg[gi * g + gj];
    if (gi >= 0) return this.cg[comp[j]][pos[j] * g + gi];
    if (gj >= 0) return this.cg[comp[i]][pos[i] * g + gj];
    const ci = comp[i];
    const cj = comp[j];
    if (ci === cj) return this.cc[ci][pos[i] * components[ci].length + pos[j]];
    const a = this.cg[ci];
    const u = this.u[cj];
    let s = 0;
    for (let b = 0; b < g; b++) s -= a[pos[i] * g + b] * u[pos[j] * g + b];
    return s;
  }
}

/** A solution: q, the chi-square at the minimum, and the factor for later solves and covariances. */
export interface GlsSolution {
  q: Float64Array;
  chi2: number;
  nRows: number;
  factor: StructuredFactor;
}

/**
 * Factor arrowhead normal equations and solve them; chi2 at the minimum is c - b^T q. Throws
 * SingularFitError naming the parameter at which a factorisation of the whole F in parameter
 * order (locals first) would find its first non-positive pivot.
 */
export function solveNormal(ne: NormalEquations, paramNames: readonly string[]): GlsSolution {
  const { st } = ne;
  const g = st.globals.length;
  const lc: Float64Array[] = [];
  const u: Float64Array[] = [];
  let failed = -1;
  st.components.forEach((m, c) => {
    const k = m.length;
    try {
      const l = choleskyFactor(ne.fcc[c], k);
      lc.push(l);
      u.push(solveCholeskyMany(l, k, ne.fcg[c], g));
    } catch (e) {
      if (!(e instanceof NotPositiveDefiniteError)) throw e;
      // F_LL is block-diagonal: the first failing pivot of the whole is the smallest over blocks
      const j = m[e.index];
      if (failed < 0 || j < failed) failed = j;
    }
  });
  if (failed >= 0) throw new SingularFitError(paramNames[failed]);
  // Schur complement S = F_GG - sum_c F_Gc U_c and the reduced right-hand side
  const sMat = Float64Array.from(ne.fgg);
  const rG = new Float64Array(g);
  for (let a = 0; a < g; a++) rG[a] = ne.b[st.globals[a]];
  const wc: Float64Array[] = [];
  st.components.forEach((m, c) => {
    const k = m.length;
    const fcg = ne.fcg[c];
    const uc = u[c];
    const bc = new Float64Array(k);
    for (let i = 0; i < k; i++) bc[i] = ne.b[m[i]];
    const w = solveCholesky(lc[c], k, bc);
    wc.push(w);
    for (let i = 0; i < k; i++) {
      for (let a = 0; a < g; a++) {
        const fa = fcg[i * g + a];
        if (fa === 0) continue;
        rG[a] -= fa * w[i];
        for (let b = 0; b < g; b++) sMat[a * g + b] -= fa * uc[i * g + b];
      }
    }
  });
  const fggDiag = Float64Array.from({ length: g }, (_, a) => ne.fgg[a * g + a]);
  let ls: Float64Array;
  try {
    ls = choleskyFactor(sMat, g, undefined, fggDiag);
  } catch (e) {
    if (e instanceof NotPositiveDefiniteError) throw new SingularFitError(paramNames[st.globals[e.index]]);
    throw e;
  }
  const qG = solveCholesky(ls, g, rG);
  const q = new Float64Array(st.p);
  for (let a = 0; a < g; a++) q[st.globals[a]] = qG[a];
  st.components.forEach((m, c) => {
    const k = m.length;
    const uc = u[c];
    for (let i = 0; i < k; i++) {
      let s = wc[c][i];
      for (let a = 0; a < g; a++) s -= uc[i * g + a] * qG[a];
      q[m[i]] = s;
    }
  });
  let bq = 0;
  for (let i = 0; i < st.p; i++) bq += ne.b[i] * q[i];
  return { q, chi2: Math.max(0, ne.c - bq), nRows: ne.nRows, factor: new StructuredFactor(st, lc, u, ne.fcg, ls) };
}

/**
 * Accumulate the normal equations over all blocks and solve them by block elimination. The
 * chi-square is evaluated from the residuals (not as c - b^T q) for full precision.
 */
export function solveGls(problem: GlsProblem, st: GlsStructure = glsStructure(problem)): GlsSolution {
  const ne = accumulateNormal(emptyNormal(st), problem.blocks);
  const sol = solveNormal(ne, problem.paramNames);
  return { ...sol, chi2: chiSquare(problem, sol.q) };
}

/** Read access to a covariance matrix F^-1 (structured blocks or a flat p x p array). */
export interface CovarianceAccess {
  at(i: number, j: number): number;
}

/** A flat p x p matrix as CovarianceAccess. */
export function flatCovariance(a: Float64Array, p: number): CovarianceAccess {
  return { at: (i, j) => a[i * p + j] };
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
      const v = cachedVariance(block) as number[];
      for (let i = 0; i < r.length; i++) chi2 += (r[i] * r[i]) / v[i];
    } else {
      const z = forwardSubstitute(denseBlockFactor(block), r.length, r);
      for (let i = 0; i < z.length; i++) chi2 += z[i] * z[i];
    }
  }
  return chi2;
}

/**
 * Leverages h_i = x_i^T F^-1 x_i / v_i of the rows of a diagonal block
 * (the diagonal of the whitened hat matrix). Cost k^2 per row given F^-1.
 */
export function blockLeverages(block: RowBlock, cov: CovarianceAccess): number[] {
  if (!block.diagonal) throw new Error('leverages are defined here for diagonal blocks only');
  const v = cachedVariance(block) as number[];
  return block.rows.map((r, i) => {
    let h = 0;
    for (let s = 0; s < r.idx.length; s++) {
      for (let t = 0; t < r.idx.length; t++) h += r.coef[s] * r.coef[t] * cov.at(r.idx[s], r.idx[t]);
    }
    return h / v[i];
  });
}

/**
 * Split the variance of g^T q by covariance source: sum_k w_k^T C_k w_k with
 * w = C^-1 X F^-1 g (content/methods/error-budget.md). Returns source -> variance.
 * The parts add up to g^T F^-1 g exactly (up to rounding).
 */
export function varianceBySource(problem: GlsProblem, factor: StructuredFactor, g: ArrayLike<number>): Map<string, number> {
  const u = factor.solve(g);
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
      const v = cachedVariance(block) as number[];
      w = xu.map((x, i) => x / v[i]);
    } else {
      // w = C^-1 (X u) via the block's Cholesky factor
      const n = xu.length;
      const l = denseBlockFactor(block);
      w = Array.from(backSubstituteTransposed(l, n, forwardSubstitute(l, n, xu)));
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
 * The chi-square of some blocks as a function of q, evaluated in O(p) instead of O(N): it is
 * exactly quadratic, so around a point q0
 *   chi2(q) = chi2(q0) - 2 d^T X^T C^-1 r0 + d^T F d,   d = q - q0,  r0 = y - X q0,
 * with chi2(q0) and X^T C^-1 r0 summed once from the residuals (full precision, no c - b^T q
 * cancellation) and F the blocks' normal matrix in arrowhead form.
 */
export function chiSquareAround(problem: GlsProblem, ne: NormalEquations, q0: Float64Array): (q: ArrayLike<number>) => number {
  const { st } = ne;
  const p = st.p;
  const g = st.globals.length;
  const chi0 = chiSquare(problem, q0);
  // grad = X^T C^-1 r0
  const grad = new Float64Array(p);
  for (const block of problem.blocks) {
    const r = blockResiduals(block, q0);
    if (block.diagonal) {
      const v = cachedVariance(block) as number[];
      block.rows.forEach((row, i) => {
        const w = r[i] / v[i];
        for (let t = 0; t < row.idx.length; t++) grad[row.idx[t]] += row.coef[t] * w;
      });
    } else {
      const n = r.length;
      const l = denseBlockFactor(block);
      const w = backSubstituteTransposed(l, n, forwardSubstitute(l, n, r));
      block.rows.forEach((row, i) => {
        for (let t = 0; t < row.idx.length; t++) grad[row.idx[t]] += row.coef[t] * w[i];
      });
    }
  }
  const d = new Float64Array(p);
  return (q) => {
    let lin = 0;
    for (let i = 0; i < p; i++) {
      d[i] = q[i] - q0[i];
      lin += d[i] * grad[i];
    }
    let quad = 0;
    const dG = Float64Array.from(st.globals, (j) => d[j]);
    for (let a = 0; a < g; a++) for (let b = 0; b < g; b++) quad += dG[a] * ne.fgg[a * g + b] * dG[b];
    st.components.forEach((m, c) => {
      const k = m.length;
      const fcc = ne.fcc[c];
      const fcg = ne.fcg[c];
      for (let i = 0; i < k; i++) {
        const di = d[m[i]];
        if (di === 0) continue;
        let s = 0;
        for (let j = 0; j < k; j++) s += fcc[i * k + j] * d[m[j]];
        for (let a = 0; a < g; a++) s += 2 * fcg[i * g + a] * dG[a];
        quad += di * s;
      }
    });
    return chi0 - 2 * lin + quad;
  };
}
