/**
 * The rows that moved H0 most: each changed row's effect on H0 alone. Rows of the parallax,
 * Cepheid and supernova tables are estimated in closed form on both fits (influence.ts); rows
 * of the main-sequence and systems tables by recalibrating release a with the row swapped to
 * b's version (jobs.ts), one recalibration per system above ROW_REFIT_CAP rows.
 */
import { TABLE_SPECS } from '../registry/tables.ts';
import { TABLE_NAMES, type Release, type TableName } from '../types/release.ts';
import { estimateKey, sideRowEstimates, type RowEstimate } from './influence.ts';
import type { DiffJobResult } from './jobs.ts';
import type { NoiseSharing } from './noise.ts';
import { rowId, rowSystem, tableRows } from './rows.ts';
import type { PreparedSide } from './sigma.ts';
import type { Attribution, ChangedCell, ObjectInfluence } from './types.ts';

/** Most main-sequence and systems rows estimated one by one by recalibration; above it, one recalibration per system. */
export const ROW_REFIT_CAP = 32;
/** Rows listed as having moved H0 most. */
export const TOP_OBJECTS = 10;

/** Tables whose rows are estimated without recalibrating (influence.ts), and those estimated by recalibrating release a with the row swapped: each table's `rowShift` in the registry. */
const LINEAR_TABLES: TableName[] = TABLE_NAMES.filter((t) => TABLE_SPECS[t].rowShift === 'first-order');
// the systems table last: a system's priors are planned after the rows of its stars
const REFIT_TABLES: TableName[] = TABLE_NAMES.filter((t) => TABLE_SPECS[t].rowShift === 'refit').sort(
  (x, y) => Number(x === 'systems') - Number(y === 'systems'),
);

export interface SwapPlan {
  table: TableName;
  ids: string[];
  level: 'row' | 'system';
  id: string;
  system: string | null;
}

export type SwapOutcome = Extract<DiffJobResult, { kind: 'swap' }>;

interface ChangedRow {
  table: TableName;
  id: string;
  system: string | null;
}

/** Rows of `tables` that differ between the releases, each once (a's order, then b's new rows). */
function changedRows(a: Release, b: Release, sharing: NoiseSharing, tables: TableName[]): ChangedRow[] {
  const rows: ChangedRow[] = [];
  for (const table of tables) {
    const seen = new Set<string>();
    for (const release of [a, b]) {
      for (const r of tableRows(release, table)) {
        const id = rowId(table, r);
        if (seen.has(id)) continue;
        seen.add(id);
        if ((sharing.status(table, id) ?? 'same') !== 'same') rows.push({ table, id, system: rowSystem(table, r) });
      }
    }
  }
  return rows;
}

/** The recalibrations for the rows of the refit tables: one per row, or one per (table, system) above the cap. */
export function planSwaps(a: Release, b: Release, sharing: NoiseSharing): SwapPlan[] {
  const rows = changedRows(a, b, sharing, REFIT_TABLES);
  if (rows.length <= ROW_REFIT_CAP) return rows.map((r) => ({ table: r.table, ids: [r.id], level: 'row', id: r.id, system: r.system }));
  // one recalibration per (table, system), the systems with most changed rows first
  const bySystem = new Map<string, { table: TableName; system: string; ids: string[] }>();
  for (const r of rows) {
    const key = `${r.table}\u0000${r.system ?? ''}`;
    const entry = bySystem.get(key) ?? { table: r.table, system: r.system ?? '', ids: [] };
    entry.ids.push(r.id);
    bySystem.set(key, entry);
  }
  return [...bySystem.values()]
    .sort((x, y) => y.ids.length - x.ids.length || (x.table < y.table ? -1 : x.table > y.table ? 1 : x.system < y.system ? -1 : x.system > y.system ? 1 : 0))
    .slice(0, ROW_REFIT_CAP)
    .map((e) => ({
      table: e.table,
      ids: e.ids,
      level: e.ids.length > 1 ? 'system' : 'row',
      id: e.ids.length > 1 ? e.system : e.ids[0],
      system: e.system || null,
    }));
}

/**
 * Both sides' per-row estimates in km/s/Mpc: forward on a (10^(lA + d) - 10^lA), backward on b
 * (-(10^(lB + d) - 10^lB)), averaged when both exist.
 */
