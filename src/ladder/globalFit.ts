/**
 * The global fit: all Cepheid systems, supernovae and the Hubble-flow intercept at once,
 * by structured GLS (gls.ts) on the model of globalModel.ts, iterating on what is not linear:
 *  - field-star parallaxes are re-linearised at the current distances (Gauss-Newton);
 *  - intrinsic scatters of the Cepheid rows and of the supernova rows are estimated by a
 *    leverage-corrected moment estimator (not REML): per group, sum E[r^2]/v = sum (1 - h) - m,
 *    h the rows' leverages, m the number of fitted non-linear parameters the group's rows
 *    determine (alpha and beta for the supernovae), so that every fitted parameter is counted
 *    in the degrees of freedom (content/methods/global-fit.md); E[r^2] = r^2 except for the
 *    Cepheids' expected blend light;
 *  - Cepheid rows carry a mixture likelihood with a one-sided blend component (cepheidMixture.ts):
 *    expectation-maximisation at each iteration's residuals (memberships, expected blend light,
 *    the blend fraction);
 *  - alpha and beta (when not fixed) minimise the chi-square with their variance terms inside
 *    it (an effective-variance estimator; freezing the weights biases beta low, content/methods/global-fit.md);
 *  - outliers beyond clip_sigma standardised residuals are rejected, iteratively, all rows
 *    above the threshold at once, until none is left (deterministic); a Cepheid's residual is
 *    taken with its expected blend light out (a blend the mixture explains is not an outlier).
 * The covariance of alpha and beta comes from a sandwich (delta-method) estimator and is
 * propagated to every parameter through the fit's Jacobian.
 */
import { AnalysisError } from '../types/issues.ts';
import { choleskyOfRows, inverseFromCholesky, NotPositiveDefiniteError } from '../math/cholesky.ts';
import {
  accumulateNormal,
  copyNormal,
  emptyNormal,
  glsStructure,
  solveNormal,
  blockLeverages,
  blockResiduals,
  cachedVariance,
  chiSquare,
  chiSquareAround,
  SingularFitError,
  solveGls,
  varianceBySource,
  type CovarianceAccess,
  type GlsSolution,
  type GlsStructure,
} from './gls.ts';
import {
  buildModel,
  fieldStarParam,
  ParameterIndex,
  rowKey,
  prepareModel,
  type BuiltModel,
  type PreparedModel,
  type FitState,
  type GlobalFitInput,
  type RowRef,
} from './globalModel.ts';
import { correctedMagnitudeVarianceGradient, TYPICAL_ALPHA, TYPICAL_BETA } from './supernovae.ts';
import { distanceModulusFromParallaxMas } from './distance.ts';
import { MIXTURE, mixtureAtResiduals } from './cepheidMixture.ts';

/** Convergence and safety limits of the iteration (numerical choices, no physical meaning). */
const LIMITS = {
  maxInner: 300,
  maxClipRounds: 20,
  /** Never reject more than this fraction of a table's rows. */
  maxRejectedFraction: 0.2,
  // far below the statistical errors (alpha ~0.01, beta ~0.1, scatter ~0.005 mag, mu ~0.01 mag)
  tolAlpha: 1e-6,
  tolBeta: 1e-5,
  tolScatterSq: 1e-8,
  tolMu: 1e-7,
  /** Largest change of a Cepheid's core membership between iterations at convergence. */
  tolMembership: 1e-6,
  /** Largest step (mag) of a field star's linearisation point per iteration. */
  maxMuStep: 1.0,
  /** Finite-difference steps for alpha and beta. */
  hAlpha: 1e-3,
  hBeta: 1e-2,
};

/** Start value of the intrinsic scatters (mag); the fit estimates them (common practice, no source). */
const START_SCATTER = { cepheid: 0.08, supernova: 0.1 };

export interface RowResidual {
  ref: RowRef;
  residual: number;
  /** Total variance of the row (measurement, scatter, redshift terms), before any mixture weight. */
  variance: number;
  standardised: number;
  rejected: boolean;
  /** Core membership of the mixture likelihood (Cepheids, cepheidMixture.ts); 1 for other rows. */
  membership: number;
  /** Expected blend light E[z u] taken out of the row (mag) and its variance; 0 for other rows. */
  blendShift: number;
  blendShiftVariance: number;
}

export interface GlobalFitResult {
  paramNames: string[];
  /** Best-fit values, in paramNames order. */
  q: Float64Array;
  /** Covariance of q including the propagated uncertainty of alpha and beta (flat p x p). */
  cov: Float64Array;
  /** Covariance of q at fixed alpha, beta (the GLS part). */
  covGls: Float64Array;
  alpha: { value: number; err: number; fixed: boolean };
  beta: { value: number; err: number; fixed: boolean };
  /** Covariance of the free ones of (alpha, beta) and d q / d(alpha, beta). */
  standardisation: { names: ('alpha' | 'beta')[]; cov: number[][]; jacobian: number[][] };
  scatter: { cepheids: number; supernovae: number };
  /** Standard errors of the scatters: the spread of the moment estimator (scatterStandardError). */
  scatterErr: { cepheids: number; supernovae: number };
  /** Fitted fraction of blended Cepheids (of the rows in galaxies); null without such rows. */
  blend: { fraction: number } | null;
  chi2: number;
  dof: number;
  nData: number;
  converged: boolean;
  iterations: number;
  residuals: RowResidual[];
  /** Rows rejected as outliers (in the order they were rejected). */
  rejected: RowResidual[];
  /** Cepheid rows kept but down-weighted by the mixture (membership below MIXTURE.reportBelow), by membership. */
  downweighted: RowResidual[];
  /** Variance of g^T q split by source, including 'sn_standardisation' and 'intrinsic_scatters'. */
  budget(g: ArrayLike<number>): Map<string, number>;
  /**
   * Variance of g^T q from the uncertainty of the fitted intrinsic scatters (d q / d s err(s),
   * both scatters, in quadrature). Not part of cov; added to H0's variance (calibrate.ts).
   */
  scatterVariance(g: ArrayLike<number>): number;
  /** Linearisation points of the field stars at convergence. */
  fieldStarMu: Float64Array;
  model: BuiltModel;
}

