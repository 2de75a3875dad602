/**
 * The linear model of the global fit: which parameters exist and which rows the data give,
 * for fixed values of the non-linear quantities (alpha, beta, intrinsic scatters, and the
 * point about which field-star parallaxes are linearised). globalFit.ts iterates on those.
 *
 * Parameters: one distance modulus per system (and per field Cepheid with its own parallax),
 * then zeta (parallax zero-point offset), M_W, b_W, Z_W, M_B, a_B. Systems come first so that a
 * degenerate relation parameter is the one named when the normal matrix is singular.
 *
 * Rows (each with its covariance source for the error budget):
 *  - distance priors (dense block): mu_prior_i = mu_i - K_i zeta             [anchors, main_sequence]
 *  - zero point prior: 0 = zeta, variance sigma_Z^2                           [parallax_zero_point]
 *  - field star, in parallax space, linearised at mu0:
 *      parallax_corr = p(mu0) + p'(mu0)(mu - mu0) + zeta, p(mu) = 10^(-0.2 (mu - 10))   [anchors]
 *  - Cepheid: W + E[z u] = mu + M_W + b_W (log P - pivot) + Z_W [O/H]       [cepheids]
 *    (E[z u]: expected blend light of the row, from the mixture likelihood, cepheidMixture.ts)
 *  - calibrator: m_B + alpha x1 - beta c = mu_host + M_B                      [sn_calibrators]
 *  - Hubble flow: m_B + alpha x1 - beta c - 5 log10(c z f) = -5 a_B           [hubble_flow]
 */
import type { AnalysisChoices } from '../types/analysis.ts';
import type { CepheidRow, SnCalibratorRow, SupernovaLightCurve } from '../types/release.ts';
import type { DistancePriorBlock, FieldStarAnchor } from './types.ts';
import type { GlsProblem, RowBlock, SparseRow } from './gls.ts';
import type { HubbleFlowSupernova } from './hubbleFlow.ts';
import { wesenheitMagnitude } from './cepheids.ts';
import { correctedMagnitude, correctedMagnitudeVariance } from './supernovae.ts';
import { parallaxMasFromModulus } from './distance.ts';
import { massStepIndicator, massStepProblem } from './massStep.ts';

export interface GlobalFitInput {
  analysis: AnalysisChoices;
  priors: DistancePriorBlock;
  fieldStars: FieldStarAnchor[];
  /** sigma_Z of the parallax zero point (mas); 0 when no parallax enters. */
  zeroPointErrMas: number;
  cepheids: CepheidRow[];
  /** Systems of kind `field`: their Cepheids each get their own distance. */
  fieldSystems: ReadonlySet<string>;
  /**
   * Systems whose Cepheids may be blended (kind `galaxy`: crowded fields at extragalactic
   * distances); their rows get the mixture likelihood of cepheidMixture.ts. Cepheids of clusters
   * and field Cepheids are resolved and keep the Gaussian likelihood. Absent: none.
   */
  blendSystems?: ReadonlySet<string>;
  calibrators: SnCalibratorRow[];
  hubbleFlow: HubbleFlowSupernova[];
  /** Whether the host-mass step is a parameter; when absent, decided from the supernovae (massStep.ts). */
  massStep?: boolean;
}

export interface FitState {
  alpha: number;
  beta: number;
  /** Intrinsic scatter of Cepheid W rows and of supernova rows (mag). */
  scatterCepheid: number;
  scatterSupernova: number;
  /** Linearisation point (distance modulus) of each field star, in fieldStars order. */
  linearisedMu: Float64Array;
  /** Keys "<table>:<id>" of rows rejected as outliers. */
  rejected: ReadonlySet<string>;
  /**
   * The Cepheid mixture likelihood's current E-step (cepheidMixture.ts), by index into
   * input.cepheids: each row's core membership, and the expected blend light E[z u] (mag) that
   * the model takes out of its W, with its variance. Absent: no row is a blend.
   */
  cepheidBlend?: { membership: Float64Array; shift: Float64Array; shiftVariance: Float64Array };
}

export type RowTable = 'priors' | 'zero_point' | 'field_parallax' | 'cepheids' | 'sn_calibrators' | 'sn_hubble_flow';

export interface RowRef {
  table: RowTable;
  id: string;
  system: string | null;
  line: number;
  /** Index into the input array of its table. */
  index: number;
}

export interface BuiltModel {
  problem: GlsProblem;
  /** refs[b][i] describes row i of block b. */
  refs: RowRef[][];
}

export const PARAM = {
  zeta: 'zeta',
  MW: 'M_W',
  bW: 'b_W',
  ZW: 'Z_W',
  MB: 'M_B',
  aB: 'a_B',
  dM: 'delta_M_host',
} as const;

export function systemParam(system: string): string {
  return `mu:${system}`;
}

