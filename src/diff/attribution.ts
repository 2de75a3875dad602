/**
 * What moved H0: the shift split among the input groups that differ, as Shapley values over
 * the hybrid releases (every subset of those groups taken from release b), so that the
 * contributions add up exactly to the total and depend on no order of swapping.
 */
import type { Results } from '../types/results.ts';
import type { DiffJobResult } from './jobs.ts';
import { maskOf } from './hybrid.ts';
import { shapleyValues } from './shapley.ts';
import { GROUP_NAMES, type Attribution, type AttributionEntry, type GroupName } from './types.ts';

export const ATTRIBUTION_METHOD =
  'Shapley values over the input groups that differ (the tables and the analysis block of release.yaml): ' +
  'H0 is recalibrated (baseline, no variants) for release a with every subset of those groups taken from release b, ' +
  'and each group gets its change averaged over all orders of swapping, so the contributions add up exactly to the total and do not depend on any order. ' +
  "Hybrid releases take each table whole from one side; the systems table of a hybrid is its side's version plus the other side's rows for systems " +
  "that the hybrid's other tables reference and that version lacks.";

export type HybridOutcome = Extract<DiffJobResult, { kind: 'hybrid' }>;

export interface AttributionOutcome {
  attribution: Attribution | null;
  /** Why there is no attribution (null when there is one). */
  note: string | null;
  /**
   * Blinded km/s/Mpc per true km/s/Mpc: the hybrids' H0 are true values (from the fits' log10 H0),
   * the releases' blinded; contributions are scaled to the blinded shift. 1 when not blinded.
   */
  blindingScale: number;
}

export interface AttributionInput {
  /** The differing groups, in the order of the hybrids' local masks. */
  groups: GroupName[];
  hybrids: HybridOutcome[];
  /** The fits' log10 H0 of a and b (true values), null when a fit lacks H0. */
  lA: number | null;
  lB: number | null;
  resA: Results;
  resB: Results;
  eitherBlinded: boolean;
  hideShift: boolean;
  hideValues: boolean;
  /** The blinding sentence, given as the note when the shift is withheld. */
  blindingNote: string;
  /** Release b's id, for the note of a hybrid that failed. */
  idB: string;
}

/** The attribution of the H0 shift, or the note that says why there is none. */
export function attributeShift(x: AttributionInput): AttributionOutcome {
  const { groups, lA, lB, resA, resB } = x;
  if (x.hideShift) return { attribution: null, note: x.blindingNote, blindingScale: 1 };
  if (lA === null || lB === null) return { attribution: null, note: 'H0 is not measured in both releases: nothing to attribute', blindingScale: 1 };
  const k = groups.length;
  const totalTrue = 10 ** lB - 10 ** lA;
  let blindingScale = 1;
  if (x.eitherBlinded && resA.h0 && resB.h0 && totalTrue !== 0) blindingScale = (resB.h0.value - resA.h0.value) / totalTrue;
  const values = new Map<number, number>();
  values.set(0, 10 ** lA);
  values.set((1 << k) - 1, 10 ** lB);
  const failed = x.hybrids.find((h) => h.error !== null || h.log10H0 === null);
  const localOf = (global: number) => groups.reduce((m, g, i) => (global & maskOf([g]) ? m | (1 << i) : m), 0);
  for (const h of x.hybrids) if (h.log10H0 !== null) values.set(localOf(h.mask), 10 ** h.log10H0);
  if (failed) {
    const which = groups.filter((_, i) => localOf(failed.mask) & (1 << i));
    const note = `the hybrid release with ${which.join(', ')} from ${x.idB} could not be calibrated (${failed.error ?? 'H0 not reached'}): no attribution`;
    return { attribution: null, note, blindingScale };
  }
  const phi = shapleyValues(k, (m) => values.get(m)!);
  const sum = phi.reduce((s, v) => s + v, 0);
  const entries: AttributionEntry[] = GROUP_NAMES.map((group) => {
    const i = groups.indexOf(group);
    const d = i >= 0 ? phi[i] * blindingScale : 0;
    return { group, differs: i >= 0, delta_h0: d, fraction: totalTrue !== 0 ? (i >= 0 ? phi[i] / totalTrue : 0) : null, rows_sum: null };
  });
  const attribution: Attribution = {
    entries,
    total: totalTrue * blindingScale,
    sum_rel_error: totalTrue !== 0 ? Math.abs(sum - totalTrue) / Math.abs(totalTrue) : Math.abs(sum),
    hybrids: [...values.entries()].sort(([p], [q]) => p - q).map(([m, v]) => ({ groups: groups.filter((_, i) => m & (1 << i)), h0: x.hideValues ? null : v })),
    method: ATTRIBUTION_METHOD,
    blinding_scale: blindingScale,
  };
  return { attribution, note: null, blindingScale };
}