function initialFieldMu(input: GlobalFitInput): Float64Array {
  return Float64Array.from(input.fieldStars, (s) => distanceModulusFromParallaxMas(Math.max(s.parallaxCorrMas, 3 * s.parallaxErrMas)));
}

function solveOrExplain(model: BuiltModel, st?: GlsStructure): GlsSolution {
  try {
    return solveGls(model.problem, st ?? glsStructure(model.problem));
  } catch (e) {
    if (e instanceof SingularFitError) {
      throw new AnalysisError(
        `The global fit cannot determine ${describeParam(e.parameter)}.`,
        'Check that every rung has data linking it to a geometric anchor (Cepheids in an anchored system, ' +
          'Cepheids in the supernova hosts, Hubble-flow supernovae inside the redshift range).',
      );
    }
    throw e;
  }
}

function describeParam(name: string): string {
  if (name.startsWith('mu:')) return `the distance of "${name.slice(3)}"`;
  const known: Record<string, string> = {
    M_W: 'the Cepheid zero point M_W (no Cepheid system has a geometric or main-sequence distance)',
    b_W: 'the period-luminosity slope b_W (the Cepheid periods do not span a range)',
    Z_W: 'the metallicity term Z_W (all Cepheids share one [O/H]; set fit_pl_metallicity: false)',
    M_B: 'the supernova absolute magnitude M_B (no calibrator host has a Cepheid distance)',
    a_B: 'the Hubble-flow intercept a_B',
    zeta: 'the parallax zero point',
  };
  return known[name] ?? `the parameter ${name}`;
}

/**
 * Profile chi-square in (alpha, beta), everything else held. Only the supernova rows depend
 * on alpha and beta, so the normal equations of the other rows are accumulated once and each
 * evaluation adds the supernova rows and solves by block elimination. The chi-square is not
 * taken as c - b^T q: that difference cancels about five digits (c ~ sum m^2/v), and the Newton
 * step in (alpha, beta) takes second differences of this function, which would carry that
 * rounding into alpha, beta and their errors. The supernova rows' part is summed from their
 * residuals; the other rows' part, exactly quadratic in q, is expanded about the solution at
 * the current (alpha, beta) with its value and gradient summed from residuals (chiSquareAround).
 */
function profileChi2Function(
  prep: PreparedModel,
  state: FitState,
  st: GlsStructure,
  part: 'total' | 'supernovae' = 'total',
): (alpha: number, beta: number) => number {
  const staticProblem = buildModel(prep, state, 'static').problem;
  const fixedPart = accumulateNormal(emptyNormal(st), staticProblem.blocks);
  const solveAt = (alpha: number, beta: number) => {
    const snProblem = buildModel(prep, { ...state, alpha, beta }, 'supernovae').problem;
    const { q } = solveNormal(accumulateNormal(copyNormal(fixedPart), snProblem.blocks), prep.params.names);
    return { q, snProblem };
  };
  let staticChi2: ((q: ArrayLike<number>) => number) | null = null;
  return (alpha, beta) => {
    try {
      const { q, snProblem } = solveAt(alpha, beta);
      if (part === 'supernovae') return chiSquare(snProblem, q);
      staticChi2 ??= chiSquareAround(staticProblem, fixedPart, solveAt(state.alpha, state.beta).q);
      return staticChi2(q) + chiSquare(snProblem, q);
    } catch (e) {
      if (e instanceof SingularFitError) return solveOrExplain(buildModel(prep, state), st).chi2;
      throw e;
    }
  };
}

/** Gradient and Hessian of f at x by central differences (2-D or 1-D via mask). */
function numericalDerivatives(
  f: (a: number, b: number) => number,
  a: number,
  b: number,
  free: [boolean, boolean],
): { g: [number, number]; h: [[number, number], [number, number]]; f0: number } {
  const ha = LIMITS.hAlpha;
  const hb = LIMITS.hBeta;
  const f0 = f(a, b);
  const g: [number, number] = [0, 0];
  const h: [[number, number], [number, number]] = [
    [1, 0],
    [0, 1],
  ];
  if (free[0]) {
    const fp = f(a + ha, b);
    const fm = f(a - ha, b);
    g[0] = (fp - fm) / (2 * ha);
    h[0][0] = (fp - 2 * f0 + fm) / ha ** 2;
  }
  if (free[1]) {
    const fp = f(a, b + hb);
    const fm = f(a, b - hb);
    g[1] = (fp - fm) / (2 * hb);
    h[1][1] = (fp - 2 * f0 + fm) / hb ** 2;
  }
  if (free[0] && free[1]) {
    const fpp = f(a + ha, b + hb);
    const fpm = f(a + ha, b - hb);
    const fmp = f(a - ha, b + hb);
    const fmm = f(a - ha, b - hb);
    h[0][1] = h[1][0] = (fpp - fpm - fmp + fmm) / (4 * ha * hb);
  }
  return { g, h, f0 };
}

/** One damped Newton step on the profile chi-square in (alpha, beta). */
function standardisationStep(prep: PreparedModel, state: FitState, free: [boolean, boolean], st: GlsStructure) {
  const f = profileChi2Function(prep, state, st);
  const { g, h, f0 } = numericalDerivatives(f, state.alpha, state.beta, free);
  const det = h[0][0] * h[1][1] - h[0][1] * h[1][0];
  let da: number;
  let db: number;
  if (h[0][0] > 0 && h[1][1] > 0 && det > 0) {
    da = -(h[1][1] * g[0] - h[0][1] * g[1]) / det;
    db = -(-h[1][0] * g[0] + h[0][0] * g[1]) / det;
  } else {
    // not convex here: a small gradient step
    da = (-0.01 * g[0]) / Math.max(1, Math.abs(g[0]));
    db = (-0.1 * g[1]) / Math.max(1, Math.abs(g[1]));
  }
  if (!free[0]) da = 0;
  if (!free[1]) db = 0;
  // backtracking: never accept a step that raises the objective
  let t = 1;
  for (let k = 0; k < 20; k++) {
    if (f(state.alpha + t * da, state.beta + t * db) <= f0 + 1e-12) break;
    t /= 2;
    if (k === 19) t = 0;
  }
  return { alpha: state.alpha + t * da, beta: state.beta + t * db, hessian: h };
}

