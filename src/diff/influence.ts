/**
 * How much each changed row moved H0, one row at a time, without recalibrating:
 *
 *  - Rows that enter the global fit directly (Cepheids, supernova calibrators, Hubble-flow
 *    supernovae, field stars' parallaxes): the exact change of the fit's GLS solution when the
 *    row's old version is removed and its new version added, at fixed alpha, beta, intrinsic
 *    scatters and outlier set (two rank-one updates of F^-1, Sherman & Morrison 1950):
 *      remove (a1, y1, v1):  q1 = q - F^-1 a1 r1 / (v1 - h1),  r1 = y1 - a1.q,  h1 = a1^T F^-1 a1
 *      add    (a2, y2, v2):  q2 = q1 + F1^-1 a2 r2 / (v2 + a2^T F1^-1 a2),  r2 = y2 - a2.q1
 *    then the response of alpha and beta (one Newton step on the profile chi-square, see
 *    standardisationResponse) carried to q through the fit's d q / d theta; delta log10 H0 =
 *    g^T (total change of q). Without the alpha/beta step a Hubble-flow row's estimate can be
 *    off by a factor 2 (alpha and beta absorb part of a single supernova's residual). The new
 *    version is built with the fit's own model code (globalModel.ts) under the side's state.
 *    Cost O(p k) per row after the per-fit set-up (p^2 m).
 *  - Parallaxes of geometric anchors: the anchor's modulus is recomputed exactly with the row
 *    swapped (weighted mean, parallaxAnchors.ts) and its change propagated linearly,
 *    delta log10 H0 = D_s delta mu_s with D_s = w_s + sum_t w_t G_ts (w: the fit's influence
 *    weights of the prior moduli; G: main-sequence targets' d mu_t / d mu_s through the locus).
 * Each estimate is made on both sides (a's fit with the row swapped to b's version, and b's fit
 * with it swapped back, sign reversed) and the two are averaged; one side is used alone when
 * the other cannot take the row (e.g. a new host with no distance parameter there).
 * Main-sequence and systems rows are estimated by recalibration (compare.ts).
 */
import type { AnalysisChoices } from '../types/analysis.ts';
import type { CepheidRow, ParallaxRow, Release, SnCalibratorRow, SnHubbleFlowRow, SupernovaLightCurve, TableName } from '../types/release.ts';
import { correctedMagnitudeVarianceGradient } from '../ladder/supernovae.ts';
import { blockVariance } from '../ladder/gls.ts';
import { buildModel, ParameterIndex, prepareModel, type GlobalFitInput, type RowTable } from '../ladder/globalModel.ts';
import { selectHubbleFlow } from '../ladder/hubbleFlow.ts';
import { fitAnchorParallax } from '../ladder/parallaxAnchors.ts';
import { AnalysisError } from '../types/issues.ts';
import { choleskySolve } from '../math/matrix.ts';
import { indexById, tableRows, type AnyRow } from './rows.ts';
import { covTimes, log10H0Gradient, type FitSnapshot } from './snapshot.ts';
import type { PreparedSide } from './sigma.ts';

export const INFLUENCE_METHOD =
  "Per-row estimates, no recalibration: for rows in the global fit (Cepheids, supernovae, field-star parallaxes) the exact change of the fit's " +
  'GLS solution when the old version of the row is removed and the new one added (two rank-one updates of F^-1, at fixed intrinsic scatters ' +
  "and outliers), plus the response of alpha and beta (one Newton step on the profile chi-square); for anchor parallaxes the anchor's modulus recomputed with the row swapped, propagated through the fit's " +
  "weights of the prior moduli including the main-sequence targets' dependence on the anchors. Each estimate is made from both releases' fits " +
  '(a with the row swapped to b, b with it swapped back) and averaged. Main-sequence and systems rows are estimated by recalibrating release a ' +
  'with the row (or, above a cap, all changed rows of one system) swapped. Estimates are first order and do not add up exactly to the ' +
  'group contributions; their sums are shown beside them.';

