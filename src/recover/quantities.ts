/**
 * The quantities a recovery run follows: every value that results.json publishes with an error
 * of its own and that is an estimate of the calibration (not an input row repeated). The same
 * function reads the truth (the release's own fit) and each simulated fit, so a pull always
 * compares like with like.
 *
 * Covered: H0 (with its statistical error: the simulation draws from the baseline model, so the
 * systematic part, the spread of the analysis variants, has no truth to be compared with), every
 * fitted parameter, every system's final and own-rung distance modulus, the E(B-V) of the
 * main-sequence targets and the main-sequence locus coefficients.
 * Not covered, and why: per-object rows (measured values, not estimates); an anchor's mean
 * parallax (its "truth" would depend on the zero point stated in each simulated release; the
 * anchor's distance modulus carries the same information); fixed parameters (no error).
 */
import type { Results } from '../types/results.ts';

export interface Estimate {
  value: number;
  err: number;
}

/** Quantity key -> estimate, in a fixed order (H0, parameters, systems, locus). */
export type QuantityMap = Map<string, Estimate>;

/** Keys whose value follows from H0 and is hidden while a release is blinded (never printed as a value then). */
export function isBlindedQuantity(key: string): boolean {
  return key === 'H0' || key === 'parameters.M_B' || key === 'parameters.a_B';
}

function usable(value: number | null | undefined, err: number | null | undefined): boolean {
  return value !== null && value !== undefined && err !== null && err !== undefined && Number.isFinite(value) && Number.isFinite(err) && err > 0;
}

/** The published quantities with an error, keyed by where they sit in results.json. */
export function publishedQuantities(r: Results): QuantityMap {
  const out: QuantityMap = new Map();
  const put = (key: string, value: number | null | undefined, err: number | null | undefined): void => {
    if (usable(value, err)) out.set(key, { value: value!, err: err! });
  };
  if (r.h0) put('H0', r.h0.value, r.h0.stat);
  for (const [name, p] of Object.entries(r.parameters)) {
    if (!p.fixed) put(`parameters.${name}`, p.value, p.err);
  }
  for (const s of r.systems) {
    put(`systems.${s.id}.mu`, s.mu, s.mu_err);
    put(`systems.${s.id}.mu_prior`, s.mu_prior, s.mu_prior_err);
    if (s.roles.includes('main_sequence_target')) put(`systems.${s.id}.ebv`, s.ebv, s.ebv_err);
  }
  const locus = r.rungs.main_sequence.locus;
  if (locus) locus.coeffs.forEach((c, k) => put(`main_sequence.locus.c${k}`, c, Math.sqrt(locus.covariance[k]?.[k] ?? NaN)));
  return out;
}

/** A short description of a quantity key for tables ("distance modulus of X (final)"). */
export function describeQuantity(key: string): string {
  if (key === 'H0') return 'H0 (statistical error)';
  if (key.startsWith('parameters.')) return key.slice('parameters.'.length);
  const sys = /^systems\.(.+)\.(mu|mu_prior|ebv)$/.exec(key);
  if (sys) {
    const what = sys[2] === 'mu' ? 'mu, final' : sys[2] === 'mu_prior' ? 'mu, own rung' : 'E(B-V)';
    return `${sys[1]}: ${what}`;
  }
  const locus = /^main_sequence\.locus\.c(\d+)$/.exec(key);
  if (locus) return `locus coefficient ${locus[1]}`;
  return key;
}
