/**
 * A small builder for the tables shown on report pages (TableView): columns
 * declared once with label and unit, rows given as already formatted strings.
 */
import type { RowMark, TableColumn, TableView } from './types.ts';

export type ColumnSpec = [key: string, label: string, unit: string | null, numeric: boolean];

export interface TableOptions {
  caption?: string | null;
  marks?: RowMark[];
  /** Show at most this many rows (the rest is in the downloads). */
  limit?: number;
  downloads?: { csv: string; ecsv: string } | null;
  /** Anchor of each row (null: none). */
  rowIds?: (string | null)[];
  /** Link of each cell (null: none). */
  links?: (string | null)[][];
  sortable?: boolean;
}

export function tableView(id: string, title: string, columns: ColumnSpec[], rows: string[][], o: TableOptions = {}): TableView {
  for (const [i, row] of rows.entries()) {
    if (row.length !== columns.length) throw new Error(`table ${id}: row ${i} has ${row.length} cells for ${columns.length} columns`);
  }
  const limit = o.limit ?? Infinity;
  const shownRows = rows.slice(0, limit);
  const marks = (o.marks ?? rows.map(() => null)).slice(0, limit);
  const cols: TableColumn[] = columns.map(([key, label, unit, numeric]) => ({ key, label, unit, numeric }));
  return {
    id,
    title,
    caption: o.caption ?? null,
    columns: cols,
    rows: shownRows,
    marks,
    shown: rows.length > shownRows.length ? { rows: shownRows.length, total: rows.length } : null,
    downloads: o.downloads ?? null,
    ...(o.rowIds ? { rowIds: o.rowIds.slice(0, limit) } : {}),
    ...(o.links ? { links: o.links.slice(0, limit) } : {}),
    ...(o.sortable ? { sortable: true } : {}),
  };
}
