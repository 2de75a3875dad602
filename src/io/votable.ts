/**
 * VOTable reader (IVOA VOTable, TABLEDATA serialisation only): one TABLE,
 * its FIELDs (name, datatype, unit) and TR/TD rows. An empty TD is an absent
 * value. fast-xml-parser gives the structure but no positions, so the lines of
 * FIELD and TR elements are found by scanning the text with comments and
 * CDATA blanked out (same length, line breaks kept).
 */
import { XMLParser, XMLValidator } from 'fast-xml-parser';
import type { Problem } from './issues.ts';
import { shown } from './issues.ts';
import type { ParsedTable, RawColumn, RawRow, TypeClass } from './raw-table.ts';
import { decodeUtf8 } from './text.ts';

/** VOTable 1.4 primitive datatypes and the class each belongs to. */
const VOT_DATATYPES: Record<string, TypeClass> = {
  boolean: 'bool',
  bit: 'other',
  unsignedByte: 'int',
  short: 'int',
  int: 'int',
  long: 'int',
  char: 'string',
  unicodeChar: 'string',
  float: 'float',
  double: 'float',
  floatComplex: 'other',
  doubleComplex: 'other',
};

const ARRAYS = new Set(['RESOURCE', 'TABLE', 'FIELD', 'TR', 'TD']);

type XmlNode = Record<string, unknown>;

/** Replace comments, CDATA sections and processing instructions by spaces, keeping line breaks. */
function blankNonMarkup(text: string): string {
  return text.replace(/<!--[\s\S]*?-->|<!\[CDATA\[[\s\S]*?\]\]>|<\?[\s\S]*?\?>/g, (m) => m.replace(/[^\n]/g, ' '));
}

/** Lines of every start tag `<NAME` (with or without a namespace prefix), in document order. */
function tagLines(scannable: string, name: string): number[] {
  const re = new RegExp(`<(?:[A-Za-z_][\\w.-]*:)?${name}(?=[\\s/>])`, 'g');
  const lines: number[] = [];
  let line = 1;
  let last = 0;
  for (let m = re.exec(scannable); m; m = re.exec(scannable)) {
    for (let i = last; i < m.index; i++) if (scannable.charCodeAt(i) === 10) line++;
    last = m.index;
    lines.push(line);
  }
  return lines;
}

function asArray(x: unknown): XmlNode[] {
  if (x === undefined || x === null) return [];
  return (Array.isArray(x) ? x : [x]).map((v) => (typeof v === 'object' && v !== null ? (v as XmlNode) : {}));
}

function tdText(td: unknown): string {
  if (typeof td === 'string') return td;
  if (typeof td === 'number' || typeof td === 'boolean') return String(td);
  if (td && typeof td === 'object') {
    const t = (td as XmlNode)['#text'];
    return t === undefined ? '' : String(t);
  }
  return '';
}

/** All TABLE elements, depth first (RESOURCEs may nest). */
function collectTables(resources: XmlNode[], out: XmlNode[]): XmlNode[] {
  for (const r of resources) {
    out.push(...asArray(r.TABLE));
    collectTables(asArray(r.RESOURCE), out);
  }
  return out;
}

/** The TABLE's FIELDs as columns (name, line, datatype, unit); an unknown datatype is a problem. */
function readFields(table: XmlNode, scannable: string, tableLine: number, problems: Problem[]): RawColumn[] {
  const fieldLines = tagLines(scannable, 'FIELD');
  return asArray(table.FIELD).map((f, i) => {
    const line = fieldLines[i] ?? tableLine;
    const name = String(f['@_name'] ?? '');
    const datatype = f['@_datatype'] === undefined ? undefined : String(f['@_datatype']);
    const column: RawColumn = { name, line, datatype, typeClass: datatype === undefined ? undefined : (VOT_DATATYPES[datatype] ?? 'other') };
    if (datatype === undefined || !(datatype in VOT_DATATYPES)) {
      problems.push({
        code: 'bad-datatype',
        line,
        column: name,
        message: 'unknown or missing VOTable datatype',
        expected: 'one of ' + Object.keys(VOT_DATATYPES).join(', '),
        found: shown(datatype),
      });
    }
    if (f['@_unit'] !== undefined) column.unit = String(f['@_unit']);
    return column;
  });
}

