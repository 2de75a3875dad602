/**
 * Input changes between two releases: table by table, rows matched by id, with per-column
 * summaries, every changed cell, column renames, added or removed columns and unit changes,
 * changed analysis choices, variants and manifest fields. Nothing that differs is left out:
 * a file whose bytes changed without any value changing is reported as such.
 */
import { ANALYSIS_KEYS } from '../types/analysis.ts';
import { TABLE_NAMES, type InputFile, type Release, type TableName } from '../types/release.ts';
import { editDistance } from '../io/suggest.ts';
import { changedColumns, columnsOf, idField, indexById, ROW_NOUN, rowId, rowSystem, sameValue, statusOfPair, tableRows, type AnyRow } from './rows.ts';
import type { AnalysisChange, ChangedCell, ColumnChange, ColumnSummary, InputChanges, RowChangeRef, TableChange, VariantChange } from './types.ts';

/** Ids of added and removed rows listed in a table's summary (all of them are in input_changes). */
export const LISTED_IDS = 20;

/** Median of a non-empty list (mean of the two middle values for an even count). */
export function median(values: readonly number[]): number {
  const s = [...values].sort((x, y) => x - y);
  const n = s.length;
  return n % 2 === 1 ? s[(n - 1) / 2] : 0.5 * (s[n / 2 - 1] + s[n / 2]);
}

function inputOf(release: Release, table: TableName): InputFile | undefined {
  return release.inputs.find((i) => i.table === table);
}

/** Columns a table's file has: contract columns with values (or a stated unit), and the extra columns. */
function fileColumns(release: Release, table: TableName): Map<string, { unit: string | null; contract: boolean }> {
  const input = inputOf(release, table);
  const out = new Map<string, { unit: string | null; contract: boolean }>();
  if (!input) return out;
  const rows = tableRows(release, table);
  for (const c of columnsOf(table)) {
    const stated = input.columnUnits[c.name];
    const hasValues = c.required || rows.some((r) => r[c.field] !== undefined && (c.absent === undefined || r[c.field] !== c.absent));
    if (hasValues || stated !== undefined) out.set(c.name, { unit: stated ?? null, contract: true });
  }
  for (const name of input.extraColumns) out.set(name, { unit: input.columnUnits[name] ?? null, contract: false });
  return out;
}

function unitText(u: string | null): string {
  return u === null ? 'no unit stated' : `"${u}"`;
}

/**
 * Renamed, added and removed columns and changed units of one table's file. A column only in
 * a and one only in b with the same stated unit and a close name (edit distance within 40 % of
 * the longer name, or one name containing the other) are reported as a rename.
 */
export function columnChanges(a: Release, b: Release, table: TableName): ColumnChange[] {
  const ca = fileColumns(a, table);
  const cb = fileColumns(b, table);
  if (ca.size === 0 || cb.size === 0) return [];
  const out: ColumnChange[] = [];
  const onlyA = [...ca.keys()].filter((k) => !cb.has(k));
  const onlyB = new Set([...cb.keys()].filter((k) => !ca.has(k)));
  for (const name of onlyA) {
    const ua = ca.get(name)!;
    let best: string | null = null;
    let bestD = Infinity;
    for (const cand of onlyB) {
      const ub = cb.get(cand)!;
      if (ub.unit !== ua.unit) continue;
      const la = name.toLowerCase();
      const lb = cand.toLowerCase();
      const d = la.includes(lb) || lb.includes(la) ? 0 : editDistance(la, lb);
      if (d <= Math.max(2, Math.round(0.4 * Math.max(la.length, lb.length))) && d < bestD) {
        best = cand;
        bestD = d;
      }
    }
    if (best !== null) {
      onlyB.delete(best);
      const ub = cb.get(best)!;
      out.push({
        kind: 'renamed',
        column_a: name,
        column_b: best,
        unit_a: ua.unit,
        unit_b: ub.unit,
        contract: ua.contract || ub.contract,
        detail:
          `column "${name}" is now "${best}"` +
          (ua.contract && !ub.contract
            ? ' (the ladder no longer reads it: not a contract column name)'
            : !ua.contract && ub.contract
              ? ' (now read by the ladder)'
              : ''),
      });
    } else {
      out.push({ kind: 'removed', column_a: name, column_b: null, unit_a: ua.unit, unit_b: null, contract: ua.contract, detail: `column "${name}" removed` });
    }
  }
  for (const name of onlyB) {
    const ub = cb.get(name)!;
    out.push({ kind: 'added', column_a: null, column_b: name, unit_a: null, unit_b: ub.unit, contract: ub.contract, detail: `column "${name}" added` });
  }
  for (const [name, ua] of ca) {
    const ub = cb.get(name);
    if (ub && ub.unit !== ua.unit) {
      out.push({
        kind: 'unit',
        column_a: name,
        column_b: name,
        unit_a: ua.unit,
        unit_b: ub.unit,
        contract: ua.contract,
        detail: `unit of "${name}" changed from ${unitText(ua.unit)} to ${unitText(ub.unit)}` + (ua.contract ? ' (values are compared after conversion)' : ''),
      });
    }
  }
  return out;
}