/** Sums over one group's rows for the scatter equation. */
interface GroupStats {
  /** sum E[r^2] / v */
  sumChi2: number;
  /** sum (1 - h) */
  sumOneMinusH: number;
  /** sum (1 - h) / v */
  sumOneMinusHOverV: number;
  n: number;
  /** Fitted non-linear parameters determined by this group's rows (alpha, beta for the supernovae). */
  extraParams: number;
}

function emptyStats(extraParams: number): GroupStats {
  return { sumChi2: 0, sumOneMinusH: 0, sumOneMinusHOverV: 0, n: 0, extraParams };
}

/** Newton update of an intrinsic scatter from sum E[r^2]/v = sum (1 - h) - m. */
function updatedScatter(s: number, st: GroupStats): number {
  const target = st.sumOneMinusH - st.extraParams;
  if (st.n === 0 || target <= 0) return s;
  // d(sum r^2/v)/d(s^2) ~ -sum (1 - h)/v, since E[r^2] = (1 - h) v
  const s2 = s * s + (st.sumChi2 - target) / st.sumOneMinusHOverV;
  return Math.sqrt(Math.max(0, s2));
}

/**
 * Standard error of a scatter from the moment estimator's own spread. With T = sum r^2/v,
 * Var(T) = 2 tr((D C)^2) for Gaussian residuals (C their covariance, D = diag(1/v)), which for a
 * group that alone determines its parameters is 2 (sum (1 - h) - m); dT/d(s^2) = -sum (1 - h)/v.
 * So Var(s^2) = 2 (sum (1 - h) - m) / (sum (1 - h)/v)^2 and err(s) = err(s^2) / (2 s).
 * The Fisher information of s^2 (sum 1/(2 v^2)), used before, is the spread of the maximum-likelihood
 * estimator: it counts no fitted parameter and weights the rows by 1/v^2 where this estimator
 * weights them by 1/v, so it understated this estimator's error (content/methods/global-fit.md).
 * With blended Cepheids this error is about 10 % small for the Cepheid scatter (recovery over
 * 1000 seeds: pull SD 1.10; 400 seeds without blends: 1.06). Scaling Var(T) by the residuals'
 * own fourth moment (a sandwich of the scatter equation) was tried and made it worse (SD 1.16),
 * so it was not kept; the recovery test names this as a known failure.
 * At s = 0 the delta method fails; the error of s^2 is then given as sqrt(err(s^2)).
 */
export function scatterStandardError(s: number, st: GroupStats): number {
  const dof = st.sumOneMinusH - st.extraParams;
  if (st.n === 0 || dof <= 0 || st.sumOneMinusHOverV <= 0) return 0;
  const errS2 = Math.sqrt((2 * dof) / st.sumOneMinusHOverV ** 2);
  return s > 0 ? errS2 / (2 * s) : Math.sqrt(errS2);
}

/** The scatter equation's sums over the diagonal blocks of a solved model. */
function groupStats(model: BuiltModel, sol: GlsSolution, state: FitState, snExtraParams: number): Record<'cep' | 'sn', GroupStats> {
  const cov = sol.factor.blocks();
  const stats: Record<'cep' | 'sn', GroupStats> = { cep: emptyStats(0), sn: emptyStats(snExtraParams) };
  model.problem.blocks.forEach((block, b) => {
    if (!block.diagonal) return;
    const group = groupOf(model.refs[b][0]?.table ?? '');
    if (!group) return;
    // Cepheid rows: r is already W + E[z u] - model; E[(r - z u)^2] adds Var(z u) (cepheidMixture.ts)
    const r = blockResiduals(block, sol.q);
    const v = cachedVariance(block) as number[];
    const h = blockLeverages(block, cov);
    const gs = stats[group];
    const blendVar = group === 'cep' ? state.cepheidBlend?.shiftVariance : undefined;
    for (let i = 0; i < r.length; i++) {
      const extra = blendVar ? blendVar[model.refs[b][i]!.index]! : 0;
      gs.sumChi2 += (r[i] * r[i] + extra) / v[i];
      gs.sumOneMinusH += 1 - h[i];
      gs.sumOneMinusHOverV += (1 - h[i]) / v[i];
      gs.n++;
    }
  });
  return stats;
}

/** Residuals W - model (no blend light taken out) and variances of the blendable Cepheid rows not rejected, at q. */
function cepheidResiduals(prep: PreparedModel, state: FitState, q: ArrayLike<number>): { index: number[]; r: Float64Array; v: Float64Array } {
  const blendable = prep.input.blendSystems;
  const rows = prep.cepheid.filter((c) => !state.rejected.has(c.key) && blendable?.has(prep.input.cepheids[c.index]!.system));
  const s2 = state.scatterCepheid ** 2;
  const r = new Float64Array(rows.length);
  const v = new Float64Array(rows.length);
  rows.forEach((c, i) => {
    let m = 0;
    for (let k = 0; k < c.row.idx.length; k++) m += c.row.coef[k]! * q[c.row.idx[k]!]!;
    r[i] = c.w - m;
    v[i] = c.wErr2 + s2;
  });
  return { index: rows.map((c) => c.index), r, v };
}

function groupOf(table: string): 'cep' | 'sn' | null {
  if (table === 'cepheids') return 'cep';
  if (table === 'sn_calibrators' || table === 'sn_hubble_flow') return 'sn';
  return null;
}