/** The document parsed, after the checks that it is UTF-8 and well-formed XML; null (with the problem pushed) when not. */
function parseDocument(text: string, problems: Problem[]): XmlNode | null {
  const declared = /^\s*<\?xml[^>]*encoding\s*=\s*["']([^"']+)["']/.exec(text);
  if (declared && !/^(utf-8|utf8|us-ascii|ascii)$/i.test(declared[1])) {
    problems.push({
      code: 'not-utf8',
      line: 1,
      message: 'the XML declaration names an encoding other than UTF-8',
      expected: 'encoding="UTF-8"',
      found: shown(declared[1]),
    });
    return null;
  }
  const valid = XMLValidator.validate(text);
  if (valid !== true) {
    problems.push({ code: 'bad-xml', line: valid.err.line, message: `the file is not well-formed XML: ${valid.err.msg}` });
    return null;
  }
  const parser = new XMLParser({
    ignoreAttributes: false,
    attributeNamePrefix: '@_',
    removeNSPrefix: true,
    parseTagValue: false,
    parseAttributeValue: false,
    trimValues: false,
    isArray: (name) => ARRAYS.has(name),
  });
  return parser.parse(text) as XmlNode;
}

/** The TABLEDATA rows, each with its line; null (with the problem pushed) for a serialisation not read. */
function readRows(table: XmlNode, scannable: string, tableLine: number, problems: Problem[]): RawRow[] | null {
  const data = table.DATA as XmlNode | undefined;
  const rows: RawRow[] = [];
  if (data && typeof data === 'object') {
    for (const other of ['BINARY', 'BINARY2', 'FITS']) {
      if (data[other] !== undefined) {
        problems.push({
          code: 'unsupported-serialisation',
          line: tagLines(scannable, other)[0] ?? tableLine,
          message: `the ${other} serialisation of VOTable is not read`,
          expected: 'TABLEDATA (rows as <TR><TD>...</TD></TR>)',
          found: other,
          hint: 'write the table with the TABLEDATA serialisation, or as ECSV',
        });
        return null;
      }
    }
    const tabledata = data.TABLEDATA as XmlNode | undefined;
    const trs = tabledata && typeof tabledata === 'object' ? asArray(tabledata.TR) : [];
    const trLines = tagLines(scannable, 'TR');
    trs.forEach((tr, i) => {
      const tds = Array.isArray(tr.TD) ? tr.TD : tr.TD === undefined ? [] : [tr.TD];
      rows.push({ line: trLines[i] ?? tableLine, cells: tds.map((td) => tdText(td).trim()) });
    });
  }
  return rows;
}

export function readVotable(bytes: Uint8Array): ParsedTable {
  const decoded = decodeUtf8(bytes);
  if ('problem' in decoded) return { problems: [decoded.problem] };
  const text = decoded.text;
  const problems: Problem[] = [];

  const doc = parseDocument(text, problems);
  if (doc === null) return { problems };
  const scannable = blankNonMarkup(text);
  const root = doc.VOTABLE;
  if (root === undefined || typeof root !== 'object') {
    problems.push({
      code: 'not-votable',
      line: 1,
      message: 'the root element is not VOTABLE',
      expected: '<VOTABLE>',
      found: `root elements ${
        Object.keys(doc)
          .filter((k) => !k.startsWith('?'))
          .join(', ') || 'none'
      }`,
    });
    return { problems };
  }
  const tables = collectTables(asArray((root as XmlNode).RESOURCE), []);
  const tableLines = tagLines(scannable, 'TABLE');
  if (tables.length !== 1) {
    problems.push({
      code: 'table-count',
      line: tableLines[1] ?? tagLines(scannable, 'VOTABLE')[0] ?? 1,
      message: 'a VOTable input must hold exactly one TABLE',
      expected: '1 TABLE',
      found: String(tables.length),
    });
    return { problems };
  }
  const table = tables[0];
  const tableLine = tableLines[0] ?? 1;

  const columns = readFields(table, scannable, tableLine, problems);
  if (columns.length === 0) {
    problems.push({ code: 'no-columns', line: tableLine, message: 'the TABLE declares no FIELD', expected: 'one FIELD per column', found: 'none' });
    return { problems };
  }

  const rows = readRows(table, scannable, tableLine, problems);
  if (rows === null) return { problems };
  return { table: { columns, headerLine: tableLine, rows }, problems };
}
