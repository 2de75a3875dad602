import { readFileSync, writeFileSync } from 'node:fs';
import { join } from 'node:path';
import { describe, expect, test } from 'vitest';
import { readEcsv } from '../../src/io/ecsv.ts';
import type { ParsedTable, RawTable } from '../../src/io/raw-table.ts';
import { astropy } from './astropy-tables.ts';
import { ecsvText, issuesOf, lineOf, tempDir, validRelease, writeRelease, type TableDef } from './fixtures.ts';

const enc = (s: string): Uint8Array => new TextEncoder().encode(s);

function table(p: ParsedTable): RawTable {
  if (!p.table || p.problems.length) throw new Error('expected a clean parse: ' + JSON.stringify(p.problems));
  return p.table;
}

/** A table with text that needs quoting: a comma, a line break, a quote, spaces, an empty optional cell. */
const TRICKY: TableDef = {
  columns: [
    { name: 'star', datatype: 'string' },
    { name: 'parallax', datatype: 'float64', unit: 'mas' },
    { name: 'remark', datatype: 'string' },
    { name: 'ra', datatype: 'float64', unit: 'deg' },
  ],
  rows: [
    ['s-1', '1.5', 'plain', '10.0'],
    ['s-2', '2.5', 'two words, one comma', ''],
    ['s-3', '3.5', 'first line\nsecond line\nthird, with "quotes"', '30.0'],
    ['s-4', '4.5', '', '40.0'],
  ],
};

describe('ECSV: reading valid files', () => {
  test('columns, units, datatypes and declaration lines come from the YAML header', () => {
    const text = ecsvText(TRICKY);
    const t = table(readEcsv(enc(text)));
    expect(t.columns.map((c) => [c.name, c.datatype, c.unit])).toEqual([
      ['star', 'string', undefined],
      ['parallax', 'float64', 'mas'],
      ['remark', 'string', undefined],
      ['ra', 'float64', 'deg'],
    ]);
    expect(t.columns[1].unitLine).toBe(lineOf(text, 'name: parallax'));
    expect(t.headerLine).toBe(lineOf(text, 'star,parallax,remark,ra'));
  });

  test('quoted fields keep commas, line breaks and doubled quotes; lines after a multi-line field stay right', () => {
    const text = ecsvText(TRICKY);
    const t = table(readEcsv(enc(text)));
    expect(t.rows.map((r) => r.cells)).toEqual(TRICKY.rows);
    // Line of each row = the line where its id is written (s-3 spans three lines; s-4 comes after).
    expect(t.rows.map((r) => r.line)).toEqual(['s-1', 's-2', 's-3', 's-4'].map((id) => lineOf(text, `${id},`)));
    expect(t.rows[3].line - t.rows[2].line).toBe(3);
  });

  test('a byte-order mark and CRLF line ends give the same cells and the same line numbers', () => {
    const lf = table(readEcsv(enc(ecsvText(TRICKY))));
    const crlfText = ecsvText(TRICKY, { eol: '\r\n', bom: true });
    expect(crlfText.startsWith('\uFEFF# %ECSV')).toBe(true);
    const crlf = table(readEcsv(enc(crlfText)));
    // Inside a quoted field the writer keeps the LF it was given, outside every line ends in CRLF.
    expect(crlf.rows.map((r) => r.cells)).toEqual(lf.rows.map((r) => r.cells));
    expect(crlf.rows.map((r) => r.line)).toEqual(lf.rows.map((r) => r.line));
    expect(crlf.columns).toEqual(lf.columns);
  });

  test('CRLF inside a quoted field counts as one line break', () => {
    const text =
      '# %ECSV 1.0\r\n# ---\r\n# delimiter: \',\'\r\n# datatype:\r\n# - {name: a, datatype: string}\r\n# - {name: b, datatype: float64}\r\na,b\r\n"x\r\ny",1\r\nz,2\r\n';
    const t = table(readEcsv(enc(text)));
    expect(t.rows.map((r) => r.line)).toEqual([8, 10]);
    expect(t.rows[0].cells[0]).toBe('x\r\ny');
  });

  test('space-delimited: runs of spaces separate fields, "" is an empty value, quoted text keeps its spaces', () => {
    const comma = table(readEcsv(enc(ecsvText(TRICKY))));
    const spaced = ecsvText(TRICKY, { delimiter: ' ' });
    // Align columns by hand as people do, with extra spaces between fields and at the line start.
    const aligned = spaced.replace(/^s-1 1.5 plain 10.0$/m, '  s-1    1.5   plain   10.0  ');
    expect(aligned).not.toBe(spaced);
    const t = table(readEcsv(enc(aligned)));
    expect(t.rows.map((r) => r.cells)).toEqual(comma.rows.map((r) => r.cells));
    expect(t.rows.map((r) => r.line)).toEqual(comma.rows.map((r) => r.line));
  });

  test('no delimiter key means a space, the ECSV default', () => {
    const t = table(readEcsv(enc(ecsvText(TRICKY, { delimiter: ' ', omitDelimiter: true }))));
    expect(t.rows[1].cells).toEqual(['s-2', '2.5', 'two words, one comma', '']);
  });

  test('blank lines in the body are skipped but still counted', () => {
    const text = ecsvText(TRICKY).replace('\ns-2,', '\n\n\ns-2,');
    const t = table(readEcsv(enc(text)));
    expect(t.rows[1].line).toBe(lineOf(text, 's-2,'));
    expect(t.rows[1].line - t.rows[0].line).toBe(3);
  });
});

