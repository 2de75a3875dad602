/**
 * The notice on a published release's pages, formatted for reading: when and
 * by whom the results were published, with which code, and every published
 * value that a recomputation with the current code moves (which value,
 * published and recomputed, by how much). Each pair of numbers is shown with
 * enough significant digits to tell them apart.
 */
import type { Drift, DriftEntry } from '../publish/drift.ts';
import { DRIFT_ABSOLUTE, DRIFT_RELATIVE } from '../publish/drift.ts';
import type { PublishedRecord } from '../publish/record.ts';
import type { PublishedChange, PublishedView } from './types.ts';

/** Moved values listed on the page; the rest are counted (all are in the comparison with results.json). */
export const PUBLISHED_CHANGES_SHOWN = 25;
/** Longer labels (a path through a 10 000-character id) are shortened for the page. */
const MAX_LABEL = 160;

const MINUS = '\u2212';
const signed = (s: string) => (s.startsWith('-') ? MINUS + s.slice(1) : s);

function plain(x: number, digits: number): string {
  return signed(String(Number(x.toPrecision(digits))));
}

/** Significant digits that show where two numbers differ (at least 4, at most 17). */
export function digitsToTellApart(a: number, b: number): number {
  const scale = Math.max(Math.abs(a), Math.abs(b));
  if (a === b || scale === 0) return 4;
  // The first digit that differs is about the ceil(-log10(relative difference))-th; one more shows by how much.
  return Math.min(17, Math.max(4, Math.ceil(-Math.log10(Math.abs(b - a) / scale)) + 1));
}

function text(x: DriftEntry['published']): string {
  if (x === undefined) return '(absent)';
  if (x === null) return 'null';
  return typeof x === 'string' ? x : String(x);
}

export function changeOf(e: DriftEntry): PublishedChange {
  const what = e.label.length > MAX_LABEL ? `${e.label.slice(0, MAX_LABEL - 1)}…` : e.label;
  if (typeof e.published === 'number' && typeof e.recomputed === 'number' && e.delta !== null) {
    const d = digitsToTellApart(e.published, e.recomputed);
    const delta = `${e.delta > 0 ? '+' : ''}${plain(e.delta, 3)}`;
    const rel = e.relative === null ? '' : ` (${e.relative > 0 ? '+' : ''}${plain(100 * e.relative, 2)} %)`;
    return { what, published: plain(e.published, d), recomputed: plain(e.recomputed, d), change: `${delta}${rel}` };
  }
  return { what, published: text(e.published), recomputed: text(e.recomputed), change: 'changed' };
}

export function publishedView(record: PublishedRecord, drift: Drift): PublishedView {
  return {
    date: record.published_on,
    by: record.published_by,
    codeVersion: record.code_version,
    currentCodeVersion: drift.currentCodeVersion,
    compared: drift.compared,
    moved: drift.entries.length,
    changes: drift.entries.slice(0, PUBLISHED_CHANGES_SHOWN).map(changeOf),
    tolerance: `a value counts as moved when it differs by more than ${DRIFT_RELATIVE} relative (and ${DRIFT_ABSOLUTE} absolute)`,
  };
}
