/**
 * Blinding in a comparison. When either release is blinded, H0 values (and the parameters
 * that follow from the Hubble-flow magnitudes) are never shown. The shift is shown only when
 * both releases are blinded alike (src/blinding: same key and blinding id, hence the same
 * hidden factor 10^(offset/5) on H0): then the ratio of the two H0 values is the true one and
 * the shift in km/s/Mpc is the true shift times that common unknown factor. Blinded
 * differently, or one blinded and one not, the shift would reveal or mean nothing, and it is
 * withheld with its attribution.
 */
import { blindingRefOf, compareH0Blinding, type BlindingRecord } from '../blinding/index.ts';
import type { BlindingComparison } from './types.ts';

/** Parameters whose values carry the blinding offset (the rung registry marks them). */
export { HIDDEN_WHEN_BLINDED } from '../registry/rungs.ts';

export interface BlindingSide {
  /** release.yaml's `blinded` after the record was applied (an unblinded release reads false). */
  blinded: boolean;
  /** The release's blinding.json, or null. */
  record: BlindingRecord | null;
}

/** `names` are the release ids the sentence uses (default "A" and "B"). */
export function compareBlinding(a: BlindingSide, b: BlindingSide, names?: { a: string; b: string }): BlindingComparison {
  const side = (s: BlindingSide) => ({ blinded: s.blinded, blinding: s.record ? blindingRefOf(s.record) : null });
  const { meaning, message } = compareH0Blinding(side(a), side(b), names);
  const alike = meaning === 'true-values' || meaning === 'same-offset';
  return {
    a: a.blinded,
    b: b.blinded,
    alike,
    values_hidden: a.blinded || b.blinded,
    shift_hidden: !alike,
    // one sentence or more, without the final full stop (the outputs add their own)
    note: (meaning === 'true-values'
      ? 'neither release is blinded'
      : alike
        ? `${message} H0 values are not shown`
        : `${message} The H0 shift and its attribution are withheld`
    ).replace(/\.$/, ''),
  };
}
