/**
 * Row-level access to a release's tables for the comparison: the rows of a table, their id,
 * the system they belong to, each column's value, and the status of a row between two
 * releases (same, corrected, remeasured, added, removed). Column names and units come from
 * the table registry (src/registry/tables.ts), so the comparison speaks the files' language.
 */
import { TABLE_SPECS, type ColumnSpec } from '../registry/tables.ts';
import { TABLE_NAMES, type Release, type TableName } from '../types/release.ts';
import type { RowStatus } from './types.ts';

/** A row of any table: the typed fields plus `line`. */
export type AnyRow = Record<string, unknown> & { line: number };

/** Property of Release holding a table's rows. */
export function tableField(table: TableName): keyof Release {
  return TABLE_SPECS[table].releaseField;
}

export function tableRows(release: Release, table: TableName): AnyRow[] {
  return release[TABLE_SPECS[table].releaseField] as unknown as AnyRow[];
}

export function columnsOf(table: TableName): ColumnSpec[] {
  return TABLE_SPECS[table].columns as ColumnSpec[];
}

/** Field holding the row id (the table's unique key column). */
export function idField(table: TableName): string {
  const spec = TABLE_SPECS[table];
  return columnsOf(table).find((c) => c.name === spec.key)!.field;
}

export function rowId(table: TableName, row: AnyRow): string {
  return String(row[idField(table)]);
}

/** The system a row belongs to (its own id for the systems table, null for the Hubble flow). */
export function rowSystem(table: TableName, row: AnyRow): string | null {
  if (table === 'systems') return String(row.system);
  return typeof row.system === 'string' ? row.system : null;
}

/** What the rows of a table are called in a summary line. */
export const ROW_NOUN: Record<TableName, string> = Object.fromEntries(TABLE_NAMES.map((t) => [t, TABLE_SPECS[t].rowNoun])) as Record<TableName, string>;

/**
 * Columns describing a measurement's uncertainty: every *_err column and the light-curve
 * covariances. A row whose values changed while these stayed is the same measurement, corrected.
 */
export function isUncertaintyColumn(c: ColumnSpec): boolean {
  return c.name.endsWith('_err') || c.name.startsWith('cov_');
}

/**
 * Two values of one cell count as the same when they are equal, or are numbers within this
 * relative distance: a unit conversion at reading (e.g. uas -> mas) leaves the last bit of a
 * double differently rounded, and twelve significant digits are beyond any catalogue's
 * precision. Only the change report uses it; the calibration's input is compared exactly.
 */
export const SAME_NUMBER_REL = 1e-12;

export function sameValue(a: unknown, b: unknown): boolean {
  if (a === b) return true;
  if (typeof a === 'number' && typeof b === 'number') return Math.abs(a - b) <= SAME_NUMBER_REL * Math.max(Math.abs(a), Math.abs(b));
  return false;
}

/** Columns whose value differs between two versions of a row (the id column never does). */
export function changedColumns(table: TableName, a: AnyRow, b: AnyRow): ColumnSpec[] {
  return columnsOf(table).filter((c) => !sameValue(a[c.field], b[c.field]));
}

export function statusOfPair(table: TableName, a: AnyRow | undefined, b: AnyRow | undefined): RowStatus {
  if (!a) return 'added';
  if (!b) return 'removed';
  const cols = changedColumns(table, a, b);
  if (cols.length === 0) return 'same';
  return cols.some(isUncertaintyColumn) ? 'remeasured' : 'corrected';
}

/** Rows of a table by id (ids are unique within a table; the validator enforces it). */
export function indexById(table: TableName, rows: readonly AnyRow[]): Map<string, AnyRow> {
  const out = new Map<string, AnyRow>();
  for (const r of rows) out.set(rowId(table, r), r);
  return out;
}

/** Status of every row id of a table appearing in either release. */
export function rowStatuses(table: TableName, a: Release, b: Release): Map<string, RowStatus> {
  const ia = indexById(table, tableRows(a, table));
  const ib = indexById(table, tableRows(b, table));
  const out = new Map<string, RowStatus>();
  for (const [id, ra] of ia) out.set(id, statusOfPair(table, ra, ib.get(id)));
  for (const [id, rb] of ib) if (!ia.has(id)) out.set(id, statusOfPair(table, undefined, rb));
  return out;
}

/** The values of a row that the calibration reads, in a canonical form (line numbers left out). */
export function rowContent(table: TableName, row: AnyRow): unknown[] {
  return columnsOf(table).map((c) => row[c.field] ?? null);
}

/** Whether two versions of a table give the calibration exactly the same input (same rows, order and values). */
export function sameTableContent(table: TableName, a: readonly AnyRow[], b: readonly AnyRow[]): boolean {
  if (a.length !== b.length) return false;
  for (let i = 0; i < a.length; i++) {
    const ca = rowContent(table, a[i]);
    const cb = rowContent(table, b[i]);
    for (let k = 0; k < ca.length; k++) if (ca[k] !== cb[k]) return false;
  }
  return true;
}
