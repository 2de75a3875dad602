/**
 * Read one table file of a release into typed rows: pick the format reader by
 * extension, apply the table's schema, and describe the file for the
 * provenance list (sha256, rows, extra columns, units as written).
 */
import type { InputFile, TableName } from '../types/release.ts';
import { readCsv } from './csv.ts';
import { readEcsv } from './ecsv.ts';
import type { Problem } from './issues.ts';
import { lightCurveCovarianceProblems } from './lightCurveCovariance.ts';
import type { ParsedTable } from './raw-table.ts';
import { TABLE_SPECS, type TableRows } from '../registry/tables.ts';
import { sha256Hex } from './text.ts';
import { validateTable } from './validate.ts';
import { readVotable } from './votable.ts';

export type TableFormat = 'ecsv' | 'csv' | 'votable';

/** File extensions of table files, in the order they are looked for. */
export const TABLE_EXTENSIONS: readonly { ext: string; format: TableFormat }[] = [
  { ext: 'ecsv', format: 'ecsv' },
  { ext: 'csv', format: 'csv' },
  { ext: 'vot', format: 'votable' },
  { ext: 'xml', format: 'votable' },
];

const READERS: Record<TableFormat, (bytes: Uint8Array) => ParsedTable> = {
  ecsv: readEcsv,
  csv: readCsv,
  votable: readVotable,
};

export interface TableRead<T extends TableName> {
  rows: TableRows[T][];
  input: InputFile;
  problems: Problem[];
  /** False when the file's structure could not be read (no rows, no keys). */
  structured: boolean;
  keys: Map<string, number>;
  systemRefs: { system: string; line: number }[];
}

/** Parse and validate table bytes (no file system access). */
export function parseTable<T extends TableName>(table: T, fileName: string, format: TableFormat, bytes: Uint8Array): TableRead<T> {
  const parsed = READERS[format](bytes);
  const input: InputFile = {
    table,
    file: fileName,
    format,
    sha256: sha256Hex(bytes),
    rows: parsed.table?.rows.length ?? 0,
    extraColumns: [],
    columnUnits: {},
  };
  if (!parsed.table) {
    return { rows: [], input, problems: parsed.problems, structured: false, keys: new Map(), systemRefs: [] };
  }
  const spec = TABLE_SPECS[table];
  const v = validateTable<TableRows[T]>(parsed.table, spec as never);
  input.extraColumns = v.extraColumns;
  input.columnUnits = v.columnUnits;
  // A rule across the columns of one row: the light-curve covariance must be a covariance matrix.
  const rowRules = table === 'sn_calibrators' || table === 'sn_hubble_flow' ? lightCurveCovarianceProblems(v.rows as TableRows['sn_calibrators'][]) : [];
  return {
    rows: v.rows,
    input,
    problems: [...parsed.problems, ...v.problems, ...rowRules],
    structured: true,
    keys: v.keys,
    systemRefs: v.systemRefs,
  };
}