function residualsOf(model: BuiltModel, sol: GlsSolution, state: FitState, rejected: ReadonlySet<string> = state.rejected): RowResidual[] {
  const out: RowResidual[] = [];
  model.problem.blocks.forEach((block, b) => {
    const r = blockResiduals(block, sol.q);
    const v = cachedVariance(block);
    const diag = block.diagonal ? (v as number[]) : (v as number[][]).map((row, i) => row[i]);
    const blend = model.refs[b][0]?.table === 'cepheids' ? state.cepheidBlend : undefined;
    model.refs[b].forEach((ref, i) => {
      // a Cepheid's published residual is W - model, with its expected blend light left in
      const shift = blend ? blend.shift[ref.index]! : 0;
      const residual = r[i] - shift;
      out.push({
        ref,
        residual,
        variance: diag[i],
        standardised: residual / Math.sqrt(diag[i]),
        rejected: rejected.has(rowKey(ref.table, ref.id)),
        membership: blend ? blend.membership[ref.index]! : 1,
        blendShift: shift,
        blendShiftVariance: blend ? blend.shiftVariance[ref.index]! : 0,
      });
    });
  });
  return out;
}

export interface GlobalFitOptions {
  /**
   * false: treat every parameter as global, i.e. factor the whole p x p normal matrix (cost p^3
   * per solve). Only for tests that check the block elimination against it; default true.
   */
  eliminate?: boolean;
}

/** The start of the iteration: alpha, beta at their fixed or typical values, start scatters, no row rejected. */
function initialState(input: GlobalFitInput, hasSn: boolean): FitState {
  const { analysis } = input;
  return {
    alpha: analysis.sn_alpha ?? TYPICAL_ALPHA,
    beta: analysis.sn_beta ?? TYPICAL_BETA,
    scatterCepheid: input.cepheids.length ? START_SCATTER.cepheid : 0,
    scatterSupernova: hasSn ? START_SCATTER.supernova : 0,
    linearisedMu: initialFieldMu(input),
    rejected: new Set<string>(),
    cepheidBlend: input.cepheids.some((c) => input.blendSystems?.has(c.system))
      ? {
          membership: new Float64Array(input.cepheids.length).fill(1),
          shift: new Float64Array(input.cepheids.length),
          shiftVariance: new Float64Array(input.cepheids.length),
        }
      : undefined,
  };
}

/**
 * The Cepheid mixture's expectation step at the current residuals (cepheidMixture.ts): new
 * memberships and expected blend light, the blend fraction, and the largest change of either.
 */
function blendStep(
  prep: PreparedModel,
  state: FitState,
  scatterCepheid: number,
  q: ArrayLike<number>,
  blendFraction: number,
): { cepheidBlend: FitState['cepheidBlend']; blendFraction: number; dMembership: number } {
  let cepheidBlend = state.cepheidBlend;
  let dMembership = 0;
  if (!cepheidBlend) return { cepheidBlend, blendFraction, dMembership };
  const cr = cepheidResiduals(prep, { ...state, scatterCepheid }, q);
  const em = mixtureAtResiduals(cr.r, cr.v, blendFraction);
  const old = cepheidBlend;
  cepheidBlend = { membership: Float64Array.from(old.membership), shift: Float64Array.from(old.shift), shiftVariance: Float64Array.from(old.shiftVariance) };
  cr.index.forEach((ci, k) => {
    dMembership = Math.max(dMembership, Math.abs(em.membership[k]! - old.membership[ci]!), Math.abs(em.shift[k]! - old.shift[ci]!));
    cepheidBlend!.membership[ci] = em.membership[k]!;
    cepheidBlend!.shift[ci] = em.shift[k]!;
    cepheidBlend!.shiftVariance[ci] = em.shiftVariance[k]!;
  });
  return { cepheidBlend, blendFraction: em.fraction, dMembership };
}

/** What stays fixed through the iteration of one fit. */
interface FitSetup {
  input: GlobalFitInput;
  params: ParameterIndex;
  prep: PreparedModel;
  /** Whether alpha and beta are fitted. */
  free: [boolean, boolean];
  /** Degrees of freedom alpha and beta take from the supernova group. */
  snExtraParams: number;
}

/**
 * One iteration at fixed rejected rows: GLS solve, then what is not linear (field-star
 * linearisation, scatters, Cepheid mixture, alpha and beta), and whether all of it has settled.
 */
function iterationStep(
  setup: FitSetup,
  state: FitState,
  blendFraction: number,
): { next: FitState; done: boolean; blendFraction: number; hessian: [[number, number], [number, number]] | null } {
  const { input, params, prep, free, snExtraParams } = setup;
  const model = buildModel(prep, state);
  // the structure depends only on which rows are in the fit: once per clipping round
  const st = glsStructure(model.problem);
  const sol = solveOrExplain(model, st);
  // 1. re-linearise the field stars at the fitted distances
  const lin = Float64Array.from(input.fieldStars, (s, i) => {
    const mu = sol.q[params.get(fieldStarParam(s.system, s.star))!];
    const mu0 = state.linearisedMu[i];
    return mu0 + Math.max(-LIMITS.maxMuStep, Math.min(LIMITS.maxMuStep, mu - mu0));
  });
  // 2. intrinsic scatters from the moment equation, per group
  const stats = groupStats(model, sol, state, snExtraParams);
  const scatterCepheid = updatedScatter(state.scatterCepheid, stats.cep);
  const scatterSupernova = updatedScatter(state.scatterSupernova, stats.sn);
  // 2b. Cepheid mixture: EM at the current residuals (cepheidMixture.ts)
  const blend = blendStep(prep, state, scatterCepheid, sol.q, blendFraction);
  let next: FitState = { ...state, linearisedMu: lin, scatterCepheid, scatterSupernova, cepheidBlend: blend.cepheidBlend };
  // 3. alpha, beta
  let hessian: [[number, number], [number, number]] | null = null;
  if (free[0] || free[1]) {
    const step = standardisationStep(prep, next, free, st);
    hessian = step.hessian;
    next = { ...next, alpha: step.alpha, beta: step.beta };
  }
  const dMu = lin.reduce((m, x, i) => Math.max(m, Math.abs(x - state.linearisedMu[i])), 0);
  const done =
    Math.abs(next.alpha - state.alpha) < LIMITS.tolAlpha &&
    Math.abs(next.beta - state.beta) < LIMITS.tolBeta &&
    Math.abs(next.scatterCepheid ** 2 - state.scatterCepheid ** 2) < LIMITS.tolScatterSq &&
    Math.abs(next.scatterSupernova ** 2 - state.scatterSupernova ** 2) < LIMITS.tolScatterSq &&
    blend.dMembership < LIMITS.tolMembership &&
    dMu < LIMITS.tolMu;
  return { next, done, blendFraction: blend.blendFraction, hessian };
}