/** A linearised row of the fit: design row in the side's parameter indices, datum and variance. */
interface FitRow {
  idx: number[];
  coef: number[];
  y: number;
  v: number;
}

const FIT_TABLE: Partial<Record<TableName, RowTable>> = {
  cepheids: 'cepheids',
  sn_calibrators: 'sn_calibrators',
  sn_hubble_flow: 'sn_hubble_flow',
};

/** Rows of the diagonal blocks of a fit by "table:id" (built once per snapshot). */
const fitRowIndex = new WeakMap<FitSnapshot, Map<string, FitRow>>();

function fitRows(snap: FitSnapshot): Map<string, FitRow> {
  let m = fitRowIndex.get(snap);
  if (!m) {
    m = new Map();
    for (const block of snap.blocks) {
      if (!block.diagonal) continue;
      block.ids.forEach((id, i) => m!.set(`${block.table}:${id}`, { idx: block.rows[i].idx, coef: block.rows[i].coef, y: block.y[i], v: block.v![i] }));
    }
    fitRowIndex.set(snap, m);
  }
  return m;
}

/** The row of `table` with id `id` as it stands in the side's fit (absent: rejected, cut, or not fitted). */
function rowInFit(snap: FitSnapshot, table: RowTable, id: string): FitRow | null {
  return fitRows(snap).get(`${table}:${id}`) ?? null;
}

/** Whether the other side's fit uses this row (so its new version enters). */
function usedInFit(snap: FitSnapshot, table: RowTable, id: string): boolean {
  return fitRows(snap).has(`${table}:${id}`);
}

const EMPTY_PRIORS = { systems: [], method: [], mu: [], zpLoading: [], parts: [] };

/**
 * The fit row of another version of a row under this side's analysis and fit state, built with
 * the fit's own model code; null when it needs a parameter the side's fit lacks or is cut.
 */
function buildFitRow(snap: FitSnapshot, fieldSystems: ReadonlySet<string>, table: RowTable, row: AnyRow): FitRow | null {
  const analysis: AnalysisChoices = snap.analysis;
  const hasZeta = snap.paramNames.includes('zeta');
  const input: GlobalFitInput = {
    analysis,
    priors: EMPTY_PRIORS,
    fieldStars: [],
    zeroPointErrMas: hasZeta ? analysis.parallax_zero_point_err : 0,
    cepheids: [],
    fieldSystems,
    calibrators: [],
    hubbleFlow: [],
    // one row alone cannot tell whether the step is fitted: the snapshot's fit says
    massStep: snap.paramNames.includes('delta_M_host'),
  };
  const linearisedMu: number[] = [];
  if (table === 'field_parallax') {
    const p = row as unknown as ParallaxRow;
    const mu0 = snap.fieldStarMu[`${p.system}/${p.star}`];
    if (mu0 === undefined) return null;
    // as the parallax rung builds a field star (parallax.ts): corrected parallax, floor in quadrature
    input.fieldStars = [
      {
        star: p.star,
        system: p.system,
        line: p.line,
        parallaxCorrMas: p.parallaxMas - analysis.parallax_zero_point,
        parallaxErrMas: Math.hypot(p.parallaxErrMas, analysis.parallax_floor),
      },
    ];
    linearisedMu.push(mu0);
  } else if (table === 'cepheids') {
    const c = row as unknown as CepheidRow;
    input.cepheids = [c];
    if (fieldSystems.has(c.system)) {
      const mu0 = snap.fieldStarMu[`${c.system}/${c.star}`];
      if (mu0 === undefined) return null;
      input.fieldStars = [{ star: c.star, system: c.system, line: 0, parallaxCorrMas: 1, parallaxErrMas: 1 }];
      linearisedMu.push(mu0);
    }
  } else if (table === 'sn_calibrators') {
    input.calibrators = [row as unknown as SnCalibratorRow];
  } else if (table === 'sn_hubble_flow') {
    input.hubbleFlow = selectHubbleFlow([row as unknown as SnHubbleFlowRow], analysis).used;
    if (input.hubbleFlow.length === 0) return null;
  } else return null;
  const params = new ParameterIndex(input);
  const model = buildModel(prepareModel(input, params), {
    ...snap.state,
    linearisedMu: Float64Array.from(linearisedMu),
    rejected: new Set(),
  });
  const b = model.refs.findIndex((refs) => refs[0]?.table === table);
  if (b < 0) return null;
  const block = model.problem.blocks[b];
  const r = block.rows[0];
  const idx: number[] = [];
  for (const j of r.idx) {
    const k = snap.paramNames.indexOf(params.names[j]);
    if (k < 0) return null;
    idx.push(k);
  }
  return { idx, coef: [...r.coef], y: block.y[0], v: (blockVariance(block) as number[])[0] };
}

