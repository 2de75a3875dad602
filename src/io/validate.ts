/**
 * Apply a table's schema (schema.ts) to a raw table: check the columns
 * (present, declared type, unit), then every cell (empty, number, finite,
 * > 0, allowed value), convert units, and build the typed rows. Every problem
 * is reported, not only the first; a row with a problem is not returned.
 */
import type { Problem } from './issues.ts';
import { shown } from './issues.ts';
import type { RawColumn, RawTable } from './raw-table.ts';
import type { ColumnSpec, TableSpec } from '../registry/tables.ts';
import { nearest } from './suggest.ts';
import { checkUnit } from './units.ts';
import { CONTROL_CHARACTER } from './text.ts';

export interface ValidatedTable<Row> {
  /** Rows that passed every check (all of them when `problems` is empty). */
  rows: Row[];
  problems: Problem[];
  /** Columns not in the contract, in file order. */
  extraColumns: string[];
  /** Column -> unit as written in the file (columns that declare one). */
  columnUnits: Record<string, string>;
  /** Every non-empty value of the key column, with the line of its first row. */
  keys: Map<string, number>;
  /** Every non-empty value of the system-reference column, with its row's line. */
  systemRefs: { system: string; line: number }[];
}

/** A decimal number as written in tables: optional sign, digits, point, exponent. No hex, no separators. */
const DECIMAL = /^[+-]?(?:\d+\.?\d*|\.\d+)(?:[eE][+-]?\d+)?$/;
const INTEGER = /^[+-]?\d+$/;
const NOT_FINITE = /^[+-]?(?:nan|inf|infinity)$/i;

type CellResult = { value: string | number } | { problem: Omit<Problem, 'line' | 'column'> };

function readNumberCell(text: string, column: RawColumn, spec: ColumnSpec, convert: (x: number) => number): CellResult {
  // Blanks around a number carry nothing (a quoted " 1.5" is still 1.5).
  const cell = text.trim();
  if (NOT_FINITE.test(cell)) {
    return { problem: { code: 'not-finite', message: 'the value is not a finite number', expected: 'a finite number', found: shown(cell) } };
  }
  if (!DECIMAL.test(cell)) {
    return { problem: { code: 'not-a-number', message: 'the value is not a number', expected: 'a number', found: shown(cell) } };
  }
  if (column.typeClass === 'int' && !INTEGER.test(cell)) {
    return {
      problem: {
        code: 'not-an-integer',
        message: `the column is declared ${column.datatype} but the value is not an integer`,
        expected: 'an integer, or declare the column as float64',
        found: shown(cell),
      },
    };
  }
  const raw = Number(cell);
  if (!Number.isFinite(raw)) {
    return { problem: { code: 'not-finite', message: 'the value is too large to be a finite number', expected: 'a finite number', found: shown(cell) } };
  }
  const value = convert(raw);
  if (spec.positive && !(value > 0)) {
    return { problem: { code: 'not-positive', message: 'the value must be greater than zero', expected: '> 0', found: shown(cell) } };
  }
  return { value };
}

function readTextCell(cell: string, spec: ColumnSpec): CellResult {
  const control = CONTROL_CHARACTER.exec(cell);
  if (control) {
    const code = control[0].charCodeAt(0).toString(16).toUpperCase().padStart(4, '0');
    return {
      problem: {
        code: 'control-character',
        message: `the text holds the control character U+${code}; ids and names must be printable text`,
        expected: 'printable text',
        found: shown(cell),
      },
    };
  }
  if (spec.oneOf && !spec.oneOf.includes(cell)) {
    const list = spec.oneOf.length > 1 ? `${spec.oneOf.slice(0, -1).join(', ')} or ${spec.oneOf.at(-1)}` : spec.oneOf[0];
    return { problem: { code: 'not-allowed', message: 'the value is not one of the allowed ones', expected: list, found: shown(cell) } };
  }
  return { value: cell };
}

interface PresentColumn {
  spec: ColumnSpec;
  column: RawColumn;
  /** Index of the column in the file. */
  at: number;
  convert: (x: number) => number;
}

interface ColumnCheck {
  /** Column name -> index in the file (first occurrence). */
  index: Map<string, number>;
  /** Contract columns found in the file. */
  present: PresentColumn[];
  /** False when a required column is missing or a column has a wrong unit or datatype: no row can be built. */
  complete: boolean;
  extraColumns: string[];
  columnUnits: Record<string, string>;
}

