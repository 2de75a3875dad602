/**
 * What a recomputation with the current code changes in a published
 * results.json: every number, flag and text that differs, each named by its
 * place in results.json, the most prominent first (H0, then the parameters,
 * the fit, the systems, the budget, the variants, then per-object rows).
 *
 * Tolerance: the calibration is deterministic (the same code and inputs give a
 * byte-identical results.json), so only a code or dependency change can move a
 * number. A number counts as moved when
 *   |recomputed - published| > max(DRIFT_ABSOLUTE, DRIFT_RELATIVE * max(|published|, |recomputed|)):
 * 1e-9 relative is far below every digit the report displays (an uncertainty to
 * two significant digits, at most 8 decimals) and far above double round-off
 * (2e-16), so a change is reported whenever it is real, even if it is too small
 * to show on a page; the absolute floor keeps values that should be zero
 * (residuals, correlations) from being reported for round-off alone.
 */
import type { Results } from '../types/results.ts';

export const DRIFT_RELATIVE = 1e-9;
export const DRIFT_ABSOLUTE = 1e-12;

type Leaf = number | string | boolean | null | undefined;

export interface DriftEntry {
  /** Place in results.json, e.g. `h0.value`, `parameters.M_W.err`, `rungs.cepheids[star="C-1"].residual`. */
  path: string;
  /** The same in words where there is a name for it ("H0", "error of M_W"); else the path. */
  label: string;
  /** undefined: absent on that side; a list's length is given as "N items". */
  published: Leaf;
  recomputed: Leaf;
  /** recomputed - published, for two numbers. */
  delta: number | null;
  /** delta / |published| (null when the published value is 0 or not a number). */
  relative: number | null;
}

export interface Drift {
  publishedCodeVersion: string;
  currentCodeVersion: string;
  /** Number of values compared (leaves of the published results). */
  compared: number;
  /** Every difference, most prominent first. */
  entries: DriftEntry[];
}

/** Paths that are not results: the version of the code that made them (reported separately). */
const SKIPPED = new Set(['provenance.code_version']);

/** Fields that name an element of a list, tried in this order. */
const ID_FIELDS = ['sn', 'star', 'id', 'name', 'source', 'system', 'file'] as const;

function elementKey(x: unknown, i: number): string {
  if (x && typeof x === 'object' && !Array.isArray(x)) {
    const o = x as Record<string, unknown>;
    for (const f of ID_FIELDS) if (typeof o[f] === 'string') return `[${f}=${JSON.stringify(o[f])}]`;
  }
  return `[${i}]`;
}

export function numbersDiffer(a: number, b: number): boolean {
  if (a === b) return false;
  if (!Number.isFinite(a) || !Number.isFinite(b)) return true;
  return Math.abs(b - a) > Math.max(DRIFT_ABSOLUTE, DRIFT_RELATIVE * Math.max(Math.abs(a), Math.abs(b)));
}

function labelOf(path: string): string {
  const h0: Record<string, string> = { 'h0.value': 'H0', 'h0.stat': 'H0 statistical error', 'h0.sys': 'H0 systematic error', 'h0.total': 'H0 total error' };
  if (h0[path]) return h0[path]!;
  const p = /^parameters\.([^.]+)\.(value|err)$/.exec(path);
  if (p) return p[2] === 'value' ? p[1]! : `error of ${p[1]}`;
  return path;
}

function rank(path: string): number {
  const order = ['h0', 'parameters', 'fit', 'systems', 'budget', 'variants', 'correlation', 'rejected', 'checks', 'reached', 'blinded'];
  const head = /^[a-z_0-9]+/i.exec(path)?.[0] ?? '';
  const i = order.indexOf(head);
  return i < 0 ? order.length : i;
}

/**
 * Compare a published results.json with a recomputation. Pure; cost: one walk
 * over the published results (O(size of results.json)).
 */
export function compareResults(published: Results, recomputed: Results): Drift {
  const entries: DriftEntry[] = [];
  let compared = 0;
  const leaf = (path: string, a: Leaf, b: Leaf): void => {
    compared += 1;
    if (typeof a === 'number' && typeof b === 'number') {
      if (numbersDiffer(a, b))
        entries.push({ path, label: labelOf(path), published: a, recomputed: b, delta: b - a, relative: a !== 0 ? (b - a) / Math.abs(a) : null });
    } else if (a !== b) {
      entries.push({ path, label: labelOf(path), published: a, recomputed: b, delta: null, relative: null });
    }
  };
  const walk = (path: string, a: unknown, b: unknown): void => {
    if (SKIPPED.has(path)) return;
    if (Array.isArray(a) && Array.isArray(b)) {
      if (a.length !== b.length) leaf(`${path}.length`, `${a.length} items`, `${b.length} items`);
      for (let i = 0; i < Math.min(a.length, b.length); i++) walk(`${path}${elementKey(a[i], i)}`, a[i], b[i]);
      return;
    }
    const isObj = (x: unknown) => x !== null && typeof x === 'object' && !Array.isArray(x);
    if (isObj(a) && isObj(b)) {
      const ao = a as Record<string, unknown>;
      const bo = b as Record<string, unknown>;
      for (const k of new Set([...Object.keys(ao), ...Object.keys(bo)])) walk(path ? `${path}.${k}` : k, ao[k], bo[k]);
      return;
    }
    if (isObj(a) || isObj(b) || Array.isArray(a) || Array.isArray(b)) {
      const show = (x: unknown): Leaf => (Array.isArray(x) ? `${x.length} items` : isObj(x) ? 'an object' : (x as Leaf));
      leaf(path, show(a), show(b));
      return;
    }
    leaf(path, a as Leaf, b as Leaf);
  };
  walk('', published, recomputed);
  const size = (e: DriftEntry) => (e.relative !== null ? Math.abs(e.relative) : e.delta !== null ? Math.abs(e.delta) : Infinity);
  entries.sort((x, y) => rank(x.path) - rank(y.path) || size(y) - size(x) || (x.path < y.path ? -1 : x.path > y.path ? 1 : 0));
  return {
    publishedCodeVersion: published.provenance?.code_version ?? 'unknown',
    currentCodeVersion: recomputed.provenance?.code_version ?? 'unknown',
    compared,
    entries,
  };
}
