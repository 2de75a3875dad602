/**
 * The statistical uncertainty of the difference of one quantity between two releases.
 *
 * Both fits are generalised least squares, theta = g^T F^-1 X^T C^-1 y, so to first order
 * each estimate is a weighted sum of its rows' errors, theta - theta_true = sum_i s_i e_i with
 * the influence weights s = C^-1 X F^-1 g (one dense solve for the prior block). A row that
 * both releases share carries one error e_i into both sums, so
 *   Var(theta_b - theta_a) = sum over rows with one common error of (s_b,i - s_a,i)^2 sqrt(v_a,i v_b,i)
 *                          + sum over rows with an error of their own of s_i^2 v_i      (either side)
 *                          + the prior block the same way, (s_b - s_a)^T (C_a + C_b)/2 (s_b - s_a)
 *                            when every prior is common (else both quadratic forms minus twice
 *                            the cross term of the common priors, clamped at zero)
 *                          + the alpha/beta part (below).
 * The two fits may assign a shared row slightly different variances (re-estimated intrinsic
 * scatter): its one true variance is taken as their geometric mean (the prior block: the mean).
 * With identical data this is exactly zero; with release b = a plus independent rows and the
 * same error model it reduces to sigma_a^2 - sigma_b^2 (Cov(theta_a, theta_b) = Var(theta_b)
 * for efficient estimators of nested samples: the common result for nested samples, e.g.
 * Hausman 1978, Econometrica 46, 1251; from memory); with nothing shared, to the quadrature
 * sum. Which errors are common is decided row by row (src/diff/noise.ts). The alpha/beta part of each
 * variance (delta-method term V = (J g)^T Cov(alpha, beta) (J g)) is combined by the nested
 * rule |V_a - V_b| when the supernova rows are nested, else V_a + V_b.
 * Cost per quantity: p^2 (F^-1 g) plus the number of rows, on each side.
 */
import { cholesky, choleskySolve, type Matrix } from '../math/matrix.ts';
import { covTimes, type FitSnapshot } from './fitSnapshot.ts';
import type { RowTable } from './globalModel.ts';

/**
 * Which errors the two sides share, as far as the sigma of a difference needs it. The
 * comparison decides it row by row (src/diff/noise.ts, NoiseSharing); a systematic variant
 * shares every row of its one release (src/ladder/variants.ts).
 */
export interface SharedErrors {
  /** Whether row `id` of a diagonal fit block has one error common to both sides. */
  rowCommon(table: RowTable, id: string): boolean;
  /** Whether the prior modulus of `system` has an error common to both sides. */
  priorCommon(system: string): boolean;
}

export const SIGMA_METHOD =
  "sigma_diff: first-order propagation of every row's error through both releases' fits. " +
  "Each estimate is a weighted sum of its rows' errors (weights s = C^-1 X F^-1 g of the final GLS). " +
  'A row unchanged, or corrected with its uncertainties unchanged, carries one common error: it contributes ' +
  "(s_b - s_a)^2 v (v: geometric mean of the two fits' variances of the row). Added, removed and remeasured rows (uncertainty changed) carry independent errors: s^2 v on their side. " +
  'Prior moduli of anchors and main-sequence targets count as common when all rows feeding them are. ' +
  'The alpha/beta term combines as |V_a - V_b| when the supernova rows are nested, else V_a + V_b. ' +
  'Identical data give 0; b = a + independent rows gives sigma_a^2 - sigma_b^2 (nested samples); nothing shared gives the quadrature sum. ' +
  'Quantities outside the fit (alpha, beta, intrinsic scatters, systems without a fit distance) use the nested rule |err_a^2 - err_b^2| ' +
  'when their rows are nested and the quadrature sum otherwise; fixed values have sigma_diff = 0. Statistical only: variants (sys) are not included.';

/**
 * One side prepared for many quantities: the Cholesky factors of the dense blocks, and every
 * row of the diagonal blocks in one flat list with its key "table:id" and variance.
 */
export interface PreparedSide {
  snap: FitSnapshot;
  chol: (Matrix | null)[];
  keys: string[];
  v: Float64Array;
  keyIndex: Map<string, number>;
}

export function prepareSide(snap: FitSnapshot): PreparedSide {
  const keys: string[] = [];
  const v: number[] = [];
  for (const block of snap.blocks) {
    if (!block.diagonal) continue;
    block.ids.forEach((id, i) => {
      keys.push(`${block.table}:${id}`);
      v.push(block.v![i]);
    });
  }
  return {
    snap,
    chol: snap.blocks.map((b) => (b.diagonal ? null : cholesky(b.cov!))),
    keys,
    v: Float64Array.from(v),
    keyIndex: new Map(keys.map((k, i) => [k, i])),
  };
}

/** Which rows of the two sides share one error: for each row of a, its row in b when common (else -1). */
export interface SidePair {
  aToB: Int32Array;
  /** Rows of b matched by a common row of a. */
  bMatched: Uint8Array;
}

export function pairSides(a: PreparedSide, b: PreparedSide, sharing: SharedErrors): SidePair {
  const aToB = new Int32Array(a.keys.length).fill(-1);
  const bMatched = new Uint8Array(b.keys.length);
  a.keys.forEach((key, i) => {
    const j = b.keyIndex.get(key);
    if (j === undefined) return;
    const colon = key.indexOf(':');
    if (!sharing.rowCommon(key.slice(0, colon) as RowTable, key.slice(colon + 1))) return;
    aToB[i] = j;
    bMatched[j] = 1;
  });
  return { aToB, bMatched };
}

interface SideWeights {
  /** Weights of the diagonal rows, in PreparedSide.keys order. */
  s: Float64Array;
  /** Dense prior block: system ids, weights, covariance. */
  dense: { ids: string[]; s: number[]; cov: number[][] } | null;
  stdVariance: number;
}

