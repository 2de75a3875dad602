/**
 * VOTable inputs (TABLEDATA only): fields, units, empty cells, the lines of
 * FIELD and TR elements in messages, and the serialisations that are refused.
 */
import { readFileSync, writeFileSync } from 'node:fs';
import { join } from 'node:path';
import { describe, expect, test } from 'vitest';
import { readVotable } from '../../src/io/votable.ts';
import { astropy } from './astropy-tables.ts';
import { edited, issuesOf, lineOf, loadValid, onlyIssue, setCell, setUnit, validRelease, tempDir, votableText, writeRelease } from './fixtures.ts';

const enc = (s: string): Uint8Array => new TextEncoder().encode(s);
const vot = { formats: { systems: 'vot', parallax: 'vot', cepheids: 'xml' } } as const;

describe('VOTable: reading', () => {
  test('fields give names, datatypes and units; rows give cells; an empty TD is an absent value', () => {
    const t = validRelease().tables.systems!;
    const text = votableText(t);
    const p = readVotable(enc(text));
    expect(p.problems).toEqual([]);
    expect(p.table!.columns.map((c) => [c.name, c.datatype, c.unit, c.line])).toEqual(
      t.columns.map((c) => [c.name, c.datatype === 'string' ? 'char' : 'double', c.unit, lineOf(text, `name="${c.name}"`)]),
    );
    expect(p.table!.rows.map((r) => r.cells)).toEqual(t.rows);
    expect(p.table!.rows.map((r) => r.line)).toEqual(t.rows.map((r) => lineOf(text, `<TD>${r[0]}</TD>`)));
  });

  test('rows spread over several lines, comments and CDATA holding "<TR>" do not shift line numbers', () => {
    const text = [
      '<?xml version="1.0" encoding="UTF-8"?>',
      '<VOTABLE version="1.4">',
      '<!-- an example <TR><TD>not a row</TD></TR> -->',
      '<RESOURCE><TABLE>',
      '<FIELD name="star" datatype="char" arraysize="*"/>',
      '<FIELD name="parallax" datatype="double" unit="mas"/>',
      '<DATA><TABLEDATA>',
      '<TR>',
      '  <TD><![CDATA[s<TR>1]]></TD>',
      '  <TD>1.5</TD>',
      '</TR>',
      '<TR><TD>s&amp;2</TD><TD/></TR>',
      '</TABLEDATA></DATA></TABLE></RESOURCE></VOTABLE>',
      '',
    ].join('\r\n');
    const p = readVotable(enc(text));
    expect(p.problems).toEqual([]);
    expect(p.table!.rows).toEqual([
      { line: 8, cells: ['s<TR>1', '1.5'] },
      { line: 12, cells: ['s&2', ''] },
    ]);
  });

  test('a release with VOTable tables (.vot and .xml) gives the same rows as ECSV', () => {
    const a = loadValid(writeRelease(validRelease()));
    const b = loadValid(writeRelease(validRelease(), vot));
    const strip = <T extends { line: number }>(rows: T[]) => rows.map(({ line: _l, ...rest }) => rest);
    expect(strip(b.systems)).toEqual(strip(a.systems));
    expect(strip(b.parallax)).toEqual(strip(a.parallax));
    expect(strip(b.cepheids)).toEqual(strip(a.cepheids));
  });

  test('units of VOTable fields are converted (uas -> mas, h -> d)', () => {
    const def = edited((d) => {
      setUnit(d, 'parallax', 'parallax_err', 'uas');
      setCell(d, 'parallax', 0, 'parallax_err', '50');
      setUnit(d, 'cepheids', 'period', 'h');
      setCell(d, 'cepheids', 0, 'period', '48');
    });
    const r = loadValid(writeRelease(def, vot));
    expect(r.parallax[0].parallaxErrMas).toBe(0.05);
    expect(r.cepheids[0].periodDays).toBe(2);
  });

  test('a VOTable written by astropy (Debian python3-astropy) is read to the values written', () => {
    const dir = tempDir();
    const columns = [
      { name: 'star', unit: null, datatype: 'string' },
      { name: 'parallax', unit: 'mas', datatype: 'float64' },
      { name: 'period', unit: 'd', datatype: 'float64' },
    ];
    const rows = [
      ['v-1', '1.25', '3.5'],
      ['v<2>', '-0.5', '10.75'],
    ];
    const paths = { ecsv_comma: join(dir, 'c.ecsv'), ecsv_space: join(dir, 's.ecsv'), votable: join(dir, 'v.vot') };
    astropy({ op: 'write', columns, rows, ...paths });
    const p = readVotable(readFileSync(paths.votable));
    expect(p.problems).toEqual([]);
    expect(p.table!.columns.map((c) => [c.name, c.unit])).toEqual([
      ['star', undefined],
      ['parallax', 'mas'],
      ['period', 'd'],
    ]);
    expect(p.table!.rows.map((r) => [r.cells[0], Number(r.cells[1]), Number(r.cells[2])])).toEqual(rows.map((r) => [r[0], Number(r[1]), Number(r[2])]));
  });
});