function combineEstimates(
  prepA: PreparedSide,
  prepB: PreparedSide,
  a: Release,
  b: Release,
  rows: { table: TableName; id: string }[],
  lA: number,
  lB: number,
): Map<string, { delta: number; kind: 'linear' | 'anchor' }> {
  const fwd = sideRowEstimates(prepA, a, b, prepB.snap, rows);
  const bwd = sideRowEstimates(prepB, b, a, prepA.snap, rows);
  const acc = new Map<string, { sum: number; n: number; kind: RowEstimate['kind'] }>();
  const add = (e: RowEstimate, delta: number) => {
    const key = estimateKey(e.table, e.id);
    const x = acc.get(key) ?? { sum: 0, n: 0, kind: e.kind };
    x.sum += delta;
    x.n++;
    acc.set(key, x);
  };
  for (const e of fwd) add(e, 10 ** (lA + e.dLog10) - 10 ** lA);
  for (const e of bwd) add(e, -(10 ** (lB + e.dLog10) - 10 ** lB));
  const out = new Map<string, { delta: number; kind: 'linear' | 'anchor' }>();
  for (const [key, x] of acc) out.set(key, { delta: x.sum / x.n, kind: x.kind });
  return out;
}

export interface MoversInput {
  a: Release;
  b: Release;
  sharing: NoiseSharing;
  cells: ChangedCell[];
  prepA: PreparedSide;
  prepB: PreparedSide;
  /** The fits' log10 H0 (true values). */
  lA: number;
  lB: number;
  swaps: SwapPlan[];
  swapResults: SwapOutcome[];
  /** Blinded km/s/Mpc per true km/s/Mpc (attribution.ts). */
  blindingScale: number;
}

/** Changed columns of each row, by estimateKey. */
function changedColumns(cells: ChangedCell[]): Map<string, string[]> {
  const cellsBy = new Map<string, string[]>();
  for (const c of cells) {
    const key = estimateKey(c.table, c.id);
    const list = cellsBy.get(key) ?? [];
    list.push(c.column);
    cellsBy.set(key, list);
  }
  return cellsBy;
}

/** Every changed row with its estimated effect on H0 (unsorted), and how many rows have none. */
export function rowsThatMovedH0(x: MoversInput): { objects: ObjectInfluence[]; notEstimated: number } {
  const { a, b, sharing, blindingScale } = x;
  const objects: ObjectInfluence[] = [];
  let notEstimated = 0;
  const cellsBy = changedColumns(x.cells);
  const rows = changedRows(a, b, sharing, LINEAR_TABLES);
  const est = combineEstimates(x.prepA, x.prepB, a, b, rows, x.lA, x.lB);
  for (const row of rows) {
    const e = est.get(estimateKey(row.table, row.id));
    if (!e) {
      notEstimated++;
      continue;
    }
    objects.push({
      table: row.table,
      id: row.id,
      system: row.system,
      status: sharing.status(row.table, row.id)!,
      columns: cellsBy.get(estimateKey(row.table, row.id)) ?? [],
      delta_h0: e.delta * blindingScale,
      estimate: e.kind,
      level: 'row',
      rows: 1,
    });
  }
  let swapRows = 0;
  x.swaps.forEach((s, i) => {
    const r = x.swapResults[i];
    swapRows += s.ids.length;
    if (r.log10H0 === null) {
      notEstimated += s.ids.length;
      return;
    }
    objects.push({
      table: s.table,
      id: s.id,
      system: s.system,
      status: s.level === 'row' ? sharing.status(s.table, s.id)! : 'corrected',
      columns: s.level === 'row' ? (cellsBy.get(estimateKey(s.table, s.id)) ?? []) : [],
      delta_h0: (10 ** r.log10H0 - 10 ** x.lA) * blindingScale,
      estimate: 'refit',
      level: s.level,
      rows: s.ids.length,
    });
  });
  // changed rows of the refit tables beyond the cap
  const refitChanged = changedRows(a, b, sharing, REFIT_TABLES).length;
  notEstimated += Math.max(0, refitChanged - swapRows);
  return { objects, notEstimated };
}

/** Each table group's sum of its rows' estimates, beside its Shapley contribution (null when a differing group has none). */
export function addRowSums(attribution: Attribution, objects: ObjectInfluence[]): void {
  for (const entry of attribution.entries) {
    if (entry.group === 'analysis') continue;
    const rowsOf = objects.filter((o) => o.table === entry.group);
    entry.rows_sum = rowsOf.length ? rowsOf.reduce((s, o) => s + o.delta_h0, 0) : entry.differs ? null : 0;
  }
}

/** Largest effect first; ties by table, then id (a fixed order, whatever the order of estimation). */
export function byEffect(x: ObjectInfluence, y: ObjectInfluence): number {
  return Math.abs(y.delta_h0) - Math.abs(x.delta_h0) || (x.table < y.table ? -1 : x.table > y.table ? 1 : x.id < y.id ? -1 : x.id > y.id ? 1 : 0);
}
