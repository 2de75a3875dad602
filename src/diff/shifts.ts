/**
 * How each result moved between the two releases, with the uncertainty of the difference:
 * H0, the fit's parameters and the systems' distance moduli. A shift is flagged when it is
 * both large against that uncertainty and not negligible against the quantity's own error.
 * Blinding decides here what a shift may show (src/diff/blinding.ts decides what is hidden).
 */
import type { Release, TableName } from '../types/release.ts';
import { TABLE_NAMES } from '../types/release.ts';
import type { ParameterResult, Results } from '../types/results.ts';
import { HIDDEN_WHEN_BLINDED } from './blinding.ts';
import type { NoiseSharing } from './noise.ts';
import { rowId, rowSystem, tableRows } from './rows.ts';
import { pairSides, sigmaByRule, sigmaOfDifference, type PreparedSide } from './sigma.ts';
import { log10H0Gradient, paramIndex, type FitSnapshot } from './snapshot.ts';
import type { H0Shift, ParameterShift, Shift, SigmaRule, SystemShift } from './types.ts';

/** A shift is flagged when |delta| exceeds this many sigma_diff (or is non-zero with sigma_diff = 0)... */
export const SHIFT_FLAG_SIGMA = 1;
/**
 * ...and is not negligible: at least this fraction of the quantity's own statistical error
 * (the smaller of the two releases'). A shift of a thousandth of an error is no news even when
 * it is certain (it comes from a correction at fixed noise elsewhere in the ladder).
 */
export const NEGLIGIBLE_SHIFT_OF_ERROR = 0.1;

export const SN_TABLES: TableName[] = ['sn_calibrators', 'sn_hubble_flow'];

/** Fit parameter behind a results parameter (the zero point is carried as its offset zeta). */
const FIT_PARAMETER: Record<string, string> = {
  M_W: 'M_W',
  b_W: 'b_W',
  Z_W: 'Z_W',
  M_B: 'M_B',
  a_B: 'a_B',
  delta_M_host: 'delta_M_host',
  parallax_zero_point: 'zeta',
};

/** What blinding leaves of the shifts: the values themselves, and the shifts of blinded quantities. */
export interface ShiftHiding {
  values: boolean;
  shift: boolean;
}

/**
 * sigma of the difference of a fit quantity ('log10H0', a parameter or 'mu:<system>'), each
 * side's gradient scaled by scaleA / scaleB, propagated through both fits with shared rows
 * counted once (sigma.ts); null when either fit is missing or lacks the quantity.
 */
export type LinearSigma = (name: string, scaleA: number, scaleB: number) => number | null;

/** The smaller positive statistical error of the two releases, or null. */
function ownError(...errs: (number | null | undefined)[]): number | null {
  const pos = errs.filter((e): e is number => typeof e === 'number' && e > 0);
  return pos.length ? Math.min(...pos) : null;
}

function makeShift(
  a: number | null,
  b: number | null,
  sigma: number | null,
  rule: SigmaRule | null,
  hideValues: boolean,
  hideShift: boolean,
  ownErr: number | null,
): Shift {
  const delta = a !== null && b !== null ? b - a : null;
  let deltaSigma: number | null = null;
  let deterministic = false;
  if (delta !== null && sigma !== null) {
    if (sigma > 0) deltaSigma = delta / sigma;
    else if (delta === 0) deltaSigma = 0;
    else deterministic = true;
  }
  const notable = delta !== null && (ownErr === null || Math.abs(delta) >= NEGLIGIBLE_SHIFT_OF_ERROR * ownErr);
  const flagged = delta !== null && notable && (deterministic || (sigma !== null && Math.abs(delta) > SHIFT_FLAG_SIGMA * sigma));
  return {
    a: hideValues ? null : a,
    b: hideValues ? null : b,
    delta: hideShift ? null : delta,
    sigma_diff: sigma,
    delta_sigma: hideShift ? null : deltaSigma,
    deterministic: hideShift ? false : deterministic,
    flagged: hideShift ? false : flagged,
    sigma_rule: rule,
  };
}

/** Unit vector of a parameter in a snapshot's parameter space, or null when the fit lacks it. */
function unitVector(s: FitSnapshot | null, name: string): Float64Array | null {
  if (!s) return null;
  const i = paramIndex(s, name);
  if (i < 0) return null;
  const g = new Float64Array(s.paramNames.length);
  g[i] = 1;
  return g;
}

/** The linear sigma of a difference for both prepared fits (null for every quantity when one is missing). */
export function linearSigma(prepA: PreparedSide | null, prepB: PreparedSide | null, sharing: NoiseSharing, snNested: boolean): LinearSigma {
  const pair = prepA && prepB ? pairSides(prepA, prepB, sharing) : null;
  return (name, scaleA, scaleB) => {
    if (!prepA || !prepB || !pair) return null;
    const ga = name === 'log10H0' ? log10H0Gradient(prepA.snap) : unitVector(prepA.snap, name);
    const gb = name === 'log10H0' ? log10H0Gradient(prepB.snap) : unitVector(prepB.snap, name);
    if (!ga || !gb) return null;
    return sigmaOfDifference(prepA, ga, scaleA, prepB, gb, scaleB, sharing, snNested, pair).sigma;
  };
}

