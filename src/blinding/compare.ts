/**
 * What a comparison of two releases may say about their H0 values when blinding is
 * involved. Two releases blinded with the same key and blinding id carry the same
 * hidden factor 10^(offset/5): the ratio of their H0 values and the fractional shift
 * are the true ones, and the shift in km/s/Mpc is the true shift times that common
 * factor. Releases blinded differently, or one blinded and one not, have no meaningful
 * H0 shift. The identity of a blinding is public (blinding id, key check, commitment);
 * equal commitments under one key and id mean equal offsets.
 */
import type { Results } from '../types/results.ts';
import type { BlindingRef } from './record.ts';

/** True when both are blinded with the same key and blinding id, hence the same offset. */
export function sameBlinding(a: BlindingRef | null | undefined, b: BlindingRef | null | undefined): boolean {
  if (!a || !b) return false;
  return a.blinding_id === b.blinding_id && a.key_check === b.key_check && a.commitment === b.commitment;
}

export type H0ShiftMeaning =
  /** Neither is blinded: the values and the shift are true. */
  | 'true-values'
  /** Both blinded alike: ratio and fractional shift are true; the km/s/Mpc shift is scaled by the common hidden factor. */
  | 'same-offset'
  /** Both blinded, with different or unknown offsets: the H0 shift means nothing. */
  | 'different-offsets'
  /** One blinded, one not: the H0 shift means nothing. */
  | 'one-blinded';

export interface H0Comparison {
  meaning: H0ShiftMeaning;
  /** One sentence for the comparison page or message. */
  message: string;
}

type Side = Pick<Results, 'blinded' | 'blinding'>;

/** How to read the H0 shift between results `a` and `b`. */
export function compareH0Blinding(a: Side, b: Side, names: { a: string; b: string } = { a: 'A', b: 'B' }): H0Comparison {
  if (!a.blinded && !b.blinded) return { meaning: 'true-values', message: 'Neither release is blinded: the H0 values and their shift are the measured ones.' };
  if (a.blinded && b.blinded) {
    if (sameBlinding(a.blinding, b.blinding)) {
      return {
        meaning: 'same-offset',
        message:
          `Both releases are BLINDED with the same hidden offset (blinding "${a.blinding!.blinding_id}"): the ratio of their H0 values and the shift in per cent are the true ones; ` +
          'the shift in km/s/Mpc is the true shift times the same unknown factor.',
      };
    }
    return { meaning: 'different-offsets', message: 'Both releases are BLINDED, not with the same offset: their H0 values cannot be compared.' };
  }
  return {
    meaning: 'one-blinded',
    message: `Release ${a.blinded ? names.a : names.b} is BLINDED and release ${a.blinded ? names.b : names.a} is not: their H0 values cannot be compared.`,
  };
}