export function fieldStarParam(system: string, star: string): string {
  return `mu:${system}/${star}`;
}

export function rowKey(table: RowTable, id: string): string {
  return `${table}:${id}`;
}

/** The parameter set of a fit: fixed for all values of the non-linear quantities. */
export class ParameterIndex {
  readonly names: string[] = [];
  private readonly index = new Map<string, number>();

  constructor(input: GlobalFitInput) {
    const fieldStarIds = new Set(input.fieldStars.map((s) => `${s.system}/${s.star}`));
    const add = (name: string) => {
      if (!this.index.has(name)) {
        this.index.set(name, this.names.length);
        this.names.push(name);
      }
    };
    for (const s of input.priors.systems) add(systemParam(s));
    for (const s of input.fieldStars) add(fieldStarParam(s.system, s.star));
    for (const c of input.cepheids) {
      if (input.fieldSystems.has(c.system)) {
        if (fieldStarIds.has(`${c.system}/${c.star}`)) add(fieldStarParam(c.system, c.star));
      } else add(systemParam(c.system));
    }
    for (const sn of input.calibrators) add(systemParam(sn.system));
    const needsZeta = input.zeroPointErrMas > 0 && (input.fieldStars.length > 0 || input.priors.zpLoading.some((k) => k !== 0));
    if (needsZeta) add(PARAM.zeta);
    if (input.cepheids.length > 0) {
      add(PARAM.MW);
      add(PARAM.bW);
      if (input.analysis.fit_pl_metallicity) add(PARAM.ZW);
    }
    if (input.calibrators.length > 0) add(PARAM.MB);
    if (input.hubbleFlow.length > 0) add(PARAM.aB);
    if (input.massStep ?? massStepProblem(input.analysis, [...input.calibrators, ...input.hubbleFlow.map((h) => h.row)]) === null) add(PARAM.dM);
  }

  get(name: string): number | undefined {
    return this.index.get(name);
  }

  /**
   * The global parameters (zeta and the relations' coefficients): every parameter that is not
   * one object's distance. The GLS eliminates the distances object by object around them.
   */
  get globals(): number[] {
    const out: number[] = [];
    this.names.forEach((name, i) => {
      if (!name.startsWith('mu:')) out.push(i);
    });
    return out;
  }

  has(name: string): boolean {
    return this.index.has(name);
  }

  get size(): number {
    return this.names.length;
  }
}

/** d parallax / d mu = -0.2 ln 10 * parallax(mu). */
function parallaxSlope(mu: number): number {
  return -0.2 * Math.LN10 * parallaxMasFromModulus(mu);
}

/**
 * What does not change while the fit iterates, computed once: design rows of the Cepheids,
 * the parameter indices of each supernova, the Hubble-flow expansion terms.
 */
export interface PreparedModel {
  input: GlobalFitInput;
  params: ParameterIndex;
  zeta: number | undefined;
  priorRows: SparseRow[];
  fieldParam: number[];
  /** params.globals, computed once. */
  globals: number[];
  cepheid: { index: number; key: string; row: SparseRow; w: number; wErr2: number }[];
  calibrator: { index: number; key: string; row: SparseRow }[];
  hubble: { index: number; key: string; row: SparseRow }[];
}

export function prepareModel(input: GlobalFitInput, params: ParameterIndex): PreparedModel {
  const zeta = params.get(PARAM.zeta);
  const { analysis } = input;
  const priorRows = input.priors.systems.map((s, i): SparseRow => {
    const mu = params.get(systemParam(s))!;
    const k = input.priors.zpLoading[i];
    return zeta !== undefined && k !== 0 ? { idx: [mu, zeta], coef: [1, -k] } : { idx: [mu], coef: [1] };
  });
  const fieldParam = input.fieldStars.map((s) => params.get(fieldStarParam(s.system, s.star))!);
  const cepheid: PreparedModel['cepheid'] = [];
  if (input.cepheids.length > 0) {
    const mW = params.get(PARAM.MW)!;
    const bW = params.get(PARAM.bW)!;
    const zW = params.get(PARAM.ZW);
    input.cepheids.forEach((c, index) => {
      const name = input.fieldSystems.has(c.system) ? fieldStarParam(c.system, c.star) : systemParam(c.system);
      const mu = params.get(name);
      if (mu === undefined) return; // a field Cepheid without its own parallax: no distance to tie it to
      const wm = wesenheitMagnitude(c, analysis.wesenheit_r);
      const row: SparseRow = { idx: [mu, mW, bW], coef: [1, 1, wm.logPeriod - analysis.pl_pivot_logp] };
      if (zW !== undefined) {
        row.idx.push(zW);
        row.coef.push(c.oh);
      }
      cepheid.push({ index, key: rowKey('cepheids', c.star), row, w: wm.w, wErr2: wm.wErr ** 2 });
    });
  }
  const mB = params.get(PARAM.MB);
  // host-mass step (massStep.ts): one more term on the high-mass side
  const dM = params.get(PARAM.dM);
  const step = (sn: SupernovaLightCurve, row: SparseRow): SparseRow =>
    dM !== undefined && massStepIndicator(sn, analysis.sn_mass_step_logmass!) === 1 ? { idx: [...row.idx, dM], coef: [...row.coef, 1] } : row;
  const calibrator = input.calibrators.map((sn, index) => ({
    index,
    key: rowKey('sn_calibrators', sn.sn),
    row: step(sn, { idx: [params.get(systemParam(sn.system))!, mB!], coef: [1, 1] }),
  }));
  const aB = params.get(PARAM.aB);
  const hubble = input.hubbleFlow.map((h, index) => ({
    index,
    key: rowKey('sn_hubble_flow', h.row.sn),
    row: step(h.row, { idx: [aB!], coef: [-5] }),
  }));
  return { input, params, zeta, priorRows, fieldParam, globals: params.globals, cepheid, calibrator, hubble };
}