/**
 * Outlier rejection on the data rows (Cepheids and supernovae): every row beyond the threshold
 * at once, most deviant first, never more than LIMITS.maxRejectedFraction of a table.
 */
function newlyRejectedRows(setup: FitSetup, state: FitState, clip: number): string[] {
  const { input, prep } = setup;
  const tableCounts = {
    cepheids: input.cepheids.length,
    sn_calibrators: input.calibrators.length,
    sn_hubble_flow: input.hubbleFlow.length,
  };
  const model = buildModel(prep, state);
  const sol = solveOrExplain(model);
  const res = residualsOf(model, sol, state);
  // Cepheids that may be blended: judged with their expected blend light taken out (the mixture's)
  const beyond = (r: RowResidual) => Math.abs((r.residual + r.blendShift) / Math.sqrt(r.variance)) > clip;
  const candidates = res
    .filter((r) => groupOf(r.ref.table) && beyond(r))
    .sort((a, b) => Math.abs(b.standardised) - Math.abs(a.standardised) || a.ref.line - b.ref.line);
  const newlyRejected: string[] = [];
  const count: Record<string, number> = {};
  for (const key of state.rejected) {
    const t = key.slice(0, key.indexOf(':'));
    count[t] = (count[t] ?? 0) + 1;
  }
  for (const c of candidates) {
    const t = c.ref.table as keyof typeof tableCounts;
    if ((count[t] ?? 0) + 1 > LIMITS.maxRejectedFraction * tableCounts[t]) continue;
    count[t] = (count[t] ?? 0) + 1;
    newlyRejected.push(rowKey(c.ref.table, c.ref.id));
  }
  return newlyRejected;
}

/** Where the iteration ended: the state, the rows rejected in order, and how it got there. */
interface IterationOutcome {
  state: FitState;
  blendFraction: number;
  rejectedOrder: string[];
  converged: boolean;
  iterations: number;
  /** Hessian of the profile chi-square in (alpha, beta) at the last step (identity when both are fixed). */
  lastHessian: [[number, number], [number, number]];
}

/** Iterate to convergence, reject outliers, and again, until no row is left to reject. */
function iterateWithClipping(setup: FitSetup, start: FitState): IterationOutcome {
  const clipSigma = setup.input.analysis.clip_sigma;
  let state = start;
  let blendFraction: number = MIXTURE.startFraction;
  const rejectedOrder: string[] = [];
  let converged = false;
  let iterations = 0;
  let lastHessian: [[number, number], [number, number]] = [
    [1, 0],
    [0, 1],
  ];
  for (let round = 0; round <= LIMITS.maxClipRounds; round++) {
    converged = false;
    for (let it = 0; it < LIMITS.maxInner; it++) {
      iterations++;
      const step = iterationStep(setup, state, blendFraction);
      blendFraction = step.blendFraction;
      if (step.hessian) lastHessian = step.hessian;
      state = step.next;
      if (step.done) {
        converged = true;
        break;
      }
    }
    if (clipSigma === null) break;
    const newlyRejected = newlyRejectedRows(setup, state, clipSigma);
    if (newlyRejected.length === 0) break;
    rejectedOrder.push(...newlyRejected);
    state = { ...state, rejected: new Set([...state.rejected, ...newlyRejected]) };
  }
  return { state, blendFraction, rejectedOrder, converged, iterations, lastHessian };
}

/** Cov(q) at fixed alpha, beta plus their part propagated through d q / d theta: J^T Cov(theta) J. */
function withStandardisationCovariance(covGls: ArrayLike<number>, p: number, jacobian: number[][], covTheta: number[][]): Float64Array {
  const cov = Float64Array.from(covGls);
  for (let i = 0; i < p; i++) {
    for (let j = 0; j < p; j++) {
      let s = 0;
      for (let a = 0; a < jacobian.length; a++)
        for (let b = 0; b < jacobian.length; b++) {
          s += jacobian[a][i] * covTheta[a][b] * jacobian[b][j];
        }
      cov[i * p + j] += s;
    }
  }
  return cov;
}

/**
 * The scatters' standard errors and g -> the variance their uncertainty adds to g^T q.
 * The scatters' own uncertainty moves q through the weights (first order: d q / d s times
 * err(s), the two scatters in quadrature). It is small (0.005-0.014 % of the variance of
 * log10 H0 on the demo releases: at the fitted weights q is stationary to first order in them)
 * but it is carried: H0's statistical variance includes it (calibrate.ts) and the budget shows
 * it as a source of its own ('intrinsic_scatters'). The parameters' covariance does not.
 */
function scatterUncertainty(setup: FitSetup, state: FitState, model: BuiltModel, sol: GlsSolution): Pick<GlobalFitResult, 'scatterErr' | 'scatterVariance'> {
  const p = setup.params.size;
  const finalStats = groupStats(model, sol, state, setup.snExtraParams);
  const scatterErr = {
    cepheids: scatterStandardError(state.scatterCepheid, finalStats.cep),
    supernovae: scatterStandardError(state.scatterSupernova, finalStats.sn),
  };
  // computed here (four solves) so that the result keeps no reference to the prepared model
  const scatterTerms = (
    [
      ['scatterCepheid', scatterErr.cepheids],
      ['scatterSupernova', scatterErr.supernovae],
    ] as const
  )
    .filter(([, e]) => e > 0)
    .map(([which, e]) => ({ err: e, jacobian: scatterJacobian(setup.prep, state, which, e) }));
  const scatterVariance = (g: ArrayLike<number>): number => {
    let sc = 0;
    for (const t of scatterTerms) {
      let gj = 0;
      for (let i = 0; i < p; i++) gj += g[i] * t.jacobian[i];
      sc += (gj * t.err) ** 2;
    }
    return sc;
  };
  return { scatterErr, scatterVariance };
}