describe('ECSV: comments and blanks in the body', () => {
  test('a body line starting with # is a comment (as in astropy), and line numbers after it stay right', () => {
    const text = ecsvText(TRICKY).replace('\ns-2,', '\n# a note on the next row, with a comma\ns-2,');
    const t = table(readEcsv(enc(text)));
    expect(t.rows.map((r) => r.cells[0])).toEqual(['s-1', 's-2', 's-3', 's-4']);
    expect(t.rows.map((r) => r.line)).toEqual(['s-1', 's-2', 's-3', 's-4'].map((id) => lineOf(text, `${id},`)));
  });

  test('a # inside a field or in a quoted first field is data', () => {
    const rows = [['"#7"', '1.5', 'x#y', '']];
    const text = ecsvText({ ...TRICKY, rows: [] }) + rows.map((r) => r.join(',')).join('\n') + '\n';
    const t = table(readEcsv(enc(text)));
    expect(t.rows.map((r) => r.cells)).toEqual([['#7', '1.5', 'x#y', '']]);
  });

  test('blanks around unquoted cells are dropped; inside quotes they are kept', () => {
    const text = ecsvText({ ...TRICKY, rows: [] }) + 's-1 , 1.5 ," two  spaces ",\n';
    const t = table(readEcsv(enc(text)));
    expect(t.rows[0].cells).toEqual(['s-1', '1.5', ' two  spaces ', '']);
  });
});

