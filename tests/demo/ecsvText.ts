/**
 * A minimal ECSV reader for the demo tests, built on two independent libraries
 * (yaml for the header, csv-parse for the body) so that the writer is checked by
 * code it does not share. Not the project's reader (src/io): it handles only the
 * comma-delimited files the demo writes.
 */
import { parse as parseCsv } from 'csv-parse/sync';
import { parse as parseYaml } from 'yaml';

export interface ParsedColumn {
  name: string;
  datatype: string;
  unit?: string;
  description?: string;
}

export interface ParsedEcsv {
  header: { delimiter?: string; datatype: ParsedColumn[]; meta?: Record<string, unknown> };
  names: string[];
  /** Raw cells as strings, in file order. */
  cells: string[][];
}

export function parseEcsvText(text: string): ParsedEcsv {
  const lines = text.split('\n');
  if (lines[0] !== '# %ECSV 1.0') throw new Error(`first line is ${JSON.stringify(lines[0])}`);
  let i = 1;
  const headerLines: string[] = [];
  while (i < lines.length && lines[i]!.startsWith('#')) {
    headerLines.push(lines[i]!.replace(/^# ?/, ''));
    i++;
  }
  if (headerLines[0] !== '---') throw new Error('second line is not "# ---"');
  const header = parseYaml(headerLines.slice(1).join('\n')) as ParsedEcsv['header'];
  const body = parseCsv(lines.slice(i).join('\n'), { delimiter: header.delimiter ?? ' ', relax_column_count: false }) as string[][];
  const [names, ...cells] = body;
  return { header, names: names!, cells };
}

/** Rows as records: float64/int64 cells become numbers, empty cells null. */
export function ecsvRecords(text: string): Record<string, string | number | null>[] {
  const parsed = parseEcsvText(text);
  const types = new Map(parsed.header.datatype.map((c) => [c.name, c.datatype]));
  return parsed.cells.map((row) => {
    const rec: Record<string, string | number | null> = {};
    parsed.names.forEach((name, k) => {
      const cell = row[k]!;
      const type = types.get(name);
      if (cell === '') rec[name] = null;
      else if (type === 'float64' || type === 'int64') rec[name] = Number(cell);
      else rec[name] = cell;
    });
    return rec;
  });
}

/** A numeric column of a table (throws on an empty cell). */
export function numbers(rows: Record<string, string | number | null>[], column: string): number[] {
  return rows.map((r, i) => {
    const v = r[column];
    if (typeof v !== 'number') throw new Error(`row ${i} column ${column}: not a number (${String(v)})`);
    return v;
  });
}

export function mean(xs: readonly number[]): number {
  return xs.reduce((a, b) => a + b, 0) / xs.length;
}

/** Sample standard deviation (n - 1). */
export function sd(xs: readonly number[]): number {
  const m = mean(xs);
  return Math.sqrt(xs.reduce((a, b) => a + (b - m) ** 2, 0) / (xs.length - 1));
}
