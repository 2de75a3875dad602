/**
 * Which measurement errors the two releases share. Releases share most of their data, and a
 * shared row carries the same error into both fits, so it cancels in the difference to the
 * extent that both fits weight it alike. The rules, by row id:
 *  - a row unchanged, or changed with its uncertainty columns unchanged (a correction of the
 *    same measurement), carries one common error;
 *  - a row whose uncertainty changed (remeasured), and every added or removed row, carries an
 *    error independent of everything on the other side (conservative for remeasurements that
 *    partly repeat the old one);
 *  - a geometric anchor's prior modulus is common when all of its parallax rows are; a
 *    main-sequence target's when its own photometry and systems row are, and the locus is
 *    (every anchor's parallaxes and photometry common);
 *  - the parallax zero-point prior is common when every parallax row is.
 */
import type { RowTable } from '../ladder/globalModel.ts';
import type { Release, TableName } from '../types/release.ts';
import { rowId, rowStatuses, tableRows } from './rows.ts';
import type { RowStatus } from './types.ts';

export interface NoiseSharing {
  /** Whether row `id` of a diagonal fit block has one error common to both releases. */
  rowCommon(table: RowTable, id: string): boolean;
  /** Whether the prior modulus of `system` has an error common to both releases. */
  priorCommon(system: string): boolean;
  /** One release's rows of these tables are a subset of the other's, every shared row common. */
  nested(tables: readonly TableName[]): boolean;
  status(table: TableName, id: string): RowStatus | undefined;
}

function isCommon(s: RowStatus | undefined): boolean {
  return s === 'same' || s === 'corrected';
}

export function noiseSharing(a: Release, b: Release): NoiseSharing {
  const statuses = new Map<TableName, Map<string, RowStatus>>();
  const statusOf = (t: TableName) => {
    let m = statuses.get(t);
    if (!m) {
      m = rowStatuses(t, a, b);
      statuses.set(t, m);
    }
    return m;
  };
  const allCommon = (t: TableName, pred: (system: string) => boolean): boolean => {
    for (const r of [...tableRows(a, t), ...tableRows(b, t)]) {
      const sys = typeof r.system === 'string' ? r.system : '';
      if (!pred(sys)) continue;
      const id = rowId(t, r);
      if (!isCommon(statusOf(t).get(id))) return false;
    }
    return true;
  };
  const kinds = new Map<string, string>();
  for (const s of [...a.systems, ...b.systems]) if (s.kind !== 'field') kinds.set(s.system, s.kind);
  const anchorSystems = new Set([...a.parallax, ...b.parallax].filter((r) => kinds.has(r.system)).map((r) => r.system));
  const parallaxAllCommon = allCommon('parallax', () => true);
  const anchorsCommon = allCommon('parallax', (s) => anchorSystems.has(s));
  const locusCommon = anchorsCommon && allCommon('main_sequence', (s) => anchorSystems.has(s));
  const cache = new Map<string, boolean>();
  return {
    status: (t, id) => statusOf(t).get(id),
    rowCommon(table, id) {
      switch (table) {
        case 'cepheids':
        case 'sn_calibrators':
        case 'sn_hubble_flow':
          return isCommon(statusOf(table).get(id));
        case 'field_parallax':
          return isCommon(statusOf('parallax').get(id));
        case 'zero_point':
          return parallaxAllCommon;
        case 'priors':
          return this.priorCommon(id);
      }
    },
    priorCommon(system) {
      let v = cache.get(system);
      if (v === undefined) {
        if (anchorSystems.has(system)) v = allCommon('parallax', (s) => s === system);
        else {
          v = locusCommon && allCommon('main_sequence', (s) => s === system) && isCommon(statusOf('systems').get(system));
        }
        cache.set(system, v);
      }
      return v;
    },
    nested(tables) {
      let added = 0;
      let removed = 0;
      for (const t of tables) {
        for (const s of statusOf(t).values()) {
          if (s === 'remeasured') return false;
          if (s === 'added') added++;
          if (s === 'removed') removed++;
        }
      }
      return added === 0 || removed === 0;
    },
  };
}