/** Column name -> position, for the columns with a usable name (empty, control characters and repeats are problems). */
function columnIndex(raw: RawTable, problems: Problem[]): Map<string, number> {
  const index = new Map<string, number>();
  raw.columns.forEach((c, i) => {
    const first = index.get(c.name);
    if (c.name === '') {
      problems.push({ code: 'empty-column-name', line: c.line, message: `column ${i + 1} has no name`, expected: 'a column name', found: 'an empty name' });
    } else if (CONTROL_CHARACTER.test(c.name)) {
      problems.push({
        code: 'control-character',
        line: c.line,
        message: `the name of column ${i + 1} holds a control character`,
        expected: 'printable text',
        found: shown(c.name),
      });
    } else if (first !== undefined) {
      problems.push({
        code: 'duplicate-column',
        line: c.line,
        column: c.name,
        message: 'the column appears twice',
        expected: 'unique column names',
        found: `a second "${c.name}" (the first is column ${first + 1})`,
      });
    } else index.set(c.name, i);
  });
  return index;
}

/** Whether a present column's declared datatype and unit fit its spec, and the unit conversion to apply. */
function checkColumnDeclaration(col: ColumnSpec, column: RawTable['columns'][number], problems: Problem[]): { ok: boolean; convert: (x: number) => number } {
  let ok = true;
  if (column.typeClass !== undefined) {
    const fits = col.type === 'text' ? column.typeClass === 'string' : column.typeClass === 'float' || column.typeClass === 'int';
    if (!fits) {
      ok = false;
      problems.push({
        code: 'wrong-datatype',
        line: column.line,
        column: col.name,
        message: `the column is declared with the wrong datatype`,
        expected: col.type === 'text' ? 'a text datatype (ECSV string, VOTable char)' : 'a numeric datatype (float64, int64, double, ...)',
        found: shown(column.datatype ?? column.typeClass),
      });
    }
  }
  const unit = checkUnit(col.unit, column.unit);
  if (!unit.ok) {
    ok = false;
    problems.push({
      code: 'wrong-unit',
      line: column.unitLine ?? column.line,
      column: col.name,
      message: 'the unit cannot be converted to the unit this column is stored in',
      expected: unit.expected,
      found: unit.found,
      hint: col.unit === null || col.unit === '' ? 'remove the unit' : 'units are converted exactly or refused, never guessed',
    });
  }
  return { ok, convert: unit.ok ? unit.convert : (x) => x };
}

/** The header-level checks: names unique, required columns present, datatypes and units fit. */
function checkColumns(raw: RawTable, spec: TableSpec<unknown>, problems: Problem[]): ColumnCheck {
  const index = columnIndex(raw, problems);

  const known = new Set(spec.columns.map((c) => c.name));
  const extraColumns = raw.columns.map((c) => c.name).filter((n) => n !== '' && !known.has(n));
  const columnUnits: Record<string, string> = {};
  for (const c of raw.columns) if (c.unit !== undefined && c.unit.trim() !== '') columnUnits[c.name] = c.unit;

  // Column checks. Cells of a column with a wrong unit or datatype are still
  // checked (number, finite, > 0 hold in any unit), but no row is built.
  let complete = true;
  const present: PresentColumn[] = [];
  for (const col of spec.columns as ColumnSpec[]) {
    const at = index.get(col.name);
    if (at === undefined) {
      if (col.required) {
        complete = false;
        const near = nearest(col.name, extraColumns);
        problems.push({
          code: 'missing-column',
          line: raw.headerLine,
          column: col.name,
          message: `the required column "${col.name}" is missing`,
          expected: `a column "${col.name}"`,
          found: raw.columns.length ? `columns ${raw.columns.map((c) => c.name).join(', ')}` : 'no columns',
          hint: near ? `is "${near}" meant to be "${col.name}"?` : undefined,
        });
      }
      continue;
    }
    const column = raw.columns[at];
    const { ok, convert } = checkColumnDeclaration(col, column, problems);
    if (!ok) complete = false;
    present.push({ spec: col, column, at, convert });
  }

  return { index, present, complete, extraColumns, columnUnits };
}