describe('ECSV: compared with astropy (Debian python3-astropy), the reference ECSV implementation', () => {
  test('astropy reads our fixture files (both delimiters) to the same cells', () => {
    const dir = tempDir();
    for (const delimiter of [',', ' '] as const) {
      const path = join(dir, `t${delimiter === ',' ? 'comma' : 'space'}.ecsv`);
      const text = ecsvText(TRICKY, { delimiter });
      writeFileSync(path, text);
      const ref = astropy<{ columns: { name: string; unit: string | null }[]; rows: (string | number | null)[][] }>({ op: 'read_ecsv', path });
      const ours = table(readEcsv(readFileSync(path)));
      expect(ref.columns.map((c) => c.name)).toEqual(ours.columns.map((c) => c.name));
      expect(ref.columns.map((c) => c.unit ?? undefined)).toEqual(ours.columns.map((c) => c.unit));
      ours.rows.forEach((r, i) => {
        r.cells.forEach((cell, j) => {
          const want = ref.rows[i][j];
          // astropy masks an empty numeric cell (null) and reads an empty string cell as ''.
          if (want === null) expect(cell).toBe('');
          else if (typeof want === 'number') expect(Number(cell)).toBe(want);
          else expect(cell).toBe(want);
        });
      });
    }
  });

  test('files written by astropy (comma and space delimiters) read back to the values written', () => {
    const dir = tempDir();
    const columns = [
      { name: 'star', unit: null, datatype: 'string' },
      { name: 'parallax', unit: 'mas', datatype: 'float64' },
      { name: 'period', unit: 'd', datatype: 'float64' },
      { name: 'note', unit: null, datatype: 'string' },
    ];
    const rows = [
      ['w-1', '1.25', '3.5', 'with space'],
      ['w-2', '-0.5', '10.75', 'a, comma'],
      ['w-3', '0.001', '100.0', 'say "hi"'],
    ];
    const paths = { ecsv_comma: join(dir, 'c.ecsv'), ecsv_space: join(dir, 's.ecsv'), votable: join(dir, 'v.vot') };
    astropy({ op: 'write', columns, rows, ...paths });
    for (const path of [paths.ecsv_comma, paths.ecsv_space]) {
      const t = table(readEcsv(readFileSync(path)));
      expect(t.columns.map((c) => [c.name, c.unit])).toEqual(columns.map((c) => [c.name, c.unit ?? undefined]));
      expect(t.rows.map((r) => [r.cells[0], Number(r.cells[1]), Number(r.cells[2]), r.cells[3]])).toEqual(
        rows.map((r) => [r[0], Number(r[1]), Number(r[2]), r[3]]),
      );
    }
  });
});