function summarise(table: TableName, pairs: [AnyRow, AnyRow][]): ColumnSummary[] {
  const key = idField(table);
  const out: ColumnSummary[] = [];
  for (const c of columnsOf(table)) {
    if (c.field === key) continue;
    const deltas: { d: number; id: string }[] = [];
    let changed = 0;
    let appeared = 0;
    let disappeared = 0;
    for (const [ra, rb] of pairs) {
      const va = ra[c.field];
      const vb = rb[c.field];
      if (sameValue(va, vb)) continue;
      changed++;
      if (va === undefined) appeared++;
      else if (vb === undefined) disappeared++;
      else if (typeof va === 'number' && typeof vb === 'number') deltas.push({ d: vb - va, id: rowId(table, ra) });
    }
    if (changed === 0) continue;
    let largest: { d: number; id: string } | null = null;
    for (const x of deltas) if (!largest || Math.abs(x.d) > Math.abs(largest.d)) largest = x;
    out.push({
      column: c.name,
      unit: c.unit,
      changed,
      appeared,
      disappeared,
      median: deltas.length ? median(deltas.map((x) => x.d)) : null,
      largest: largest ? largest.d : null,
      largest_id: largest ? largest.id : null,
    });
  }
  return out;
}

function commonOrderChanged(table: TableName, ra: readonly AnyRow[], rb: readonly AnyRow[]): boolean {
  const ib = new Set(rb.map((r) => rowId(table, r)));
  const ia = new Set(ra.map((r) => rowId(table, r)));
  const sa = ra.map((r) => rowId(table, r)).filter((id) => ib.has(id));
  const sb = rb.map((r) => rowId(table, r)).filter((id) => ia.has(id));
  return sa.some((id, i) => id !== sb[i]);
}

export interface TableDiff {
  summary: TableChange;
  cells: ChangedCell[];
  added: RowChangeRef[];
  removed: RowChangeRef[];
}

/** The cells of one row that changed between the releases, with both values and both lines. */
function changedCells(table: TableName, id: string, row: AnyRow, other: AnyRow): ChangedCell[] {
  return changedColumns(table, row, other).map((c) => ({
    table,
    id,
    column: c.name,
    unit: c.unit,
    a: (row[c.field] as number | string | undefined) ?? null,
    b: (other[c.field] as number | string | undefined) ?? null,
    line_a: row.line,
    line_b: other.line,
  }));
}

