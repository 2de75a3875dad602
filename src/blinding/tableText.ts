/**
 * Rewrite one numeric column of a delimited table text (ECSV or plain CSV) cell by
 * cell, leaving every other byte as it was: header, comments, other columns, quoting,
 * spacing and line endings. Blinding uses it so that a blinded table differs from the
 * original only in the m_b cells, and line numbers (which error messages and the
 * report cite) stay the same.
 *
 * The tokenizer follows the rules the readers apply (src/io/delimited.ts): fields are
 * separated by the delimiter (with ' ', by runs of spaces), a field may be quoted with
 * '"' and inner quotes doubled, unquoted fields are trimmed, blank lines are skipped,
 * and in an ECSV body a line starting with '#' is a comment. The caller checks the cells
 * found against the rows the reader returned, so a disagreement cannot go unnoticed.
 */
import { parse as parseYaml } from 'yaml';
import { parseDecimal, type Decimal } from './decimal.ts';

export type DelimitedFormat = 'ecsv' | 'csv';

interface Field {
  /** Span of the value in the text (inside the quotes when quoted). */
  start: number;
  end: number;
  value: string;
  quoted: boolean;
}

interface RecordFields {
  line: number;
  fields: Field[];
}

export interface ColumnCell {
  /** 1-based line of the row, as an editor shows it. */
  line: number;
  start: number;
  end: number;
  text: string;
}

export class TableTextError extends Error {
  readonly line?: number;
  constructor(message: string, line?: number) {
    super(message);
    this.name = 'TableTextError';
    this.line = line;
  }
}

function lineStarts(text: string): number[] {
  const starts = [0];
  for (let i = 0; i < text.length; i++) if (text.charCodeAt(i) === 10) starts.push(i + 1);
  return starts;
}

function lineOf(starts: number[], pos: number): number {
  let lo = 0;
  let hi = starts.length - 1;
  while (lo < hi) {
    const mid = (lo + hi + 1) >> 1;
    if (starts[mid]! <= pos) lo = mid;
    else hi = mid - 1;
  }
  return lo + 1;
}

/** Where the delimited part begins, and how it is delimited. */
function layoutOf(text: string, format: DelimitedFormat): { pos: number; delimiter: ',' | ' '; comments: boolean } {
  const bom = text.startsWith('\uFEFF') ? 1 : 0;
  if (format === 'csv') return { pos: bom, delimiter: ',', comments: false };
  let pos = bom;
  const header: string[] = [];
  while (pos < text.length && text[pos] === '#') {
    const nl = text.indexOf('\n', pos);
    const end = nl < 0 ? text.length : nl;
    header.push(text.slice(pos, end).replace(/\r$/, ''));
    pos = nl < 0 ? text.length : nl + 1;
  }
  if (!/^# %ECSV /.test(header[0] ?? '')) throw new TableTextError('not an ECSV text (no "# %ECSV" first line)', 1);
  const yamlText = header
    .slice(1)
    .map((l) => (l === '#' ? '' : l.slice(2)))
    .join('\n');
  const meta = parseYaml(yamlText) as { delimiter?: unknown } | null;
  const delimiter = meta?.delimiter ?? ' ';
  if (delimiter !== ',' && delimiter !== ' ') throw new TableTextError(`unsupported ECSV delimiter ${JSON.stringify(delimiter)}`);
  return { pos, delimiter, comments: true };
}

function isBlank(c: string | undefined): boolean {
  return c === ' ' || c === '\t';
}

function atLineEnd(text: string, p: number): boolean {
  return p >= text.length || text[p] === '\n' || (text[p] === '\r' && (p + 1 >= text.length || text[p + 1] === '\n'));
}

function skipLineEnd(text: string, p: number): number {
  if (text[p] === '\r') p++;
  if (text[p] === '\n') p++;
  return p;
}

/** Every record of the delimited part, with the spans of its fields. */
function records(text: string, format: DelimitedFormat): RecordFields[] {
  const { pos: start, delimiter, comments } = layoutOf(text, format);
  const starts = lineStarts(text);
  const out: RecordFields[] = [];
  let pos = start;
  while (pos < text.length) {
    const nl = text.indexOf('\n', pos);
    const lineEnd = nl < 0 ? text.length : nl;
    const lineText = text.slice(pos, lineEnd).replace(/\r$/, '');
    if (lineText.trim() === '' || (comments && lineText.startsWith('#'))) {
      pos = nl < 0 ? text.length : nl + 1;
      continue;
    }
    const line = lineOf(starts, pos);
    const fields: Field[] = [];
    let p = pos;
    for (;;) {
      while (isBlank(text[p])) p++;
      let field: Field;
      if (text[p] === '"') {
        let q = p + 1;
        let value = '';
        for (;;) {
          const close = text.indexOf('"', q);
          if (close < 0) throw new TableTextError('a quoted field is never closed', line);
          value += text.slice(q, close);
          if (text[close + 1] === '"') {
            value += '"';
            q = close + 2;
            continue;
          }
          field = { start: p + 1, end: close, value, quoted: true };
          p = close + 1;
          break;
        }
        // With a comma delimiter, blanks after the closing quote are padding; with a space
        // delimiter they are the delimiter itself.
        if (delimiter === ',') while (isBlank(text[p])) p++;
      } else {
        let q = p;
        while (!atLineEnd(text, q) && text[q] !== delimiter) q++;
        let e = q;
        while (e > p && isBlank(text[e - 1])) e--;
        field = { start: p, end: e, value: text.slice(p, e), quoted: false };
        p = q;
      }
      fields.push(field);
      if (atLineEnd(text, p)) {
        pos = skipLineEnd(text, p);
        break;
      }
      if (text[p] !== delimiter) throw new TableTextError('text after a closing quote', line);
      if (delimiter === ' ') {
        while (text[p] === ' ') p++;
        if (atLineEnd(text, p)) {
          pos = skipLineEnd(text, p);
          break;
        }
      } else p++;
    }
    out.push({ line, fields });
  }
  return out;
}

/** The cells of one column, in row order (the column-name row excluded). */
export function columnCells(text: string, format: DelimitedFormat, column: string): ColumnCell[] {
  const all = records(text, format);
  const names = all[0];
  if (!names) throw new TableTextError('the table has no column-name row');
  const index = names.fields.findIndex((f) => f.value === column);
  if (index < 0) throw new TableTextError(`the table has no column "${column}"`, names.line);
  return all.slice(1).map((r) => {
    const f = r.fields[index];
    if (!f) throw new TableTextError(`the row has no "${column}" cell`, r.line);
    return { line: r.line, start: f.start, end: f.end, text: f.value };
  });
}

/**
 * Replace every cell of `column` by `rewrite(value, line)`. Cells must hold decimal
 * numbers. Returns the new text and, per row, the old and new values.
 */
export function rewriteColumn(
  text: string,
  format: DelimitedFormat,
  column: string,
  rewrite: (value: Decimal, line: number) => string,
): { text: string; cells: { line: number; before: string; after: string }[] } {
  const cells = columnCells(text, format, column);
  const parts: string[] = [];
  const changed: { line: number; before: string; after: string }[] = [];
  let last = 0;
  for (const c of cells) {
    const d = parseDecimal(c.text);
    if (!d) throw new TableTextError(`column "${column}": ${JSON.stringify(c.text)} is not a decimal number`, c.line);
    const after = rewrite(d, c.line);
    parts.push(text.slice(last, c.start), after);
    last = c.end;
    changed.push({ line: c.line, before: c.text, after });
  }
  parts.push(text.slice(last));
  return { text: parts.join(''), cells: changed };
}