describe('ECSV: broken files (line, column, expected, found)', () => {
  const good = (): string => ecsvText(TRICKY);

  test('no signature line', () => {
    const p = readEcsv(enc('star,parallax\ns-1,1.5\n'));
    expect(p.table).toBeUndefined();
    expect(p.problems).toEqual([expect.objectContaining({ code: 'not-ecsv', line: 1, expected: '"# %ECSV 1.0"', found: '"star,parallax"' })]);
  });

  test('a future major version is refused', () => {
    const p = readEcsv(enc(good().replace('%ECSV 1.0', '%ECSV 2.0')));
    expect(p.problems).toEqual([expect.objectContaining({ code: 'ecsv-version', line: 1, found: '2.0' })]);
  });

  test('a header line without the space after #', () => {
    const text = good().replace('# schema: astropy-2.0', '#schema: astropy-2.0');
    const p = readEcsv(enc(text));
    expect(p.problems).toContainEqual(expect.objectContaining({ code: 'bad-header-line', line: lineOf(text, '#schema'), found: '"#schema: astropy-2.0"' }));
  });

  test('no "# ---" on line 2', () => {
    const p = readEcsv(enc(good().replace('# ---\n', '')));
    expect(p.problems).toEqual([expect.objectContaining({ code: 'bad-header', line: 2, expected: '"# ---"' })]);
  });

  test('a YAML error is reported at its file line', () => {
    const text = good().replace('# - {name: parallax, unit: "mas", datatype: float64}', '# - {name: parallax, unit: "mas", datatype: float64');
    expect(text).not.toBe(good());
    const p = readEcsv(enc(text));
    expect(p.table).toBeUndefined();
    expect(p.problems[0].code).toBe('bad-header-yaml');
    // The unclosed brace is found on the entry's line or the next one, never in the YAML's own numbering (one less).
    const at = lineOf(text, 'name: parallax');
    expect([at, at + 1]).toContain(p.problems[0].line);
  });

  test('an unsupported delimiter', () => {
    const text = good().replace("# delimiter: ','", "# delimiter: ';'");
    const p = readEcsv(enc(text));
    expect(p.problems).toEqual([expect.objectContaining({ code: 'bad-delimiter', line: lineOf(text, 'delimiter'), expected: "',' or ' '", found: '";"' })]);
  });

  test('an unknown datatype names the column and its header line', () => {
    const text = good().replace('name: ra, unit: "deg", datatype: float64', 'name: ra, unit: "deg", datatype: double');
    const p = readEcsv(enc(text));
    expect(p.problems).toContainEqual(expect.objectContaining({ code: 'bad-datatype', line: lineOf(text, 'name: ra'), column: 'ra', found: '"double"' }));
  });

  test('a column-name row that differs from the header', () => {
    const text = good().replace('star,parallax,remark,ra', 'star,parallax,ra,remark');
    const p = readEcsv(enc(text));
    expect(p.problems).toEqual([
      expect.objectContaining({
        code: 'column-names-mismatch',
        line: lineOf(text, 'star,parallax,ra,remark'),
        expected: 'star,parallax,remark,ra',
        found: 'star,parallax,ra,remark',
      }),
    ]);
  });

  test('commas with no delimiter key: the hint says the default is a space', () => {
    const text = ecsvText(TRICKY, { omitDelimiter: true });
    const p = readEcsv(enc(text));
    const issue = p.problems.find((x) => x.code === 'column-names-mismatch');
    expect(issue?.line).toBe(lineOf(text, 'star,parallax,remark,ra'));
    expect(issue?.hint).toMatch(/default \(a space\)/);
  });

  test('a header with no body', () => {
    const text =
      good()
        .split('\n')
        .filter((l) => l.startsWith('#'))
        .join('\n') + '\n';
    const p = readEcsv(enc(text));
    expect(p.problems).toEqual([expect.objectContaining({ code: 'no-column-names', line: text.split('\n').length })]);
  });

  test('a quoted field never closed: reported at the line where its row begins', () => {
    const text = good().replace('s-4,4.5,"",40.0', 's-4,4.5,"open,40.0').replace('s-4,4.5,,40.0', 's-4,4.5,"open,40.0');
    expect(text).toContain('"open');
    const p = readEcsv(enc(text));
    expect(p.problems).toContainEqual(expect.objectContaining({ code: 'bad-quoting', line: lineOf(text, 's-4,') }));
    // Rows before the broken one are still returned.
    expect(p.table?.rows.map((r) => r.cells[0])).toEqual(['s-1', 's-2', 's-3']);
  });

  test('bytes that are not UTF-8 are reported at their line', () => {
    const text = good();
    const at = lineOf(text, 's-2,');
    const bytes = Buffer.from(text.replace('s-2,', 's-\u00e9,'), 'latin1');
    const p = readEcsv(bytes);
    expect(p.problems).toEqual([expect.objectContaining({ code: 'not-utf8', line: at, expected: 'UTF-8' })]);
  });

  test('UTF-16 is named as such', () => {
    const bytes = Buffer.concat([Buffer.from([0xff, 0xfe]), Buffer.from(good(), 'utf16le')]);
    const p = readEcsv(bytes);
    expect(p.problems[0]).toMatchObject({ code: 'not-utf8', found: 'UTF-16 (byte-order mark)' });
  });
});

describe('ECSV through loadRelease: the file path is part of every issue', () => {
  test('a header problem names release-dir/file', () => {
    const def = validRelease();
    const dir = writeRelease(def);
    const path = join(dir, 'parallax.ecsv');
    writeFileSync(path, readFileSync(path, 'utf8').replace('# %ECSV 1.0', '# %CSV 1.0'));
    const issues = issuesOf(dir);
    expect(issues).toEqual([expect.objectContaining({ code: 'not-ecsv', file: path, line: 1 })]);
  });
});