export function diffTable(a: Release, b: Release, table: TableName): TableDiff {
  const ra = tableRows(a, table);
  const rb = tableRows(b, table);
  const ia = indexById(table, ra);
  const ib = indexById(table, rb);
  const pairs: [AnyRow, AnyRow][] = [];
  const cells: ChangedCell[] = [];
  const added: RowChangeRef[] = [];
  const removed: RowChangeRef[] = [];
  let corrected = 0;
  let remeasured = 0;
  let unchanged = 0;
  for (const row of ra) {
    const id = rowId(table, row);
    const other = ib.get(id);
    if (!other) {
      removed.push({ table, id, system: rowSystem(table, row), line: row.line });
      continue;
    }
    pairs.push([row, other]);
    const status = statusOfPair(table, row, other);
    if (status === 'same') unchanged++;
    else if (status === 'corrected') corrected++;
    else remeasured++;
    cells.push(...changedCells(table, id, row, other));
  }
  for (const row of rb) {
    const id = rowId(table, row);
    if (!ia.has(id)) added.push({ table, id, system: rowSystem(table, row), line: row.line });
  }
  const fa = inputOf(a, table);
  const fb = inputOf(b, table);
  const columnChangesList = columnChanges(a, b, table);
  const orderChanged = commonOrderChanged(table, ra, rb);
  const changed = corrected + remeasured;
  const bytesDiffer = (fa?.sha256 ?? null) !== (fb?.sha256 ?? null);
  return {
    summary: {
      table,
      file_a: fa?.file ?? null,
      file_b: fb?.file ?? null,
      format_a: fa?.format ?? null,
      format_b: fb?.format ?? null,
      rows_a: ra.length,
      rows_b: rb.length,
      added: added.length,
      removed: removed.length,
      changed,
      corrected,
      remeasured,
      unchanged,
      order_changed: orderChanged,
      bytes_only:
        bytesDiffer &&
        changed === 0 &&
        added.length === 0 &&
        removed.length === 0 &&
        !orderChanged &&
        columnChangesList.length === 0 &&
        fa?.format === fb?.format &&
        fa?.file === fb?.file,
      noun: ROW_NOUN[table],
      columns: summarise(table, pairs),
      column_changes: columnChangesList,
      added_ids: added.slice(0, LISTED_IDS).map((r) => r.id),
      removed_ids: removed.slice(0, LISTED_IDS).map((r) => r.id),
    },
    cells,
    added,
    removed,
  };
}

function canonical(v: unknown): string {
  return JSON.stringify(v ?? null);
}

export function diffAnalysis(a: Release, b: Release): { changes: AnalysisChange[]; setOnly: (typeof ANALYSIS_KEYS)[number][] } {
  const changes: AnalysisChange[] = [];
  const setOnly: (typeof ANALYSIS_KEYS)[number][] = [];
  for (const key of ANALYSIS_KEYS) {
    const setA = a.analysisKeysSet.includes(key);
    const setB = b.analysisKeysSet.includes(key);
    if (canonical(a.analysis[key]) !== canonical(b.analysis[key])) {
      changes.push({ key, a: a.analysis[key], b: b.analysis[key], set_a: setA, set_b: setB });
    } else if (setA !== setB) setOnly.push(key);
  }
  return { changes, setOnly };
}

export function diffVariants(a: Release, b: Release): VariantChange[] {
  const out: VariantChange[] = [];
  const vb = new Map(b.variants.map((v) => [v.name, v]));
  const va = new Map(a.variants.map((v) => [v.name, v]));
  for (const v of a.variants) {
    const other = vb.get(v.name);
    if (!other) out.push({ name: v.name, kind: 'removed', a: { ...v.overrides }, b: null });
    else if (canonical(sortKeys(v.overrides)) !== canonical(sortKeys(other.overrides))) {
      out.push({ name: v.name, kind: 'changed', a: { ...v.overrides }, b: { ...other.overrides } });
    }
  }
  for (const v of b.variants) if (!va.has(v.name)) out.push({ name: v.name, kind: 'added', a: null, b: { ...v.overrides } });
  return out;
}

function sortKeys(o: object): Record<string, unknown> {
  return Object.fromEntries(Object.entries(o).sort(([x], [y]) => (x < y ? -1 : x > y ? 1 : 0)));
}

/** Every input change between releases a and b. */
export function diffInputs(a: Release, b: Release): InputChanges {
  const tables = TABLE_NAMES.map((t) => diffTable(a, b, t));
  const { changes, setOnly } = diffAnalysis(a, b);
  const manifest: InputChanges['manifest'] = [];
  for (const field of ['title', 'date', 'previous', 'blinded'] as const) {
    if (a.manifest[field] !== b.manifest[field]) manifest.push({ field, a: a.manifest[field], b: b.manifest[field] });
  }
  return {
    tables: tables.map((t) => t.summary),
    analysis: changes,
    analysis_set_only: setOnly,
    variants: diffVariants(a, b),
    manifest,
    notes_changed: (a.notes ?? null) !== (b.notes ?? null),
    cells: tables.flatMap((t) => t.cells),
    added_rows: tables.flatMap((t) => t.added),
    removed_rows: tables.flatMap((t) => t.removed),
  };
}

/** Whether a table has any change at all (rows, order, columns, units, file bytes). */
export function tableTouched(t: TableChange): boolean {
  return (
    t.added + t.removed + t.changed > 0 || t.order_changed || t.column_changes.length > 0 || t.bytes_only || t.file_a !== t.file_b || t.format_a !== t.format_b
  );
}
