/**
 * Words and number forms shared by the comparison page and its figures.
 */
import type { GroupName, RowStatus } from '../../diff/types.ts';
import { sigmaWords, signedNumber, TYPOGRAPHIC } from '../../diff/vocabulary.ts';

/** Plain titles of the attribution groups (the JSON keeps the table names). */
export const GROUP_TITLE: Record<GroupName, string> = {
  parallax: 'Parallaxes',
  main_sequence: 'Main-sequence photometry',
  cepheids: 'Cepheids',
  sn_calibrators: 'Calibrator supernovae',
  sn_hubble_flow: 'Hubble-flow supernovae',
  systems: 'Systems table',
  analysis: 'Analysis choices',
};

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