/** g -> variance of g^T q by source, with the alpha/beta part as 'sn_standardisation'. */
function budgetFunction(model: BuiltModel, sol: GlsSolution, p: number, names: readonly string[], jacobian: number[][], covTheta: number[][]) {
  return (g: ArrayLike<number>) => {
    const parts = varianceBySource(model.problem, sol.factor, g);
    let s = 0;
    for (let a = 0; a < names.length; a++) {
      let ga = 0;
      for (let i = 0; i < p; i++) ga += g[i] * jacobian[a][i];
      for (let b = 0; b < names.length; b++) {
        let gb = 0;
        for (let i = 0; i < p; i++) gb += g[i] * jacobian[b][i];
        s += ga * covTheta[a][b] * gb;
      }
    }
    if (names.length) parts.set('sn_standardisation', s);
    return parts;
  };
}

/** The budget with the intrinsic scatters' estimation uncertainty as a source of its own (when not zero). */
function withScatterUncertainty(budget: (g: ArrayLike<number>) => Map<string, number>, scatterVariance: (g: ArrayLike<number>) => number) {
  return (g: ArrayLike<number>) => {
    const parts = budget(g);
    const sc = scatterVariance(g);
    if (sc > 0) parts.set('intrinsic_scatters', sc);
    return parts;
  };
}

export function fitGlobal(input: GlobalFitInput, options: GlobalFitOptions = {}): GlobalFitResult {
  const params = new ParameterIndex(input);
  const prepared = prepareModel(input, params);
  const prep = options.eliminate === false ? { ...prepared, globals: params.names.map((_, i) => i) } : prepared;
  const p = params.size;
  const { analysis } = input;
  const hasSn = input.calibrators.length + input.hubbleFlow.length > 0;
  const free: [boolean, boolean] = [hasSn && analysis.sn_alpha === null, hasSn && analysis.sn_beta === null];
  // alpha and beta are fitted from the supernova rows: they take degrees of freedom from that group
  const snExtraParams = (free[0] ? 1 : 0) + (free[1] ? 1 : 0);
  const setup: FitSetup = { input, params, prep, free, snExtraParams };
  const { state, blendFraction, rejectedOrder, converged, iterations, lastHessian } = iterateWithClipping(setup, initialState(input, hasSn));

  // final solution and covariances
  const model = buildModel(prep, state);
  const sol = solveOrExplain(model);
  // the published covariance of the parameters (the only inverse formed, at the end)
  const covGls = sol.factor.covariance();
  const names: ('alpha' | 'beta')[] = [];
  if (free[0]) names.push('alpha');
  if (free[1]) names.push('beta');
  const jacobian = names.map((name) => standardisationJacobian(prep, state, name));
  const covTheta = names.length ? sandwichCovariance(input, params, prep, state, model, sol, sol.factor.blocks(), free, lastHessian) : [];
  const cov = withStandardisationCovariance(covGls, p, jacobian, covTheta);
  const { scatterErr, scatterVariance } = scatterUncertainty(setup, state, model, sol);
  const thetaErr = (name: 'alpha' | 'beta') => {
    const k = names.indexOf(name);
    return k < 0 ? 0 : Math.sqrt(covTheta[k][k]);
  };
  const residuals = residualsOf(model, sol, state);
  // rejected rows are not in the model: compute their residuals against the final solution
  const rejectedRows = rejectedResiduals(prep, state, sol, rejectedOrder);
  const downweighted = residuals
    .filter((r) => r.ref.table === 'cepheids' && r.membership < MIXTURE.reportBelow)
    .sort((a, b) => a.membership - b.membership || a.ref.line - b.ref.line);
  const nData = model.problem.blocks.reduce((s, b) => s + b.rows.length, 0);
  const nScatter = (input.cepheids.length ? 1 : 0) + (hasSn ? 1 : 0);
  return {
    paramNames: params.names,
    q: sol.q,
    cov,
    covGls,
    alpha: { value: state.alpha, err: thetaErr('alpha'), fixed: !free[0] },
    beta: { value: state.beta, err: thetaErr('beta'), fixed: !free[1] },
    standardisation: { names, cov: covTheta, jacobian },
    scatter: { cepheids: state.scatterCepheid, supernovae: state.scatterSupernova },
    scatterErr,
    blend: state.cepheidBlend ? { fraction: blendFraction } : null,
    chi2: sol.chi2,
    dof: nData - p - names.length - nScatter,
    nData,
    converged,
    iterations,
    residuals,
    rejected: rejectedRows,
    downweighted,
    fieldStarMu: state.linearisedMu,
    model,
    budget: withScatterUncertainty(budgetFunction(model, sol, p, names, jacobian, covTheta), scatterVariance),
    scatterVariance,
  };
}

/**
 * d q / d s for one intrinsic scatter, by central differences of half its standard error either
 * side (everything else held: alpha, beta, linearisation, rejected rows, blend light).
 */
function scatterJacobian(prep: PreparedModel, state: FitState, which: 'scatterCepheid' | 'scatterSupernova', err: number): number[] {
  const h = 0.5 * err;
  const at = (d: number) => solveOrExplain(buildModel(prep, { ...state, [which]: Math.max(0, state[which] + d) })).q;
  const lo = Math.max(0, state[which] - h);
  const qp = at(h);
  const qm = at(lo - state[which]);
  const step = state[which] + h - lo;
  return Array.from(qp, (x, i) => (x - qm[i]) / step);
}

