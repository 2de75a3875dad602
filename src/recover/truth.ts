/**
 * The truth of a recovery run: the release's own baseline fit, read from its results (the
 * structure of results.json); `truthQuantities` gives the true value of each followed quantity. Simulated releases are drawn from the model with these values,
 * so a recovery tests the pipeline where the collaboration's data actually are.
 *
 * For a blinded release this is the blinded fit: a_B (hence H0 and the Hubble-flow magnitudes)
 * carries the hidden offset, and nothing here ever sees the true values.
 */
import type { Release } from '../types/release.ts';
import type { LocusResult, Results } from '../types/results.ts';
import type { QuantityMap } from './quantities.ts';

export interface RecoveryTruth {
  mW: number;
  bW: number;
  /** 0 when the release does not fit a metallicity term. */
  zW: number;
  mB: number;
  aB: number;
  alpha: number;
  beta: number;
  sigmaIntCepheid: number;
  sigmaIntSn: number;
  /** True parallax zero point, mas (the fitted one; the stated one when the fit has none). */
  parallaxZeroPointMas: number;
  /** True distance modulus of each system that has one (see truthFromResults). */
  systemMu: Record<string, number>;
  /** True E(B-V) of each system: the fitted value of a main-sequence target, else the stated one. */
  systemEbv: Record<string, number>;
  /** True [Fe/H] of each system (the stated value). */
  systemFeh: Record<string, number>;
  /** Distance modulus of each field star that is a Cepheid (from its own fitted distance). */
  fieldStarMu: Record<string, number>;
  /** Zero-point corrected parallax of the other field stars (their only estimate), mas. */
  fieldStarParallaxMas: Record<string, number>;
  locus: LocusResult | null;
}

function param(r: Results, name: string, fallback: number): number {
  return r.parameters[name]?.value ?? fallback;
}

/** The truth for simulations shaped like `release`, from its own fit `results`. */
export function truthFromResults(release: Release, r: Results): RecoveryTruth {
  const a = release.analysis;
  // One true distance per system, consistent across its rungs: its own rung's distance where it
  // has one (anchors, main-sequence targets: the stars of that rung are drawn with it, together
  // with the E(B-V) fitted on the same rung), else the final one (Cepheid hosts).
  const systemMu: Record<string, number> = {};
  for (const s of r.systems) {
    const mu = s.mu_prior ?? s.mu;
    if (mu !== null && Number.isFinite(mu)) systemMu[s.id] = mu;
  }
  const systemEbv: Record<string, number> = {};
  const systemFeh: Record<string, number> = {};
  for (const s of release.systems) {
    if (s.ebv !== undefined) systemEbv[s.system] = s.ebv;
    if (s.feh !== undefined) systemFeh[s.system] = s.feh;
  }
  for (const t of r.rungs.main_sequence.targets) systemEbv[t.system] = t.ebv;
  const field = new Set(release.systems.filter((s) => s.kind === 'field').map((s) => s.system));
  const fieldStarMu: Record<string, number> = {};
  for (const c of r.rungs.cepheids) if (field.has(c.system) && Number.isFinite(c.abs_w)) fieldStarMu[c.star] = c.w - c.abs_w;
  const fieldStarParallaxMas: Record<string, number> = {};
  for (const s of r.rungs.parallax.stars) {
    if (field.has(s.system) && !(s.star in fieldStarMu)) fieldStarParallaxMas[s.star] = s.parallax_corr_mas;
  }
  return {
    mW: param(r, 'M_W', 0),
    bW: param(r, 'b_W', 0),
    zW: param(r, 'Z_W', 0),
    mB: param(r, 'M_B', 0),
    aB: param(r, 'a_B', 0),
    alpha: param(r, 'alpha', a.sn_alpha ?? 0),
    beta: param(r, 'beta', a.sn_beta ?? 0),
    sigmaIntCepheid: param(r, 'sigma_int_cepheid', 0),
    sigmaIntSn: param(r, 'sigma_int_sn', 0),
    parallaxZeroPointMas: param(r, 'parallax_zero_point', a.parallax_zero_point),
    systemMu,
    systemEbv,
    systemFeh,
    fieldStarMu,
    fieldStarParallaxMas,
    locus: r.rungs.main_sequence.locus,
  };
}

/**
 * The true value of each followed quantity: the release's own fit, except the distances and
 * E(B-V) of systems, which are the values the simulation draws with (a system's final and
 * own-rung distance moduli estimate the same true distance).
 */
export function truthQuantities(truth: RecoveryTruth, fit: QuantityMap): QuantityMap {
  const out: QuantityMap = new Map();
  for (const [key, q] of fit) {
    const sys = /^systems\.(.+)\.(mu|mu_prior|ebv)$/.exec(key);
    let value = q.value;
    if (sys) value = (sys[2] === 'ebv' ? truth.systemEbv[sys[1]!] : truth.systemMu[sys[1]!]) ?? q.value;
    out.set(key, { value, err: q.err });
  }
  return out;
}
