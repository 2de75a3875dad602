/**
 * Words and number forms shared by the comparison page and its figures.
 */
import type { GroupName, RowStatus } from '../../diff/types.ts';
import { fixed } from '../format.ts';

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

/** "+0.31", "−0.05" (typographic minus), "0.00" for an exact zero. */
export function signedText(x: number, decimals: number): string {
  if (x === 0 || Number(x.toFixed(decimals)) === 0) return fixed(0, decimals);
  return x > 0 ? `+${fixed(x, decimals)}` : fixed(x, decimals);
}

/** Shift in units of the uncertainty of the difference: "+1.3 σ". */
export function sigmaText(x: number | null): string {
  return x === null ? '—' : `${signedText(x, 1)} σ`;
}