/** d q / d theta by central differences at fixed scatters and linearisation. */
function standardisationJacobian(prep: PreparedModel, state: FitState, name: 'alpha' | 'beta'): number[] {
  const h = name === 'alpha' ? LIMITS.hAlpha : LIMITS.hBeta;
  const at = (d: number) => solveOrExplain(buildModel(prep, name === 'alpha' ? { ...state, alpha: state.alpha + d } : { ...state, beta: state.beta + d })).q;
  const qp = at(h);
  const qm = at(-h);
  return Array.from(qp, (x, i) => (x - qm[i]) / (2 * h));
}

/** One row of a diagonal block as the sandwich sees it: residual, variance, leverage, d r / d theta, d v / d theta. */
interface SandwichRow {
  sn: boolean;
  x: { idx: number[]; coef: number[] };
  r: number;
  v: number;
  h: number;
  dr: number[];
  dv: number[];
}

/** The per-row quantities of the diagonal blocks (derivatives in the free parameters `which` only). */
function sandwichRows(
  input: GlobalFitInput,
  state: FitState,
  model: BuiltModel,
  sol: GlsSolution,
  fInv: CovarianceAccess,
  which: readonly (0 | 1)[],
): SandwichRow[] {
  const rows: SandwichRow[] = [];
  model.problem.blocks.forEach((block, b) => {
    if (!block.diagonal) return; // prior rows carry no alpha/beta; their q-scores are small and omitted
    const r = blockResiduals(block, sol.q);
    const v = cachedVariance(block) as number[];
    const h = blockLeverages(block, fInv);
    model.refs[b].forEach((ref, i) => {
      let dr = [0, 0];
      let dv = [0, 0];
      if (ref.table === 'sn_calibrators' || ref.table === 'sn_hubble_flow') {
        const sn = ref.table === 'sn_calibrators' ? input.calibrators[ref.index] : input.hubbleFlow[ref.index].row;
        dr = [sn.x1, -sn.c];
        dv = correctedMagnitudeVarianceGradient(sn, state.alpha, state.beta);
      }
      const sn = ref.table === 'sn_calibrators' || ref.table === 'sn_hubble_flow';
      rows.push({ sn, x: block.rows[i], r: r[i], v: v[i], h: h[i], dr: which.map((k) => dr[k]), dv: which.map((k) => dv[k]) });
    });
  });
  return rows;
}

/**
 * The meat of the sandwich, B = sum of the outer products of the rows' efficient scores (the
 * scatter equation's row term last when coupled), and sum (1 - h)/v of the supernova rows.
 */
function scoreOuterProducts(
  rows: readonly SandwichRow[],
  sol: GlsSolution,
  p: number,
  m: number,
  coupled: boolean,
): { bMat: number[][]; sumOneMinusHOverV: number } {
  // A_theta,q = sum_i d psi_theta,i / d q
  const aTq = Array.from({ length: m }, () => new Float64Array(p));
  for (const t of rows) {
    for (let a = 0; a < m; a++) {
      if (t.dr[a] === 0 && t.dv[a] === 0) continue;
      for (let s = 0; s < t.x.idx.length; s++) {
        aTq[a][t.x.idx[s]] += t.x.coef[s] * (-t.dr[a] / t.v + (t.r * t.dv[a]) / (t.v * t.v));
      }
    }
  }
  // G = A_theta,q F^-1 (m x p), by solves with the factor (F is symmetric)
  const gMat = aTq.map((row) => sol.factor.solve(row));
  const mm = coupled ? m + 1 : m;
  const bMat = Array.from({ length: mm }, () => new Array<number>(mm).fill(0));
  let sumOneMinusHOverV = 0;
  for (const t of rows) {
    const inflate = 1 / Math.sqrt(Math.max(1e-6, 1 - t.h));
    const r = t.r * inflate;
    const s = new Array<number>(mm).fill(0);
    for (let a = 0; a < m; a++) {
      const psiTheta = (r * t.dr[a]) / t.v - (r * r * t.dv[a]) / (2 * t.v * t.v);
      let proj = 0;
      for (let k = 0; k < t.x.idx.length; k++) proj += (gMat[a][t.x.idx[k]] * (-r * t.x.coef[k])) / t.v;
      s[a] = psiTheta - proj;
    }
    if (coupled && t.sn) {
      // the row's term of the scatter equation, sum r^2/v - sum (1 - h) (its mean is 0)
      s[m] = (t.r * t.r) / t.v - (1 - t.h);
      sumOneMinusHOverV += (1 - t.h) / t.v;
    }
    for (let a = 0; a < mm; a++) for (let b = 0; b < mm; b++) bMat[a][b] += s[a] * s[b];
  }
  return { bMat, sumOneMinusHOverV };
}

/**
 * The bread A of the sandwich with the supernova scatter s2 = sigma_int_sn^2 as a third
 * estimating function (the derivatives by central differences):
 *   A_theta,s2 = d psi_theta / d s2 = (1/2) d^2 chi2 / d theta d s2,
 *   A_s2,theta = d psi_s / d theta = d chi2_sn / d theta at the profile q,   A_s2,s2 = -sum (1 - h)/v.
 * Without them the error of beta came out 15-20 % small (its estimate moves with the fitted scatter).
 */
function breadWithScatter(
  prep: PreparedModel,
  state: FitState,
  model: BuiltModel,
  free: [boolean, boolean],
  which: readonly (0 | 1)[],
  aMat: number[][],
  sumOneMinusHOverV: number,
): number[][] {
  const m = which.length;
  const mm = m + 1;
  const st = glsStructure(model.problem);
  const s2 = state.scatterSupernova ** 2;
  const hS2 = 0.05 * s2;
  const gradAt = (ds2: number) =>
    numericalDerivatives(profileChi2Function(prep, { ...state, scatterSupernova: Math.sqrt(s2 + ds2) }, st), state.alpha, state.beta, free).g;
  const gp = gradAt(hS2);
  const gm = gradAt(-hS2);
  const snChi2 = profileChi2Function(prep, state, st, 'supernovae');
  const steps = [LIMITS.hAlpha, LIMITS.hBeta];
  const full: number[][] = Array.from({ length: mm }, () => new Array<number>(mm).fill(0));
  which.forEach((i, a) => {
    which.forEach((_, b) => (full[a][b] = aMat[a][b]));
    full[a][m] = (gp[i] - gm[i]) / 2 / (2 * hS2);
    const h = steps[i];
    full[m][a] =
      i === 0
        ? (snChi2(state.alpha + h, state.beta) - snChi2(state.alpha - h, state.beta)) / (2 * h)
        : (snChi2(state.alpha, state.beta + h) - snChi2(state.alpha, state.beta - h)) / (2 * h);
  });
  full[m][m] = -sumOneMinusHOverV;
  return full;
}

