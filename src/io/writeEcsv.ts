/**
 * Writers for ECSV 1.0 and plain CSV tables.
 *
 * ECSV (Enhanced Character Separated Values, astropy APE 6, version 1.0): a YAML
 * header, every line prefixed with "# ", followed by a CSV body whose first line
 * holds the column names. We always write a comma-delimited body; because the
 * standard's default delimiter is a space, the header states `delimiter: ','`
 * explicitly (a header without it would declare a space-delimited body).
 *
 * Rules kept here (from the ECSV 1.0 text and RFC 4180):
 * - a field containing the delimiter, a double quote, CR or LF is quoted, and a
 *   double quote inside it is doubled;
 * - in ECSV a data line that begins with '#' would be read as a comment, so a
 *   first field starting with '#' is quoted (we quote any such field);
 * - fields with leading or trailing blanks are quoted so no reader trims them;
 * - a missing value (null) is an empty field; an empty string is written `""`
 *   (note: astropy reads both as masked, so the distinction is not portable);
 * - float64 values are written with the shortest decimal that round-trips to
 *   the same double (ECMAScript Number-to-String), -0 as "-0", and non-finite
 *   values as nan, inf, -inf (spellings every common reader accepts);
 * - bool values as True / False (ECSV 1.0).
 *
 * Output is a pure function of the inputs: same columns, rows and meta give the
 * same bytes. Lines end with LF, and the text ends with a newline.
 */

export type EcsvDatatype = 'string' | 'float64' | 'int64' | 'bool';

export interface EcsvColumn {
  name: string;
  datatype: EcsvDatatype;
  /** Unit string as the table's readers expect it (e.g. "mas", "mag", "d"). */
  unit?: string;
  description?: string;
}

export type CellValue = string | number | boolean | null;
export type TableRow = Record<string, CellValue | undefined>;

/** Table metadata: a YAML-safe structure written under `meta:` in the ECSV header. */
export type MetaValue = string | number | boolean | null | MetaValue[] | { [key: string]: MetaValue };

export class TableWriteError extends Error {
  constructor(message: string) {
    super(message);
    this.name = 'TableWriteError';
  }
}

/** Write an ECSV 1.0 table (comma delimiter). See the module comment for the rules. */
export function writeEcsv(columns: readonly EcsvColumn[], rows: readonly TableRow[], meta?: Record<string, MetaValue>): string {
  checkColumns(columns);
  const lines: string[] = ['# %ECSV 1.0', '# ---', "# delimiter: ','", '# datatype:'];
  for (const col of columns) {
    const parts = [`name: ${yamlString(col.name)}`];
    if (col.unit !== undefined && col.unit !== '') parts.push(`unit: ${yamlString(col.unit)}`);
    parts.push(`datatype: ${col.datatype}`);
    if (col.description !== undefined && col.description !== '') {
      parts.push(`description: ${yamlString(col.description)}`);
    }
    lines.push(`# - {${parts.join(', ')}}`);
  }
  if (meta !== undefined && Object.keys(meta).length > 0) {
    lines.push('# meta:');
    for (const l of yamlBlock(meta, 1)) lines.push(`# ${l}`);
  }
  lines.push(columns.map((c) => csvField(c.name, true)).join(','));
  appendBody(lines, columns, rows, true);
  return lines.join('\n') + '\n';
}

/** Write a plain RFC 4180 CSV table with a header row (LF line endings). */
export function writeCsv(columns: readonly EcsvColumn[], rows: readonly TableRow[]): string {
  checkColumns(columns);
  const lines: string[] = [columns.map((c) => csvField(c.name, false)).join(',')];
  appendBody(lines, columns, rows, false);
  return lines.join('\n') + '\n';
}

function checkColumns(columns: readonly EcsvColumn[]): void {
  if (columns.length === 0) throw new TableWriteError('a table needs at least one column');
  const seen = new Set<string>();
  for (const c of columns) {
    if (typeof c.name !== 'string' || c.name === '') {
      throw new TableWriteError(`column name must be a non-empty string, found ${JSON.stringify(c.name)}`);
    }
    if (/[\r\n]/.test(c.name)) throw new TableWriteError(`column name ${JSON.stringify(c.name)} contains a line break`);
    if (seen.has(c.name)) throw new TableWriteError(`column "${c.name}" appears twice`);
    seen.add(c.name);
    if (!['string', 'float64', 'int64', 'bool'].includes(c.datatype)) {
      throw new TableWriteError(`column "${c.name}": unknown datatype ${JSON.stringify(c.datatype)}`);
    }
  }
}

function appendBody(lines: string[], columns: readonly EcsvColumn[], rows: readonly TableRow[], ecsv: boolean): void {
  rows.forEach((row, i) => {
    const fields = columns.map((col) => formatCell(col, row[col.name], i, ecsv));
    lines.push(fields.join(','));
  });
}

