/**
 * Which shown values carry the blinding offset. While a release is blinded, H0
 * and every parameter that follows from the Hubble-flow magnitudes (the
 * calibration marks them `blinded`) are shown with a visible BLINDED mark; M_B
 * and a_B are always marked, since readers compare them with H0.
 */
import { HIDDEN_WHEN_BLINDED } from '../registry/rungs.ts';
import type { Results } from '../types/results.ts';

export const ALWAYS_MARKED_PARAMETERS: readonly string[] = HIDDEN_WHEN_BLINDED;

export function parameterBlinded(r: Results, name: string): boolean {
  if (!r.blinded) return false;
  return ALWAYS_MARKED_PARAMETERS.includes(name) || r.parameters[name]?.blinded === true;
}
