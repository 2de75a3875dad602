/**
 * Systematic variants: the release re-calibrated with each set of overrides.
 * The rule (also in the method note content/methods/variants.md): the systematic error of H0
 * is the root-mean-square of the variants' H0 about the baseline,
 *   sigma_sys = sqrt( (1/K) sum_k (H0_k - H0_baseline)^2 ),
 * over the K variants that produced an H0 (common practice, no source: see methods.md h).
 */
import type { VariantResult } from '../types/results.ts';

export function systematicError(variants: readonly VariantResult[]): number {
  const shifts = variants.filter((v) => v.delta_h0 !== null).map((v) => v.delta_h0!);
  if (shifts.length === 0) return 0;
  return Math.sqrt(shifts.reduce((s, d) => s + d * d, 0) / shifts.length);
}
