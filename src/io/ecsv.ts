/**
 * ECSV reader: a `# %ECSV 1.0` line, a YAML header whose lines start with
 * "# ", then a delimited body whose first line is the column-name row.
 * The header gives each column's datatype and (optionally) unit and
 * description, and the body delimiter (',' or ' '; ECSV's default is ' ').
 * Line numbers count every line of the file, header lines included.
 */
import { isMap, isScalar, isSeq, LineCounter, parseDocument, type Node as YamlNode, type YAMLMap } from 'yaml';
import { parseDelimited } from './delimited.ts';
import type { Problem } from './issues.ts';
import { shown } from './issues.ts';
import type { ParsedTable, RawColumn, TypeClass } from './raw-table.ts';
import { decodeUtf8, stripBom } from './text.ts';
import { yamlProblemText } from './yaml-errors.ts';

const SIGNATURE = /^# %ECSV (\d+)\.(\d+)\s*$/;

/** ECSV datatypes (the ECSV standard's list) and the class each belongs to. */
const ECSV_DATATYPES: Record<string, TypeClass> = {
  bool: 'bool',
  int8: 'int',
  int16: 'int',
  int32: 'int',
  int64: 'int',
  uint8: 'int',
  uint16: 'int',
  uint32: 'int',
  uint64: 'int',
  float16: 'float',
  float32: 'float',
  float64: 'float',
  float128: 'float',
  complex64: 'other',
  complex128: 'other',
  complex256: 'other',
  string: 'string',
};

/** The signature line's problem (not ECSV, or a later version), or null. */
function signatureProblem(first: string): Problem | null {
  const signature = SIGNATURE.exec(first);
  if (!signature) {
    return {
      code: 'not-ecsv',
      line: 1,
      message: 'the first line is not an ECSV signature',
      expected: '"# %ECSV 1.0"',
      found: shown(first),
      hint: 'an .ecsv file starts with "# %ECSV 1.0"; a plain CSV file should be named .csv',
    };
  }
  if (Number(signature[1]) > 1) {
    return {
      code: 'ecsv-version',
      line: 1,
      message: 'unsupported ECSV version',
      expected: 'version 1.0 or earlier',
      found: `${signature[1]}.${signature[2]}`,
    };
  }
  return null;
}

/** The header is the run of '#' lines at the top: its YAML text, line by line, without the "# ". */
function headerYamlLines(lines: readonly string[], problems: Problem[]): { headerCount: number; yamlLines: string[] } {
  let headerCount = 1;
  while (headerCount < lines.length && lines[headerCount].startsWith('#')) headerCount++;
  const yamlLines: string[] = [];
  for (let i = 1; i < headerCount; i++) {
    const l = lines[i];
    if (l === '#') yamlLines.push('');
    else if (l.startsWith('# ')) yamlLines.push(l.slice(2));
    else {
      problems.push({
        code: 'bad-header-line',
        line: i + 1,
        message: 'an ECSV header line must start with "# " (hash, space)',
        expected: '"# ..."',
        found: shown(l),
      });
      yamlLines.push(l.slice(1));
    }
  }
  return { headerCount, yamlLines };
}

type LineOf = (node: YamlNode | null | undefined, fallback: number) => number;

/** The header's YAML mapping with a file-line locator for its nodes, or null (problems pushed). */
function parseHeader(yamlLines: string[], secondLine: string, problems: Problem[]): { header: YAMLMap; lineOf: LineOf } | null {
  if (yamlLines[0]?.trim() !== '---') {
    problems.push({
      code: 'bad-header',
      line: 2,
      message: 'the ECSV header must open its YAML block with "# ---" on the second line',
      expected: '"# ---"',
      found: shown(secondLine),
    });
    return null;
  }
  // YAML line k (1-based) is file line k + 1.
  const lineCounter = new LineCounter();
  const doc = parseDocument(yamlLines.join('\n'), { lineCounter, uniqueKeys: true, prettyErrors: true });
  const lineOf: LineOf = (node, fallback) => (node?.range ? lineCounter.linePos(node.range[0]).line + 1 : fallback);
  if (doc.errors.length > 0) {
    for (const e of doc.errors) {
      problems.push({
        code: 'bad-header-yaml',
        line: (e.linePos?.[0].line ?? 1) + 1,
        message: `the ECSV header is not valid YAML: ${yamlProblemText(e.message)}`,
      });
    }
    return null;
  }
  const header = doc.contents;
  if (!isMap(header)) {
    problems.push({
      code: 'bad-header',
      line: 2,
      message: 'the ECSV header is not a YAML mapping',
      expected: 'keys datatype, delimiter, meta',
      found: shown(doc.toJS()),
    });
    return null;
  }
  return { header, lineOf };
}

/** The body delimiter: declared (',' or ' ') or ECSV's default, a space; a problem when unsupported. */
function headerDelimiter(header: YAMLMap, lineOf: LineOf): { delimiter: ',' | ' '; declared: boolean } | { problem: Problem } {
  const delimNode = header.get('delimiter', true);
  if (delimNode === undefined) return { delimiter: ' ', declared: false };
  const value: unknown = isScalar(delimNode) ? delimNode.value : undefined;
  if (value === ',' || value === ' ') return { delimiter: value, declared: true };
  return {
    problem: {
      code: 'bad-delimiter',
      line: lineOf(delimNode as YamlNode, 2),
      message: 'unsupported ECSV delimiter',
      expected: "',' or ' '",
      found: shown(isScalar(delimNode) ? delimNode.value : delimNode),
    },
  };
}