function dotSparse(r: FitRow, v: ArrayLike<number>): number {
  let t = 0;
  for (let k = 0; k < r.idx.length; k++) t += r.coef[k] * v[r.idx[k]];
  return t;
}

/** a1^T F^-1 a2 for sparse rows. */
function bilinear(snap: FitSnapshot, r1: FitRow, r2: FitRow): number {
  const p = snap.paramNames.length;
  let t = 0;
  for (let k = 0; k < r1.idx.length; k++) {
    for (let m = 0; m < r2.idx.length; m++) t += r1.coef[k] * snap.covGls[r1.idx[k] * p + r2.idx[m]] * r2.coef[m];
  }
  return t;
}

/** F^-1 a for a sparse row a (p-vector). Cost p k. */
function covTimesRow(snap: FitSnapshot, r: FitRow): Float64Array {
  const p = snap.paramNames.length;
  const out = new Float64Array(p);
  for (let k = 0; k < r.idx.length; k++) {
    const j = r.idx[k];
    const c = r.coef[k];
    for (let i = 0; i < p; i++) out[i] += snap.covGls[i * p + j] * c;
  }
  return out;
}

/**
 * q_new - q when `oldRow` leaves the fit and `newRow` enters (either may be null), by two
 * rank-one updates at fixed alpha, beta and scatters; null when removing the row would leave a
 * parameter undetermined (leverage 1). Also the residuals of the two rows used.
 */
export function swapResponse(snap: FitSnapshot, oldRow: FitRow | null, newRow: FitRow | null): { dq: Float64Array; rOld: number; rNew: number } | null {
  const p = snap.paramNames.length;
  const dq = new Float64Array(p);
  let r1 = 0;
  let d1 = 0;
  let pa1: Float64Array | null = null;
  if (oldRow) {
    const h1 = bilinear(snap, oldRow, oldRow);
    d1 = oldRow.v - h1;
    if (!(d1 > 1e-12 * oldRow.v)) return null;
    r1 = oldRow.y - dotSparse(oldRow, snap.q);
    pa1 = covTimesRow(snap, oldRow);
    for (let i = 0; i < p; i++) dq[i] -= (pa1[i] * r1) / d1;
  }
  let rNew = 0;
  if (newRow) {
    const cross = oldRow ? bilinear(snap, oldRow, newRow) : 0;
    const h2 = bilinear(snap, newRow, newRow) + (oldRow ? (cross * cross) / d1 : 0);
    const r2 = newRow.y - dotSparse(newRow, snap.q) + (oldRow ? (cross * r1) / d1 : 0);
    const pa2 = covTimesRow(snap, newRow);
    // F1^-1 a2 = F^-1 a2 + F^-1 a1 (a1^T F^-1 a2) / d1
    const k = r2 / (newRow.v + h2);
    for (let i = 0; i < p; i++) dq[i] += (pa2[i] + (pa1 ? (pa1[i] * cross) / d1 : 0)) * k;
    rNew = newRow.y - dotSparse(newRow, snap.q) - dotSparse(newRow, dq);
  }
  return { dq, rOld: r1, rNew };
}