/**
 * One data row: every present column's cell read and converted, the values that need a partner
 * checked; the row's value (absent optional columns filled in) or null when any cell is wrong.
 */
function validateRow<Row>(
  row: RawTable['rows'][number],
  spec: TableSpec<Row>,
  present: readonly PresentColumn[],
  index: ReadonlyMap<string, number>,
  complete: boolean,
  problems: Problem[],
): Row | null {
  let rowOk = complete;
  const out: Record<string, unknown> = {};
  // Columns of this row with a bad value; created only for a row that has one (most have none).
  let bad: Set<string> | null = null;
  for (const { spec: col, column, at, convert } of present) {
    const cell = row.cells[at];
    if (cell.trim() === '') {
      if (col.required) {
        rowOk = false;
        problems.push({
          code: 'missing-value',
          line: row.line,
          column: col.name,
          message: 'a required value is empty',
          expected: 'a value',
          found: 'an empty cell',
        });
      }
      continue;
    }
    const result = col.type === 'number' ? readNumberCell(cell, column, col, convert) : readTextCell(cell, col);
    if ('problem' in result) {
      rowOk = false;
      (bad ??= new Set<string>()).add(col.name);
      problems.push({ ...result.problem, line: row.line, column: col.name });
    } else out[col.field] = result.value;
  }
  for (const { spec: col, at } of present) {
    if (col.needs === undefined || row.cells[at].trim() === '' || bad?.has(col.name) || bad?.has(col.needs)) continue;
    const partner = index.get(col.needs);
    if (partner === undefined || row.cells[partner].trim() === '') {
      rowOk = false;
      problems.push({
        code: 'value-without-partner',
        line: row.line,
        column: col.name,
        message: `${col.name} is given without ${col.needs}`,
        expected: `a value of ${col.needs} in the same row, or no ${col.name}`,
        found: `${col.name} = ${row.cells[at]} and no ${col.needs}`,
      });
    }
  }
  if (rowOk) {
    for (const col of spec.columns as ColumnSpec[]) if (col.absent !== undefined && out[col.field] === undefined) out[col.field] = col.absent;
    // `line` last, as a spread would put it, without copying the row
    out.line = row.line;
    return out as Row;
  }
  return null;
}

export function validateTable<Row>(raw: RawTable, spec: TableSpec<Row>): ValidatedTable<Row> {
  const problems: Problem[] = [];
  const { index, present, complete, extraColumns, columnUnits } = checkColumns(raw, spec as TableSpec<unknown>, problems);

  const rows: Row[] = [];
  const keys = new Map<string, number>();
  const systemRefs: { system: string; line: number }[] = [];
  const keyAt = index.get(spec.key);
  const refAt = spec.systemRef !== undefined ? index.get(spec.systemRef) : undefined;
  for (const row of raw.rows) {
    if (row.cells.length !== raw.columns.length) {
      problems.push({
        code: 'field-count',
        line: row.line,
        message: 'the row does not have one value per column',
        expected: `${raw.columns.length} values`,
        found: `${row.cells.length}`,
        hint: 'a text value containing the delimiter must be quoted; an empty value is written as ""',
      });
      continue;
    }
    if (keyAt !== undefined && row.cells[keyAt].trim() !== '') {
      const id = row.cells[keyAt];
      const first = keys.get(id);
      if (first !== undefined) {
        problems.push({
          code: 'duplicate-id',
          line: row.line,
          column: spec.key,
          message: `the id is not unique in this table`,
          expected: `a ${spec.key} id used once`,
          found: `${shown(id)} (also at line ${first})`,
        });
      } else keys.set(id, row.line);
    }
    if (refAt !== undefined && row.cells[refAt].trim() !== '') systemRefs.push({ system: row.cells[refAt], line: row.line });

    const out = validateRow<Row>(row, spec, present, index, complete, problems);
    if (out !== null) rows.push(out);
  }

  if (raw.rows.length === 0) {
    problems.push({
      code: 'empty-table',
      line: raw.headerLine,
      message: 'the table has no rows; a table file that exists must have at least one',
      expected: 'at least one data row',
      found: 'none',
      hint: 'remove the file if the release does not provide this table',
    });
  }
  return { rows, problems, extraColumns, columnUnits, keys, systemRefs };
}