/** One entry of the header's datatype list: name, datatype, unit; null when it has no usable name. */
function headerColumn(item: unknown, lineOf: LineOf, problems: Problem[]): RawColumn | null {
  const itemLine = lineOf(item as YamlNode, 2);
  if (!isMap(item)) {
    problems.push({
      code: 'bad-header',
      line: itemLine,
      message: 'a column entry of the ECSV header is not a mapping',
      expected: '{name: ..., datatype: ...}',
      found: shown((item as { toJSON?: () => unknown })?.toJSON?.()),
    });
    return null;
  }
  const nameNode = item.get('name', true);
  const name = isScalar(nameNode) ? nameNode.value : undefined;
  if (typeof name !== 'string' || name === '') {
    problems.push({
      code: 'bad-header',
      line: itemLine,
      message: 'a column entry of the ECSV header has no name',
      expected: 'a non-empty name',
      found: shown(name),
    });
    return null;
  }
  const column: RawColumn = { name, line: itemLine };
  const datatypeValue = item.get('datatype', true);
  const datatype = isScalar(datatypeValue) ? datatypeValue.value : undefined;
  if (typeof datatype !== 'string' || !(datatype in ECSV_DATATYPES)) {
    problems.push({
      code: 'bad-datatype',
      line: lineOf(item.get('datatype', true) as YamlNode | undefined, itemLine),
      column: name,
      message: 'unknown or missing ECSV datatype',
      expected: 'one of ' + Object.keys(ECSV_DATATYPES).join(', '),
      found: shown(datatype),
    });
  } else {
    column.datatype = datatype;
    column.typeClass = ECSV_DATATYPES[datatype];
  }
  const unitNode = item.get('unit', true);
  if (unitNode !== undefined) {
    const unit = isScalar(unitNode) ? unitNode.value : undefined;
    column.unitLine = lineOf(unitNode as YamlNode, itemLine);
    if (typeof unit === 'string') column.unit = unit;
    else if (unit !== null) {
      problems.push({
        code: 'bad-unit',
        line: column.unitLine,
        column: name,
        message: 'a unit must be written as text',
        expected: 'a unit name such as "mas"',
        found: shown(unit),
      });
    }
  }
  return column;
}

/** The columns the header declares, or null when it has no datatype list (problem pushed). */
function headerColumns(header: YAMLMap, lineOf: LineOf, problems: Problem[]): RawColumn[] | null {
  const datatypeNode = header.get('datatype', true);
  if (!isSeq(datatypeNode)) {
    problems.push({
      code: 'bad-header',
      line: lineOf(datatypeNode as YamlNode | undefined, 2),
      message: 'the ECSV header has no list of columns',
      expected: 'a "datatype:" list with one entry per column',
      found: datatypeNode === undefined ? 'no "datatype" key' : 'something else',
    });
    return null;
  }
  const columns: RawColumn[] = [];
  for (const item of datatypeNode.items) {
    const column = headerColumn(item, lineOf, problems);
    if (column) columns.push(column);
  }
  return columns;
}

/** The column-name row's problem when it does not repeat the header's columns (with a hint for a comma file read with the default space). */
function columnNamesProblem(
  namesRow: { cells: string[]; line: number },
  columns: readonly RawColumn[],
  delimiter: ',' | ' ',
  delimiterDeclared: boolean,
): Problem | null {
  const declared = columns.map((c) => c.name);
  if (namesRow.cells.join('\u0000') === declared.join('\u0000')) return null;
  const commaHint =
    !delimiterDeclared && namesRow.cells.length === 1 && namesRow.cells[0].includes(',')
      ? 'the header declares no delimiter, so the ECSV default (a space) applies; add "# delimiter: \',\'" to the header'
      : 'the first line after the header must list the columns of the header, in the same order';
  return {
    code: 'column-names-mismatch',
    line: namesRow.line,
    message: 'the column-name row does not match the columns declared in the header',
    expected: declared.join(delimiter),
    found: namesRow.cells.join(delimiter),
    hint: commaHint,
  };
}

export function readEcsv(bytes: Uint8Array): ParsedTable {
  const decoded = decodeUtf8(bytes);
  if ('problem' in decoded) return { problems: [decoded.problem] };
  const lines = decoded.text.split('\n').map((l) => (l.endsWith('\r') ? l.slice(0, -1) : l));
  const problems: Problem[] = [];

  const bad = signatureProblem(lines[0]);
  if (bad) return { problems: [bad] };
  const { headerCount, yamlLines } = headerYamlLines(lines, problems);
  const parsed = parseHeader(yamlLines, lines[1] ?? '', problems);
  if (!parsed) return { problems };
  const { header, lineOf } = parsed;
  const delim = headerDelimiter(header, lineOf);
  if ('problem' in delim) return { problems: [...problems, delim.problem] };
  const { delimiter, declared: delimiterDeclared } = delim;
  const columns = headerColumns(header, lineOf, problems);
  if (!columns) return { problems };

  // The body: bytes after the header lines.
  const body = stripBom(bytes);
  let offset = 0;
  for (let n = 0; n < headerCount && offset <= body.length; n++) {
    const next = body.indexOf(0x0a, offset);
    offset = next === -1 ? body.length + 1 : next + 1;
  }
  const { records, problem } = parseDelimited(body.subarray(Math.min(offset, body.length)), delimiter, headerCount, true);
  if (problem) problems.push(problem);
  const namesRow = records[0];
  if (!namesRow) {
    if (!problem) {
      problems.push({
        code: 'no-column-names',
        line: headerCount + 1,
        message: 'no column-name row after the ECSV header',
        expected: 'a line with the column names',
        found: 'the end of the file',
      });
    }
    return { problems };
  }
  const mismatch = columnNamesProblem(namesRow, columns, delimiter, delimiterDeclared);
  if (mismatch) return { problems: [...problems, mismatch] };
  return {
    table: { columns, headerLine: namesRow.line, rows: records.slice(1) },
    problems,
  };
}