/**
 * The response of the free standardisation parameters theta (alpha, beta) to a change of the
 * data, one Newton step on the profile chi-square chi2(theta) = min_q sum r_i^2 / v_i(theta):
 *   delta theta = -H^-1 delta grad,  H = sum_i h_i - 2 U^T F^-1 U,  U = sum_i a_i (d_i / v_i - r_i dv_i / v_i^2)^T,
 *   h_i = 2 d d^T / v - 2 r (d dv^T + dv d^T) / v^2 + 2 r^2 dv dv^T / v^3 - r^2 H_v / v^2,
 * with d_i = d y_i / d theta = (x1, -c) and v_i(theta) the supernova row's variance (supernovae.ts);
 * the profile Hessian is the theta block of the full Hessian with q eliminated (2F for q).
 * Built once per fit. Cost: supernova rows x k m plus p^2 m.
 */
interface StandardisationResponse {
  free: ('alpha' | 'beta')[];
  /** Inverse of the profile Hessian (m x m). */
  hInv: number[][];
  /** U (p x m), flat row-major. */
  u: Float64Array;
  /** g^T J_a for each free theta_a (J = d q / d theta of the fit). */
  gJ: number[];
}

function lightCurveDerivatives(sn: SupernovaLightCurve, alpha: number, beta: number, free: ('alpha' | 'beta')[]) {
  const d = free.map((n) => (n === 'alpha' ? sn.x1 : -sn.c));
  const dvAll = correctedMagnitudeVarianceGradient(sn, alpha, beta);
  const dv = free.map((n) => (n === 'alpha' ? dvAll[0] : dvAll[1]));
  const second = (x: 'alpha' | 'beta', y: 'alpha' | 'beta') => (x !== y ? -2 * sn.covX1C : x === 'alpha' ? 2 * sn.x1Err ** 2 : 2 * sn.cErr ** 2);
  const hv = free.map((x) => free.map((y) => second(x, y)));
  return { d, dv, hv };
}

/** Gradient of r^2 / v with respect to theta for one supernova row. */
function rowThetaGradient(sn: SupernovaLightCurve, r: number, v: number, snap: FitSnapshot, free: ('alpha' | 'beta')[]): number[] {
  const { d, dv } = lightCurveDerivatives(sn, snap.state.alpha, snap.state.beta, free);
  return d.map((da, a) => (2 * r * da) / v - (r * r * dv[a]) / (v * v));
}

function standardisationResponse(snap: FitSnapshot, release: Release, g: ArrayLike<number>): StandardisationResponse | null {
  const free = snap.standardisation.names.filter((n): n is 'alpha' | 'beta' => n === 'alpha' || n === 'beta');
  const m = free.length;
  if (m === 0) return null;
  const p = snap.paramNames.length;
  const cal = indexById('sn_calibrators', tableRows(release, 'sn_calibrators'));
  const flow = indexById('sn_hubble_flow', tableRows(release, 'sn_hubble_flow'));
  const h = Array.from({ length: m }, () => new Array<number>(m).fill(0));
  const u = new Float64Array(p * m);
  for (const block of snap.blocks) {
    if (block.table !== 'sn_calibrators' && block.table !== 'sn_hubble_flow') continue;
    const rows = block.table === 'sn_calibrators' ? cal : flow;
    block.ids.forEach((id, i) => {
      const sn = rows.get(id) as unknown as SupernovaLightCurve | undefined;
      if (!sn) return;
      const v = block.v![i];
      const row = block.rows[i];
      let r = block.y[i];
      for (let k = 0; k < row.idx.length; k++) r -= row.coef[k] * snap.q[row.idx[k]];
      const { d, dv, hv } = lightCurveDerivatives(sn, snap.state.alpha, snap.state.beta, free);
      for (let a = 0; a < m; a++) {
        for (let b = 0; b < m; b++) {
          h[a][b] +=
            (2 * d[a] * d[b]) / v -
            (2 * r * (d[a] * dv[b] + dv[a] * d[b])) / (v * v) +
            (2 * r * r * dv[a] * dv[b]) / (v * v * v) -
            (r * r * hv[a][b]) / (v * v);
        }
        const w = d[a] / v - (r * dv[a]) / (v * v);
        for (let k = 0; k < row.idx.length; k++) u[row.idx[k] * m + a] += row.coef[k] * w;
      }
    });
  }
  // H -= 2 U^T F^-1 U
  for (let a = 0; a < m; a++) {
    const fu = new Float64Array(p);
    for (let i = 0; i < p; i++) {
      let t = 0;
      for (let j = 0; j < p; j++) t += snap.covGls[i * p + j] * u[j * m + a];
      fu[i] = t;
    }
    for (let b = 0; b < m; b++) {
      let t = 0;
      for (let i = 0; i < p; i++) t += u[i * m + b] * fu[i];
      h[a][b] -= 2 * t;
    }
  }
  const hInv = invertSmall(h);
  if (!hInv) return null;
  const jac = snap.standardisation.jacobian;
  const gJ = free.map((n) => {
    const row = jac[snap.standardisation.names.indexOf(n)];
    let t = 0;
    for (let i = 0; i < p; i++) t += g[i] * row[i];
    return t;
  });
  return { free, hInv, u, gJ };
}

