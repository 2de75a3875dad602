/**
 * Words and number forms shared by the comparison page and its figures: the comparison's one
 * vocabulary (src/diff/vocabulary.ts, which the command line uses too) in the page's typography,
 * and the page's words for a row's change.
 */
import type { RowStatus } from '../../diff/types.ts';
import { sigmaWords, signedNumber, TYPOGRAPHIC } from '../../diff/vocabulary.ts';

export { GROUP_TITLE } from '../../diff/vocabulary.ts';

export const STATUS_TEXT: Record<RowStatus, string> = {
  same: 'unchanged',
  corrected: 'values corrected',
  remeasured: 'remeasured (new errors)',
  added: 'added',
  removed: 'removed',
};

/** "+0.31", "−0.05" (typographic minus), "0.00" for zero or a number that rounds to it (the comparison's vocabulary, src/diff/vocabulary.ts). */
export function signedText(x: number, decimals: number): string {
  return signedNumber(x, decimals, TYPOGRAPHIC);
}

/** Shift in units of the uncertainty of the difference: "+1.3 σ" (the comparison's sigma wording, src/diff/vocabulary.ts). */
export function sigmaText(x: number | null): string {
  return sigmaWords(x, TYPOGRAPHIC);
}