/**
 * The rows left after outlier rejection, their design rows and references: they change only when
 * the rejected set does, while the model is rebuilt for every (alpha, beta) the fit tries, so
 * they are kept per rejected set (by identity; the fit makes a new set when it rejects more).
 */
interface KeptRows {
  cepheid: PreparedModel['cepheid'];
  cepheidRows: SparseRow[];
  cepheidW: number[];
  cepheidRefs: RowRef[];
  calibrator: PreparedModel['calibrator'];
  hubble: PreparedModel['hubble'];
  hubbleRows: SparseRow[];
  hubbleRefs: RowRef[];
}

const keptCache = new WeakMap<PreparedModel, WeakMap<ReadonlySet<string>, KeptRows>>();

function keptRows(prep: PreparedModel, rejected: ReadonlySet<string>): KeptRows {
  let byPrep = keptCache.get(prep);
  if (!byPrep) keptCache.set(prep, (byPrep = new WeakMap()));
  let k = byPrep.get(rejected);
  if (k) return k;
  const { input } = prep;
  const cepheid = prep.cepheid.filter((c) => !rejected.has(c.key));
  const hubble = prep.hubble.filter((c) => !rejected.has(c.key));
  k = {
    cepheid,
    cepheidRows: cepheid.map((c) => c.row),
    cepheidW: cepheid.map((c) => c.w),
    cepheidRefs: cepheid.map((c) => {
      const row = input.cepheids[c.index];
      return { table: 'cepheids', id: row.star, system: row.system, line: row.line, index: c.index };
    }),
    calibrator: prep.calibrator.filter((c) => !rejected.has(c.key)),
    hubble,
    hubbleRows: hubble.map((c) => c.row),
    hubbleRefs: hubble.map((c) => {
      const h = input.hubbleFlow[c.index].row;
      return { table: 'sn_hubble_flow', id: h.sn, system: null, line: h.line, index: c.index };
    }),
  };
  byPrep.set(rejected, k);
  return k;
}

/** Which rows to build: all, only the supernova rows (they depend on alpha, beta), or the rest. */
export type ModelPart = 'all' | 'supernovae' | 'static';

/** One block of the GLS problem with the rows it stands for. */
interface ModelBlock {
  block: RowBlock;
  refs: RowRef[];
}

/** Distance priors of anchors and main-sequence targets (one dense block). */
function priorBlock(prep: PreparedModel): ModelBlock | null {
  const { input } = prep;
  if (input.priors.systems.length === 0) return null;
  return {
    block: {
      rows: prep.priorRows,
      y: input.priors.mu,
      components: input.priors.parts.map((p) => ({ source: p.source, dense: p.cov })),
      diagonal: false,
    },
    refs: input.priors.systems.map((s, i) => ({ table: 'priors', id: s, system: s, line: 0, index: i })),
  };
}

/** The parallax zero point's prior, zeta ~ N(0, err^2). */
function zeroPointBlock(prep: PreparedModel): ModelBlock | null {
  const { input, zeta } = prep;
  if (zeta === undefined) return null;
  return {
    block: {
      rows: [{ idx: [zeta], coef: [1] }],
      y: [0],
      components: [{ source: 'parallax_zero_point', diagonal: [input.zeroPointErrMas ** 2] }],
      diagonal: true,
    },
    refs: [{ table: 'zero_point', id: 'zero_point', system: null, line: 0, index: 0 }],
  };
}

