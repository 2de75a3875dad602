/**
 * What the comparison needs of one release's baseline fit, in a form that crosses a worker
 * boundary (plain arrays, no functions): the final GLS problem (design rows, data, covariance
 * of every block, keyed by table and row id), the covariance of the linear parameters at fixed
 * alpha, beta and scatters (F^-1), the alpha/beta part (Jacobian and covariance), the state of
 * the non-linear quantities, and the anchors-to-targets Jacobian of the main-sequence rung.
 */
import type { AnalysisChoices } from '../types/analysis.ts';
import type { LadderRun } from './ladderRun.ts';
import { blockVariance, type SparseRow } from './gls.ts';
import type { RowTable } from './globalModel.ts';

export interface SnapshotBlock {
  table: RowTable;
  /** Row ids in block order (system ids for the prior block). */
  ids: string[];
  rows: SparseRow[];
  y: number[];
  diagonal: boolean;
  /** Total variance of each row (diagonal blocks). */
  v: number[] | null;
  /** Total covariance (dense block). */
  cov: number[][] | null;
}

export interface FitSnapshot {
  analysis: AnalysisChoices;
  paramNames: string[];
  q: number[];
  /** F^-1, flat p x p: covariance of q at fixed alpha, beta, scatters. */
  covGls: number[];
  /** alpha/beta part: names of the free ones, their covariance, d q / d theta. */
  standardisation: { names: string[]; cov: number[][]; jacobian: number[][] };
  state: { alpha: number; beta: number; scatterCepheid: number; scatterSupernova: number };
  /** Linearisation point of each field star, keyed "system/star". */
  fieldStarMu: Record<string, number>;
  blocks: SnapshotBlock[];
  /** Keys "table:id" of the rows rejected as outliers. */
  rejected: string[];
  /** log10 H0 of the baseline, or null when the Hubble flow is not reached. */
  log10H0: number | null;
  /** Main-sequence rung: d mu_target / d mu_anchor, rows in `targets` order, columns in `anchors` order. */
  msJacobian: { anchors: string[]; targets: string[]; g: number[][] };
}

/** The snapshot of a baseline run, or null when the run stopped before the global fit. */
export function fitSnapshot(run: LadderRun): FitSnapshot | null {
  const fit = run.fit;
  if (!fit) return null;
  const blocks: SnapshotBlock[] = fit.model.problem.blocks.map((block, b) => {
    const variance = blockVariance(block);
    return {
      table: fit.model.refs[b][0]?.table ?? 'cepheids',
      ids: fit.model.refs[b].map((r) => r.id),
      rows: block.rows.map((r) => ({ idx: [...r.idx], coef: [...r.coef] })),
      y: [...block.y],
      diagonal: block.diagonal,
      v: block.diagonal ? (variance as number[]) : null,
      cov: block.diagonal ? null : (variance as number[][]),
    };
  });
  const fieldStarMu: Record<string, number> = {};
  run.parallax.fieldStars.forEach((s, i) => {
    fieldStarMu[`${s.system}/${s.star}`] = fit.fieldStarMu[i];
  });
  return {
    analysis: run.analysis,
    paramNames: [...fit.paramNames],
    q: Array.from(fit.q),
    covGls: Array.from(fit.covGls),
    standardisation: {
      names: [...fit.standardisation.names],
      cov: fit.standardisation.cov.map((r) => [...r]),
      jacobian: fit.standardisation.jacobian.map((r) => [...r]),
    },
    state: {
      alpha: fit.alpha.value,
      beta: fit.beta.value,
      scatterCepheid: fit.scatter.cepheids,
      scatterSupernova: fit.scatter.supernovae,
    },
    fieldStarMu,
    blocks,
    rejected: fit.rejected.map((r) => `${r.ref.table}:${r.ref.id}`),
    log10H0: run.log10H0 ? run.log10H0.value : null,
    msJacobian: {
      anchors: [...run.mainSequence.anchorSystems],
      targets: run.mainSequence.targets.map((t) => t.system),
      g: run.mainSequence.targetAnchorJacobian.map((r) => [...r]),
    },
  };
}

/** Index of a parameter in the snapshot, or -1. */
export function paramIndex(s: FitSnapshot, name: string): number {
  return s.paramNames.indexOf(name);
}

/** Gradient of log10 H0 = (M_B + 5 a_B + 25) / 5 in the snapshot's parameters (null if not reached). */
export function log10H0Gradient(s: FitSnapshot): Float64Array | null {
  const iMB = paramIndex(s, 'M_B');
  const iAB = paramIndex(s, 'a_B');
  if (iMB < 0 || iAB < 0) return null;
  const g = new Float64Array(s.paramNames.length);
  g[iMB] = 0.2;
  g[iAB] = 1;
  return g;
}

/** F^-1 g (p-vector). Cost p^2. */
export function covTimes(s: FitSnapshot, g: ArrayLike<number>): Float64Array {
  const p = s.paramNames.length;
  const out = new Float64Array(p);
  for (let i = 0; i < p; i++) {
    let t = 0;
    const off = i * p;
    for (let j = 0; j < p; j++) if (g[j] !== 0) t += s.covGls[off + j] * g[j];
    out[i] = t;
  }
  return out;
}