function invertSmall(a: number[][]): number[][] | null {
  if (a.length === 1) return a[0][0] > 0 ? [[1 / a[0][0]]] : null;
  const det = a[0][0] * a[1][1] - a[0][1] * a[1][0];
  if (!(det > 0) || !(a[0][0] > 0)) return null;
  return [
    [a[1][1] / det, -a[0][1] / det],
    [-a[1][0] / det, a[0][0] / det],
  ];
}

/**
 * Change of log10 H0 when a row is swapped: the GLS response at fixed theta plus the response
 * of alpha and beta (one Newton step) carried to q through the fit's d q / d theta.
 */
function swapEffect(
  snap: FitSnapshot,
  g: ArrayLike<number>,
  std: StandardisationResponse | null,
  oldRow: FitRow | null,
  newRow: FitRow | null,
  oldSn: SupernovaLightCurve | null,
  newSn: SupernovaLightCurve | null,
): number | null {
  const swap = swapResponse(snap, oldRow, newRow);
  if (!swap) return null;
  let delta = 0;
  for (let i = 0; i < swap.dq.length; i++) delta += g[i] * swap.dq[i];
  if (std) {
    const m = std.free.length;
    const grad = new Array<number>(m).fill(0);
    // the residuals of every row move with q: -2 U^T dq
    for (let a = 0; a < m; a++) {
      let t = 0;
      for (let i = 0; i < swap.dq.length; i++) t += std.u[i * m + a] * swap.dq[i];
      grad[a] -= 2 * t;
    }
    if (newRow && newSn) rowThetaGradient(newSn, swap.rNew, newRow.v, snap, std.free).forEach((x, a) => (grad[a] += x));
    if (oldRow && oldSn) rowThetaGradient(oldSn, swap.rOld, oldRow.v, snap, std.free).forEach((x, a) => (grad[a] -= x));
    for (let a = 0; a < m; a++) {
      let dTheta = 0;
      for (let b = 0; b < m; b++) dTheta -= std.hInv[a][b] * grad[b];
      delta += std.gJ[a] * dTheta;
    }
  }
  return delta;
}

export interface RowEstimate {
  table: TableName;
  id: string;
  /** Change of log10 H0 on this side when the row is swapped to the other side's version. */
  dLog10: number;
  kind: 'linear' | 'anchor';
}

/** Influence weights of log10 H0 on the prior moduli, by system id. */
function priorWeights(snap: FitSnapshot, side: PreparedSide, z: ArrayLike<number>): Map<string, number> {
  const out = new Map<string, number>();
  snap.blocks.forEach((block, b) => {
    if (block.diagonal || block.table !== 'priors') return;
    const xz = block.rows.map((r) => {
      let t = 0;
      for (let k = 0; k < r.idx.length; k++) t += r.coef[k] * z[r.idx[k]];
      return t;
    });
    const l = side.chol[b];
    if (!l) return;
    const w = choleskySolve(l, xz);
    block.ids.forEach((id, i) => out.set(id, w[i]));
  });
  return out;
}

