/**
 * The common shape every format reader (ECSV, CSV, VOTable) produces, before
 * the contract's schema is applied: column declarations as written and rows of
 * cell text, each with the 1-based line where it begins in the file.
 */
import type { Problem } from './issues.ts';

/** Declared type of a column, reduced to what the schema checks need. */
export type TypeClass = 'string' | 'float' | 'int' | 'bool' | 'other';

export interface RawColumn {
  name: string;
  /** Datatype as the file writes it (ECSV `datatype`, VOTable `datatype`); absent for plain CSV. */
  datatype?: string;
  typeClass?: TypeClass;
  /** Unit as the file writes it; absent when the file declares none. */
  unit?: string;
  /** Line where the column is declared (ECSV header entry, CSV header row, VOTable FIELD). */
  line: number;
  /** Line where the unit is declared, when different from `line`. */
  unitLine?: number;
}

export interface RawRow {
  /** 1-based line where the row begins. */
  line: number;
  /** Cell text (unquoted cells trimmed, quoted ones as written); blank is an empty cell (absent value). */
  cells: string[];
}

export interface RawTable {
  columns: RawColumn[];
  /** Line of the column-name row (or the VOTable TABLE element): where a missing column is reported. */
  headerLine: number;
  rows: RawRow[];
}

/** What a format reader returns: the table when its structure could be read, and every problem found. */
export interface ParsedTable {
  table?: RawTable;
  problems: Problem[];
}