/** H0's shift, with the naive quadrature sum beside the propagated sigma; null unless both releases reach H0. */
export function h0Shift(resA: Results, resB: Results, linear: LinearSigma, hide: ShiftHiding): H0Shift | null {
  if (!resA.h0 || !resB.h0) return null;
  // d H0 = H0 ln 10 d log10 H0
  const sigma = linear('log10H0', resA.h0.value * Math.LN10, resB.h0.value * Math.LN10);
  const shift = makeShift(resA.h0.value, resB.h0.value, sigma, sigma === null ? null : 'linear', hide.values, hide.shift, ownError(resA.h0.stat, resB.h0.stat));
  return {
    ...shift,
    unit: 'km/s/Mpc',
    stat_a: resA.h0.stat,
    stat_b: resB.h0.stat,
    sigma_naive: Math.hypot(resA.h0.stat, resB.h0.stat),
    ratio: hide.shift ? null : resB.h0.value / resA.h0.value,
  };
}

/**
 * sigma of a parameter's difference and its rule: 0 for a parameter fixed on both sides, the
 * linear propagation for a fit parameter free on both sides, else from the two errors (nested
 * when the rows behind it are a shared sample, independent otherwise).
 */
function parameterSigma(
  name: string,
  pa: ParameterResult,
  pb: ParameterResult,
  linear: LinearSigma,
  sharing: NoiseSharing,
  snNested: boolean,
): { sigma: number; rule: SigmaRule } {
  if (pa.fixed && pb.fixed) return { sigma: 0, rule: 'fixed' };
  if (FIT_PARAMETER[name] && !pa.fixed && !pb.fixed) {
    const sigma = linear(FIT_PARAMETER[name], 1, 1);
    if (sigma !== null) return { sigma, rule: 'linear' };
  }
  const nested =
    name === 'sigma_int_cepheid' ? sharing.nested(['cepheids']) : name === 'alpha' || name === 'beta' || name === 'sigma_int_sn' ? snNested : false;
  return { sigma: sigmaByRule(pa.err, pb.err, nested), rule: nested ? 'nested' : 'independent' };
}

/** Every parameter of either release (a's order, then b's new ones) with its shift. */
export function parameterShifts(
  a: Release,
  b: Release,
  resA: Results,
  resB: Results,
  linear: LinearSigma,
  sharing: NoiseSharing,
  snNested: boolean,
  hideShift: boolean,
): ParameterShift[] {
  const parameters: ParameterShift[] = [];
  const names = [...Object.keys(resA.parameters), ...Object.keys(resB.parameters).filter((n) => !(n in resA.parameters))];
  const eitherBlinded = a.manifest.blinded || b.manifest.blinded;
  for (const name of names) {
    const pa = resA.parameters[name];
    const pb = resB.parameters[name];
    const blinded = eitherBlinded && (HIDDEN_WHEN_BLINDED.includes(name) || pa?.blinded === true || pb?.blinded === true);
    const { sigma, rule } = pa && pb ? parameterSigma(name, pa, pb, linear, sharing, snNested) : { sigma: null, rule: null };
    parameters.push({
      name,
      unit: (pa ?? pb)!.unit,
      description: (pa ?? pb)!.description,
      blinded,
      fixed_a: pa?.fixed === true,
      fixed_b: pb?.fixed === true,
      ...makeShift(pa?.value ?? null, pb?.value ?? null, sigma, rule, blinded, blinded && hideShift, ownError(pa?.err, pb?.err)),
    });
  }
  return parameters;
}

/** Systems with at least one input row (of any table) that differs between the releases. */
export function systemsWithChangedInputs(a: Release, b: Release, sharing: NoiseSharing): Set<string> {
  const changed = new Set<string>();
  for (const t of TABLE_NAMES) {
    for (const release of [a, b]) {
      for (const r of tableRows(release, t)) {
        const sys = rowSystem(t, r);
        if (sys === null) continue;
        const id = rowId(t, r);
        if ((sharing.status(t, id) ?? 'same') !== 'same') changed.add(sys);
      }
    }
  }
  return changed;
}

/** Every system of either release (a's order, then b's new ones) with the shift of its distance modulus. */
export function systemShifts(resA: Results, resB: Results, linear: LinearSigma, changedSystems: Set<string>): SystemShift[] {
  const systems: SystemShift[] = [];
  const sysIds = [...resA.systems.map((s) => s.id), ...resB.systems.map((s) => s.id).filter((id) => !resA.systems.some((s) => s.id === id))];
  for (const id of sysIds) {
    const sa = resA.systems.find((s) => s.id === id);
    const sb = resB.systems.find((s) => s.id === id);
    let sigma: number | null = null;
    let rule: SigmaRule | null = null;
    if (sa?.mu != null && sb?.mu != null) {
      sigma = linear(`mu:${id}`, 1, 1);
      rule = 'linear';
      if (sigma === null && sa.mu_err !== null && sb.mu_err !== null) {
        sigma = sigmaByRule(sa.mu_err, sb.mu_err, false);
        rule = 'independent';
      }
    }
    const shift = makeShift(sa?.mu ?? null, sb?.mu ?? null, sigma, sigma === null ? null : rule, false, false, ownError(sa?.mu_err, sb?.mu_err));
    systems.push({
      id,
      kind: (sb ?? sa)!.kind,
      method_a: sa?.method ?? null,
      method_b: sb?.method ?? null,
      distance_a: sa?.distance_mpc ?? null,
      distance_b: sb?.distance_mpc ?? null,
      delta_distance: sa?.distance_mpc != null && sb?.distance_mpc != null ? sb.distance_mpc - sa.distance_mpc : null,
      inputs_changed: changedSystems.has(id),
      ...shift,
    });
  }
  return systems;
}