/**
 * Sandwich covariance of (alpha, beta): A^-1 B A^-1 with A = half the Hessian of the profile
 * chi-square and B = sum over rows of the outer products of each row's efficient score
 * (its score in theta minus the part explained by the linear parameters),
 *   s_i = psi_theta,i - A_theta,q F^-1 psi_q,i,
 * with residuals inflated by 1/sqrt(1 - h_i) (leverage correction). Without the row-wise B the
 * curvature alone understates the errors, because x1 and c are measured with noise.
 * The supernova scatter is estimated with alpha and beta: its equation is a third estimating
 * function (row terms r^2/v - (1 - h)), and A gains its cross derivatives, so that beta's error
 * includes how beta moves with the fitted scatter (measured: beta's pulls had an SD of 1.06
 * over 400 simulated releases without this, 1.00 with it; content/methods/global-fit.md).
 */
function sandwichCovariance(
  input: GlobalFitInput,
  params: ParameterIndex,
  prep: PreparedModel,
  state: FitState,
  model: BuiltModel,
  sol: GlsSolution,
  fInv: CovarianceAccess,
  free: [boolean, boolean],
  hessian: [[number, number], [number, number]],
): number[][] {
  const p = params.size;
  const which = ([0, 1] as const).filter((k) => free[k]);
  const m = which.length;
  // the supernova scatter is estimated jointly with alpha and beta (its equation is the third
  // estimating function): with it zero there is nothing to couple
  const coupled = state.scatterSupernova > 0;
  const rows = sandwichRows(input, state, model, sol, fInv, which);
  const { bMat, sumOneMinusHOverV } = scoreOuterProducts(rows, sol, p, m, coupled);
  // A = half the profile Hessian, restricted to the free parameters
  const aMat = which.map((i) => which.map((j) => hessian[i][j] / 2));
  if (!coupled) {
    const aInv = invertSmall(aMat);
    const tmp = aInv.map((row) => bMat[0].map((_, j) => row.reduce((s, x, k) => s + x * bMat[k][j], 0)));
    return tmp.map((row) => aInv[0].map((_, j) => row.reduce((s, x, k) => s + x * aInv[k][j], 0)));
  }
  invertSmall(aMat); // refuses, with its message, when alpha and beta are not determined
  const aInv = invertGeneral(breadWithScatter(prep, state, model, free, which, aMat, sumOneMinusHOverV));
  const tmp = aInv.map((row) => bMat[0].map((_, j) => row.reduce((s, x, k) => s + x * bMat[k][j], 0)));
  const cov = tmp.map((row) => aInv.map((col) => row.reduce((s, x, k) => s + x * col[k], 0)));
  return cov.slice(0, m).map((row) => row.slice(0, m));
}

/** Inverse of a small non-symmetric matrix by Gauss-Jordan elimination with partial pivoting. */
function invertGeneral(a: number[][]): number[][] {
  const n = a.length;
  const w = a.map((row, i) => [...row, ...Array.from({ length: n }, (_, j) => (i === j ? 1 : 0))]);
  for (let c = 0; c < n; c++) {
    let piv = c;
    for (let r = c + 1; r < n; r++) if (Math.abs(w[r][c]) > Math.abs(w[piv][c])) piv = r;
    if (w[piv][c] === 0) {
      throw new AnalysisError(
        'The global fit cannot determine the supernova standardisation (alpha, beta) together with the supernova scatter.',
        'Check that the supernovae span a range of x1 and c, or fix sn_alpha and sn_beta in the analysis choices.',
      );
    }
    [w[c], w[piv]] = [w[piv], w[c]];
    const d = w[c][c];
    for (let k = 0; k < 2 * n; k++) w[c][k] /= d;
    for (let r = 0; r < n; r++) {
      if (r === c) continue;
      const f = w[r][c];
      if (f !== 0) for (let k = 0; k < 2 * n; k++) w[r][k] -= f * w[c][k];
    }
  }
  return w.map((row) => row.slice(n));
}

/**
 * A^-1 for the half Hessian of the profile chi-square in the free ones of (alpha, beta),
 * through the numerical core. A is positive definite at a minimum; when it is not, the data
 * do not determine alpha and beta (the chi-square is flat or curved downwards there).
 */
function invertSmall(a: number[][]): number[][] {
  const m = a.length;
  let l: Float64Array;
  try {
    l = choleskyOfRows(a);
  } catch (e) {
    if (!(e instanceof NotPositiveDefiniteError)) throw e;
    throw new AnalysisError(
      'The global fit cannot determine the supernova standardisation (alpha, beta): the chi-square has no minimum in them.',
      'Check that the supernovae span a range of x1 and c, or fix sn_alpha and sn_beta in the analysis choices.',
    );
  }
  const inv = inverseFromCholesky(l, m);
  return Array.from({ length: m }, (_, i) => Array.from(inv.subarray(i * m, (i + 1) * m)));
}

function rejectedResiduals(prep: PreparedModel, state: FitState, sol: GlsSolution, order: string[]): RowResidual[] {
  if (order.length === 0) return [];
  // rebuild the model with nothing rejected to get the rows, then keep the rejected ones
  const full = buildModel(prep, { ...state, rejected: new Set() });
  const all = residualsOf(full, sol, state);
  const byKey = new Map(all.map((r) => [rowKey(r.ref.table, r.ref.id), r]));
  return order.map((k) => byKey.get(k)!).filter(Boolean);
}
