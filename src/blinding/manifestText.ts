/**
 * Mark a release.yaml text as blinded by editing one line, so that every other byte
 * (comments, key order, quoting, line endings) stays as the authors wrote it.
 */
import { BlindingError } from './errors.ts';

/** A top-level `blinded:` line: key at column 0, a value, an optional comment. */
const BLINDED_LINE = /^blinded[ \t]*:[ \t]*([^#\r\n]*?)([ \t]*#[^\r\n]*)?(\r?)$/m;
/** Top-level keys after which a missing `blinded:` line is inserted, in order of preference. */
const ANCHOR_KEYS = ['previous', 'date', 'title', 'id'];

/** release.yaml text with `blinded: true` (the existing line edited, or one line added). */
export function setBlindedTrue(text: string): string {
  const m = BLINDED_LINE.exec(text);
  if (m) {
    const value = m[1]!.replace(/[ \t]+$/, '');
    const start = m.index + m[0].indexOf(':') + 1;
    const valueStart = text.indexOf(value, start);
    if (value === '') {
      // "blinded:" with nothing after it: insert the value after the colon.
      return `${text.slice(0, start)} true${text.slice(start)}`;
    }
    return `${text.slice(0, valueStart)}true${text.slice(valueStart + value.length)}`;
  }
  const eol = text.includes('\r\n') ? '\r\n' : '\n';
  for (const key of ANCHOR_KEYS) {
    const anchor = new RegExp(`^${key}[ \\t]*:[^\\n]*\\n`, 'm').exec(text);
    if (anchor) {
      const at = anchor.index + anchor[0].length;
      return `${text.slice(0, at)}blinded: true${eol}${text.slice(at)}`;
    }
  }
  throw new BlindingError('release.yaml has no top-level id, title, date or previous line to put "blinded: true" after');
}