/** What one side's estimates share: its fit, the gradient of log10 H0, and lazily built indexes. */
interface SideEstimator {
  snap: FitSnapshot;
  otherSnap: FitSnapshot;
  g: ArrayLike<number>;
  std: StandardisationResponse | null;
  /** Kind of each system of this side's release. */
  kindSelf: Map<string, string>;
  fieldSystems: Set<string>;
  /** This side's parallax rows of a system, in file order. */
  parallaxOf: (system: string) => ParallaxRow[];
  /** d log10 H0 / d mu of an anchor, through the prior moduli (and the main-sequence targets it calibrates). */
  anchorDerivative: (system: string) => number;
  /** An anchor's parallax modulus from these rows, null when they do not give one. */
  anchorMu: (system: string, rows: ParallaxRow[]) => number | null;
}

function sideEstimator(side: PreparedSide, self: Release, otherSnap: FitSnapshot, g: ArrayLike<number>): SideEstimator {
  const snap = side.snap;
  const z = covTimes(snap, g);
  let parallaxBySystem: Map<string, ParallaxRow[]> | null = null;
  const parallaxOf = (system: string): ParallaxRow[] => {
    if (!parallaxBySystem) {
      parallaxBySystem = new Map();
      for (const r of self.parallax) {
        const list = parallaxBySystem.get(r.system) ?? [];
        list.push(r);
        parallaxBySystem.set(r.system, list);
      }
    }
    return parallaxBySystem.get(system) ?? [];
  };
  let wPrior: Map<string, number> | null = null;
  const anchorDerivative = (system: string): number => {
    wPrior ??= priorWeights(snap, side, z);
    let d = wPrior.get(system) ?? 0;
    const col = snap.msJacobian.anchors.indexOf(system);
    if (col >= 0) snap.msJacobian.targets.forEach((t, i) => (d += (wPrior!.get(t) ?? 0) * snap.msJacobian.g[i][col]));
    return d;
  };
  const anchorMu = (system: string, rows: ParallaxRow[]): number | null => {
    try {
      const a = snap.analysis;
      return fitAnchorParallax(system, rows, a.parallax_zero_point, a.parallax_zero_point_err, a.parallax_floor).result.mu;
    } catch (e) {
      if (e instanceof AnalysisError) return null;
      throw e;
    }
  };
  return {
    snap,
    otherSnap,
    g,
    std: standardisationResponse(snap, self, g),
    kindSelf: new Map(self.systems.map((s) => [s.system, s.kind])),
    fieldSystems: new Set(self.systems.filter((s) => s.kind === 'field').map((s) => s.system)),
    parallaxOf,
    anchorDerivative,
    anchorMu,
  };
}

/**
 * A row of a fit table (Cepheids, supernovae) swapped in the fit: its old version out, the
 * other side's in when that side's fit uses it. Undefined when the new version cannot be built
 * here (no estimate), null when the swap has no linear response.
 */
function fitRowEffect(e: SideEstimator, fitTable: RowTable, id: string, mine: AnyRow | undefined, theirs: AnyRow | undefined): number | null | undefined {
  const oldRow = mine ? rowInFit(e.snap, fitTable, id) : null;
  const newRow = theirs && usedInFit(e.otherSnap, fitTable, id) ? buildFitRow(e.snap, e.fieldSystems, fitTable, theirs) : null;
  if (theirs && usedInFit(e.otherSnap, fitTable, id) && !newRow) return undefined; // cannot take the new version here
  const isSn = fitTable !== 'cepheids';
  return swapEffect(
    e.snap,
    e.g,
    e.std,
    oldRow,
    newRow,
    isSn && oldRow ? (mine as unknown as SupernovaLightCurve) : null,
    isSn && newRow ? (theirs as unknown as SupernovaLightCurve) : null,
  );
}