/** Field-star parallaxes, linear in mu about each star's current linearisation point. */
function fieldParallaxBlock(prep: PreparedModel, state: FitState): ModelBlock | null {
  const { input, zeta } = prep;
  if (input.fieldStars.length === 0) return null;
  const rows: SparseRow[] = [];
  const y: number[] = [];
  const v: number[] = [];
  const r: RowRef[] = [];
  input.fieldStars.forEach((s, i) => {
    const mu0 = state.linearisedMu[i];
    const slope = parallaxSlope(mu0);
    const idx = [prep.fieldParam[i]];
    const coef = [slope];
    if (zeta !== undefined) {
      idx.push(zeta);
      coef.push(1);
    }
    rows.push({ idx, coef });
    y.push(s.parallaxCorrMas - parallaxMasFromModulus(mu0) + slope * mu0);
    v.push(s.parallaxErrMas ** 2);
    r.push({ table: 'field_parallax', id: s.star, system: s.system, line: s.line, index: i });
  });
  return { block: { rows, y, components: [{ source: 'anchors', diagonal: v }], diagonal: true }, refs: r };
}

/** The Cepheids' Wesenheit magnitudes not rejected, with the intrinsic scatter in their variances. */
function cepheidBlock(state: FitState, kept: KeptRows): ModelBlock | null {
  const s2c = state.scatterCepheid ** 2;
  const cep = kept.cepheid;
  if (cep.length === 0) return null;
  return {
    block: {
      rows: kept.cepheidRows,
      // W with the expected blend light taken out (W + E[z u]: a blend is brighter by u)
      y: state.cepheidBlend ? cep.map((c) => c.w + state.cepheidBlend!.shift[c.index]!) : kept.cepheidW,
      components: [{ source: 'cepheids', diagonal: cep.map((c) => c.wErr2 + s2c) }],
      diagonal: true,
    },
    refs: kept.cepheidRefs,
  };
}

/** The calibrators' standardised magnitudes at the current alpha, beta and scatter. */
function calibratorBlock(input: GlobalFitInput, state: FitState, kept: KeptRows): ModelBlock | null {
  const s2s = state.scatterSupernova ** 2;
  const cal = kept.calibrator;
  if (cal.length === 0) return null;
  return {
    block: {
      rows: cal.map((c) => c.row),
      y: cal.map((c) => correctedMagnitude(input.calibrators[c.index], state.alpha, state.beta)),
      components: [
        {
          source: 'sn_calibrators',
          diagonal: cal.map((c) => correctedMagnitudeVariance(input.calibrators[c.index], state.alpha, state.beta) + s2s),
        },
      ],
      diagonal: true,
    },
    refs: cal.map((c) => {
      const sn = input.calibrators[c.index];
      return { table: 'sn_calibrators', id: sn.sn, system: sn.system, line: sn.line, index: c.index };
    }),
  };
}

/** The Hubble-flow supernovae: standardised magnitude minus 5 log10(cz f(z)), with the redshift's variance. */
function hubbleFlowBlock(input: GlobalFitInput, state: FitState, kept: KeptRows): ModelBlock | null {
  const s2s = state.scatterSupernova ** 2;
  const hub = kept.hubble;
  if (hub.length === 0) return null;
  return {
    block: {
      rows: kept.hubbleRows,
      y: hub.map((c) => {
        const h = input.hubbleFlow[c.index];
        return correctedMagnitude(h.row, state.alpha, state.beta) - 5 * h.logCzf;
      }),
      components: [
        {
          source: 'hubble_flow',
          diagonal: hub.map((c) => {
            const h = input.hubbleFlow[c.index];
            return correctedMagnitudeVariance(h.row, state.alpha, state.beta) + s2s + h.redshiftVariance;
          }),
        },
      ],
      diagonal: true,
    },
    refs: kept.hubbleRefs,
  };
}

/** Build the GLS problem for the given state. Pure: the inputs are not modified. */
export function buildModel(prep: PreparedModel, state: FitState, part: ModelPart = 'all'): BuiltModel {
  const { input, params } = prep;
  const withStatic = part !== 'supernovae';
  const withSupernovae = part !== 'static';
  const kept = keptRows(prep, state.rejected);
  // the blocks in their fixed order: priors, zero point, field stars, Cepheids, calibrators, Hubble flow
  const parts = [
    withStatic ? priorBlock(prep) : null,
    withStatic ? zeroPointBlock(prep) : null,
    withStatic ? fieldParallaxBlock(prep, state) : null,
    withStatic ? cepheidBlock(state, kept) : null,
    withSupernovae ? calibratorBlock(input, state, kept) : null,
    withSupernovae ? hubbleFlowBlock(input, state, kept) : null,
  ].filter((b): b is ModelBlock => b !== null);
  const blocks: RowBlock[] = parts.map((b) => b.block);
  const refs: RowRef[][] = parts.map((b) => b.refs);
  return { problem: { nParams: params.size, paramNames: params.names, blocks, globals: prep.globals }, refs };
}