/** Influence weights of g^T q over the rows of one side, each multiplied by `scale`. */
export function sideWeights(side: PreparedSide, g: ArrayLike<number>, scale: number): SideWeights {
  const { snap } = side;
  const z = covTimes(snap, g);
  const s = new Float64Array(side.keys.length);
  let at = 0;
  let dense: SideWeights['dense'] = null;
  snap.blocks.forEach((block, b) => {
    const xz = block.rows.map((r) => {
      let t = 0;
      for (let k = 0; k < r.idx.length; k++) t += r.coef[k] * z[r.idx[k]];
      return t;
    });
    if (block.diagonal) {
      for (let i = 0; i < xz.length; i++) s[at++] = (scale * xz[i]) / block.v![i];
    } else {
      const l = side.chol[b];
      const w = l ? choleskySolve(l, xz).map((x) => x * scale) : xz.map(() => 0);
      dense = { ids: block.ids, s: w, cov: block.cov! };
    }
  });
  // alpha/beta part: (J g)^T Cov(theta) (J g)
  const { jacobian, cov } = snap.standardisation;
  const jg = jacobian.map((row) => {
    let t = 0;
    for (let i = 0; i < row.length; i++) t += row[i] * g[i];
    return t * scale;
  });
  let stdVariance = 0;
  for (let x = 0; x < jg.length; x++) for (let y = 0; y < jg.length; y++) stdVariance += jg[x] * cov[x][y] * jg[y];
  return { s, dense, stdVariance };
}

/** Variance of one side alone (equals g^T Cov(q) g of the fit, times scale^2). */
function sideVariance(side: PreparedSide, w: SideWeights): number {
  let v = w.stdVariance;
  for (let i = 0; i < w.s.length; i++) v += w.s[i] * w.s[i] * side.v[i];
  if (w.dense) v += quad(w.dense.s, w.dense.cov);
  return v;
}

function quad(s: readonly number[], c: readonly (readonly number[])[]): number {
  let t = 0;
  for (let i = 0; i < s.length; i++) for (let j = 0; j < s.length; j++) t += s[i] * c[i][j] * s[j];
  return t;
}

function denseDifferenceVariance(a: NonNullable<SideWeights['dense']> | null, b: NonNullable<SideWeights['dense']> | null, sharing: SharedErrors): number {
  if (!a && !b) return 0;
  if (!a) return quad(b!.s, b!.cov);
  if (!b) return quad(a.s, a.cov);
  const posB = new Map(b.ids.map((id, i) => [id, i]));
  // common priors: one error vector with covariance C = (C_a + C_b) / 2 over the common pairs
  const common = a.ids.map((id, i) => ({ i, j: posB.get(id), ok: posB.has(id) && sharing.priorCommon(id) })).filter((x) => x.ok) as { i: number; j: number }[];
  const cbar = (x: { i: number; j: number }, y: { i: number; j: number }) => 0.5 * (a.cov[x.i][y.i] + b.cov[x.j][y.j]);
  if (common.length === a.ids.length && common.length === b.ids.length) {
    // every prior common: Var = (s_b - s_a)^T C (s_b - s_a), exactly 0 for identical fits
    const d = common.map((x) => b.s[x.j] - a.s[x.i]);
    let t = 0;
    for (let p = 0; p < common.length; p++) for (let q = 0; q < common.length; q++) t += d[p] * cbar(common[p], common[q]) * d[q];
    return Math.max(0, t);
  }
  let cross = 0;
  for (const x of common) for (const y of common) cross += a.s[x.i] * cbar(x, y) * b.s[y.j];
  return Math.max(0, quad(a.s, a.cov) + quad(b.s, b.cov) - 2 * cross);
}

export interface SigmaDiff {
  sigma: number;
  varA: number;
  varB: number;
}

/**
 * sigma of (theta_b - theta_a) where theta_x = scale_x * g_x^T q_x (see the module comment).
 * `stdNested`: whether the alpha/beta term combines by the nested rule.
 */
export function sigmaOfDifference(
  a: PreparedSide,
  ga: ArrayLike<number>,
  scaleA: number,
  b: PreparedSide,
  gb: ArrayLike<number>,
  scaleB: number,
  sharing: SharedErrors,
  stdNested: boolean,
  pair: SidePair = pairSides(a, b, sharing),
): SigmaDiff {
  const wa = sideWeights(a, ga, scaleA);
  const wb = sideWeights(b, gb, scaleB);
  let v = 0;
  for (let i = 0; i < wa.s.length; i++) {
    const j = pair.aToB[i];
    if (j >= 0) v += (wb.s[j] - wa.s[i]) ** 2 * Math.sqrt(a.v[i] * b.v[j]);
    else v += wa.s[i] * wa.s[i] * a.v[i];
  }
  for (let j = 0; j < wb.s.length; j++) if (!pair.bMatched[j]) v += wb.s[j] * wb.s[j] * b.v[j];
  v += denseDifferenceVariance(wa.dense, wb.dense, sharing);
  v += stdNested ? Math.abs(wa.stdVariance - wb.stdVariance) : wa.stdVariance + wb.stdVariance;
  return { sigma: Math.sqrt(Math.max(0, v)), varA: sideVariance(a, wa), varB: sideVariance(b, wb) };
}

/** The rule for quantities without influence weights: nested |ea^2 - eb^2|, else ea^2 + eb^2. */
export function sigmaByRule(errA: number, errB: number, nested: boolean): number {
  return Math.sqrt(nested ? Math.abs(errA * errA - errB * errB) : errA * errA + errB * errB);
}