function formatCell(col: EcsvColumn, value: CellValue | undefined, rowIndex: number, ecsv: boolean): string {
  const where = `row ${rowIndex} column "${col.name}"`;
  if (value === undefined) throw new TableWriteError(`${where}: value missing (use null for an empty cell)`);
  if (value === null) return '';
  switch (col.datatype) {
    case 'string':
      if (typeof value !== 'string') throw new TableWriteError(`${where}: expected a string, found ${typeof value}`);
      return csvField(value, ecsv);
    case 'float64':
      if (typeof value !== 'number') throw new TableWriteError(`${where}: expected a number, found ${typeof value}`);
      return formatFloat(value);
    case 'int64':
      if (typeof value !== 'number' || !Number.isSafeInteger(value)) {
        throw new TableWriteError(`${where}: expected a safe integer, found ${String(value)}`);
      }
      return String(value);
    case 'bool':
      if (typeof value !== 'boolean') throw new TableWriteError(`${where}: expected a boolean, found ${typeof value}`);
      return value ? 'True' : 'False';
  }
}

/** Shortest round-trip decimal of a double; -0, NaN and infinities spelled portably. */
export function formatFloat(x: number): string {
  if (Number.isNaN(x)) return 'nan';
  if (x === Infinity) return 'inf';
  if (x === -Infinity) return '-inf';
  if (x === 0 && Object.is(x, -0)) return '-0';
  return String(x);
}

/** Quote a CSV field when a reader could otherwise split, trim or skip it. */
function csvField(s: string, ecsv: boolean): string {
  const needsQuotes = s === '' || /[",\r\n]/.test(s) || /^[ \t]|[ \t]$/.test(s) || (ecsv && s.startsWith('#'));
  return needsQuotes ? `"${s.replace(/"/g, '""')}"` : s;
}

const YAML_RESERVED = /^(?:y|n|yes|no|on|off|true|false|null|~)$/i;

/**
 * A YAML scalar for a string, valid inside flow collections: plain when it
 * cannot be misread (letters, digits and a few safe punctuation marks, not
 * starting with a digit or sign, not a YAML 1.1 boolean or null word), else
 * double-quoted with escapes.
 */
export function yamlString(s: string): string {
  if (/^[A-Za-z_][A-Za-z0-9_ ./()*+-]*$/.test(s) && !/ $/.test(s) && !YAML_RESERVED.test(s)) return s;
  let out = '"';
  for (let i = 0; i < s.length; i++) {
    const code = s.charCodeAt(i);
    if (code >= 0xd800 && code <= 0xdbff) {
      const next = s.charCodeAt(i + 1);
      if (!(next >= 0xdc00 && next <= 0xdfff)) throw new TableWriteError(`string ${JSON.stringify(s)} is not valid Unicode`);
      out += s[i]! + s[i + 1]!;
      i++;
      continue;
    }
    if (code >= 0xdc00 && code <= 0xdfff) throw new TableWriteError(`string ${JSON.stringify(s)} is not valid Unicode`);
    const ch = s[i]!;
    if (ch === '"') out += '\\"';
    else if (ch === '\\') out += '\\\\';
    else if (ch === '\n') out += '\\n';
    else if (ch === '\t') out += '\\t';
    else if (ch === '\r') out += '\\r';
    else if (code < 0x20 || (code >= 0x7f && code <= 0x9f) || code === 0x2028 || code === 0x2029 || code === 0xfeff) {
      out += '\\u' + code.toString(16).padStart(4, '0');
    } else out += ch;
  }
  return out + '"';
}

function yamlScalar(v: string | number | boolean | null): string {
  if (v === null) return 'null';
  if (typeof v === 'boolean') return v ? 'true' : 'false';
  if (typeof v === 'number') {
    if (Number.isNaN(v)) return '.nan';
    if (v === Infinity) return '.inf';
    if (v === -Infinity) return '-.inf';
    return formatFloat(v);
  }
  return yamlString(v);
}

/** Block-style YAML lines (without the "# " prefix) for a metadata structure. */
function yamlBlock(value: { [key: string]: MetaValue } | MetaValue[], depth: number): string[] {
  const pad = '  '.repeat(depth);
  const out: string[] = [];
  const emit = (head: string, v: MetaValue): void => {
    if (v !== null && typeof v === 'object') {
      const empty = Array.isArray(v) ? v.length === 0 : Object.keys(v).length === 0;
      if (empty) out.push(`${head} ${Array.isArray(v) ? '[]' : '{}'}`);
      else {
        out.push(head);
        out.push(...yamlBlock(v, depth + 1));
      }
    } else out.push(`${head} ${yamlScalar(v)}`);
  };
  if (Array.isArray(value)) for (const v of value) emit(`${pad}-`, v);
  else for (const [k, v] of Object.entries(value)) emit(`${pad}${yamlString(k)}:`, v);
  return out;
}