/** A field star's parallax: the star enters the fit with its own parallax (only Cepheids do). */
function fieldStarEffect(e: SideEstimator, system: string, id: string, pm: ParallaxRow | undefined, pt: ParallaxRow | undefined): number | null {
  const oldRow = pm && pm.system === system ? rowInFit(e.snap, 'field_parallax', id) : null;
  const newRow =
    pt && pt.system === system && usedInFit(e.otherSnap, 'field_parallax', id)
      ? buildFitRow(e.snap, e.fieldSystems, 'field_parallax', pt as unknown as AnyRow)
      : null;
  if (pt && pt.system === system && usedInFit(e.otherSnap, 'field_parallax', id) && !newRow) return null;
  return swapEffect(e.snap, e.g, e.std, oldRow, newRow, null, null);
}

/** A geometric anchor's parallax: its modulus recomputed with the row swapped, through the anchor's derivative. */
function anchorEffect(e: SideEstimator, system: string, id: string, pt: ParallaxRow | undefined): number | null {
  const rows = e.parallaxOf(system);
  const swapped = rows.filter((r) => r.star !== id);
  if (pt && pt.system === system) {
    const at = rows.findIndex((r) => r.star === id);
    if (at >= 0) swapped.splice(at, 0, pt);
    else swapped.push(pt);
  }
  const before = e.anchorMu(system, rows);
  const after = e.anchorMu(system, swapped);
  if (before === null || after === null) return null;
  return e.anchorDerivative(system) * (after - before);
}

/** A parallax row: summed over the systems it belongs to on either side; null when any cannot be estimated. */
function parallaxRowEffect(
  e: SideEstimator,
  id: string,
  pm: ParallaxRow | undefined,
  pt: ParallaxRow | undefined,
): { dLog10: number; kind: RowEstimate['kind'] } | null {
  const systems = new Set([pm?.system, pt?.system].filter((s): s is string => s !== undefined));
  let total = 0;
  let kind: RowEstimate['kind'] = 'linear';
  for (const s of systems) {
    const k = e.kindSelf.get(s);
    if (k === undefined) return null;
    if (k !== 'field') kind = 'anchor';
    const d = k === 'field' ? fieldStarEffect(e, s, id, pm, pt) : anchorEffect(e, s, id, pt);
    if (d === null) return null;
    total += d;
  }
  return { dLog10: total, kind };
}

/**
 * One side's estimates for the changed rows of the fit tables and the parallax table.
 * `self` is this side's release, `other` the other side's; `otherSnap` tells which rows the
 * other side's fit uses. Rows the side cannot estimate are left out.
 */
export function sideRowEstimates(
  side: PreparedSide,
  self: Release,
  other: Release,
  otherSnap: FitSnapshot,
  changed: { table: TableName; id: string }[],
): RowEstimate[] {
  const g = log10H0Gradient(side.snap);
  if (!g) return [];
  const e = sideEstimator(side, self, otherSnap, g);
  const out: RowEstimate[] = [];
  const selfIndex = new Map<TableName, Map<string, AnyRow>>();
  const otherIndex = new Map<TableName, Map<string, AnyRow>>();
  const idx = (m: Map<TableName, Map<string, AnyRow>>, r: Release, t: TableName) => {
    let x = m.get(t);
    if (!x) {
      x = indexById(t, tableRows(r, t));
      m.set(t, x);
    }
    return x;
  };
  for (const { table, id } of changed) {
    const mine = idx(selfIndex, self, table).get(id);
    const theirs = idx(otherIndex, other, table).get(id);
    const fitTable = FIT_TABLE[table];
    if (fitTable) {
      const d = fitRowEffect(e, fitTable, id, mine, theirs);
      if (d !== null && d !== undefined) out.push({ table, id, dLog10: d, kind: 'linear' });
      continue;
    }
    if (table !== 'parallax') continue;
    const p = parallaxRowEffect(e, id, mine as unknown as ParallaxRow | undefined, theirs as unknown as ParallaxRow | undefined);
    if (p) out.push({ table, id, dLog10: p.dLog10, kind: p.kind });
  }
  return out;
}

/** The row id key used to match estimates of the two sides. */
export function estimateKey(table: TableName, id: string): string {
  return `${table}:${id}`;
}