describe('VOTable: broken files', () => {
  test('a bad cell is reported at the line of its TR', () => {
    const def = edited((d) => setCell(d, 'systems', 2, 'kind', 'nebula'));
    const dir = writeRelease(def, vot);
    const path = join(dir, 'systems.vot');
    const issue = onlyIssue(issuesOf(dir), 'not-allowed');
    expect(issue).toMatchObject({ file: path, line: lineOf(readFileSync(path, 'utf8'), '<TD>cedar</TD>'), column: 'kind', found: '"nebula"' });
  });

  test('a refused unit is reported at the line of its FIELD', () => {
    const def = edited((d) => setUnit(d, 'parallax', 'parallax', 'arcmin'));
    const dir = writeRelease(def, vot);
    const path = join(dir, 'parallax.vot');
    const issue = onlyIssue(issuesOf(dir), 'wrong-unit');
    expect(issue).toMatchObject({ file: path, line: lineOf(readFileSync(path, 'utf8'), 'name="parallax"'), column: 'parallax', found: '"arcmin"' });
  });

  test('a datatype that does not fit the column', () => {
    const t = validRelease().tables.parallax!;
    const text = votableText(t).replace('name="parallax" datatype="double"', 'name="parallax" datatype="char" arraysize="*"');
    const dir = writeRelease(edited((d) => delete d.tables.parallax));
    writeFileSync(join(dir, 'parallax.vot'), text);
    const issue = onlyIssue(issuesOf(dir), 'wrong-datatype');
    expect(issue).toMatchObject({ line: lineOf(text, 'name="parallax"'), column: 'parallax', found: '"char"' });
  });

  test.each(['BINARY', 'BINARY2', 'FITS'])('the %s serialisation is refused at its line', (kind) => {
    const text = votableText(validRelease().tables.systems!).replace(
      /<TABLEDATA>[\s\S]*<\/TABLEDATA>/,
      `<${kind}>\n<STREAM encoding="base64">AAAA</STREAM>\n</${kind}>`,
    );
    const p = readVotable(enc(text));
    expect(p.problems).toEqual([
      expect.objectContaining({
        code: 'unsupported-serialisation',
        line: lineOf(text, `<${kind}>`),
        found: kind,
        expected: expect.stringContaining('TABLEDATA'),
      }),
    ]);
  });

  test('XML that is not well formed: the line of the error', () => {
    const text = votableText(validRelease().tables.systems!).replace('<TD>birch</TD>', '<TD>birch</TX>');
    const p = readVotable(enc(text));
    expect(p.problems).toEqual([expect.objectContaining({ code: 'bad-xml', line: lineOf(text, '</TX>') })]);
  });

  test('two tables in one file, and none', () => {
    const one = votableText(validRelease().tables.systems!);
    const table = /<TABLE[\s\S]*<\/TABLE>/.exec(one)![0];
    const two = one.replace('</TABLE>', '</TABLE>\n' + table.replace('name="test"', 'name="second"'));
    expect(readVotable(enc(two)).problems).toEqual([expect.objectContaining({ code: 'table-count', found: '2', line: lineOf(two, 'name="second"') })]);
    const none = one.replace(table, '');
    expect(readVotable(enc(none)).problems).toEqual([expect.objectContaining({ code: 'table-count', found: '0' })]);
  });

  test('a row with a missing TD', () => {
    const text = votableText(validRelease().tables.systems!).replace('<TD>dune</TD><TD>field</TD>', '<TD>dune</TD>');
    const dir = writeRelease(edited((d) => delete d.tables.systems));
    writeFileSync(join(dir, 'systems.xml'), text);
    const issues = issuesOf(dir);
    expect(issues).toContainEqual(
      expect.objectContaining({ code: 'field-count', file: join(dir, 'systems.xml'), line: lineOf(text, '<TD>dune</TD>'), expected: '7 values', found: '6' }),
    );
  });

  test('an encoding other than UTF-8 is refused; the root must be VOTABLE', () => {
    const latin = votableText(validRelease().tables.systems!).replace('encoding="UTF-8"', 'encoding="ISO-8859-1"');
    expect(readVotable(enc(latin)).problems).toEqual([expect.objectContaining({ code: 'not-utf8', line: 1, found: '"ISO-8859-1"' })]);
    expect(readVotable(enc('<?xml version="1.0"?>\n<TABLE/>\n')).problems).toEqual([expect.objectContaining({ code: 'not-votable' })]);
  });
});
