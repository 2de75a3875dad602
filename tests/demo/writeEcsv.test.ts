/**
 * ECSV 1.0 and CSV writer (src/io/writeEcsv.ts).
 *
 * Kinds of test, as labelled:
 *   [edge]      one rule of the format per case; expected bytes written by hand
 *               from the ECSV 1.0 text (astropy APE 6: "# %ECSV 1.0", "# ---",
 *               YAML header, default delimiter a space, quoted fields with doubled
 *               quotes) and RFC 4180;
 *   [reference] the written file read back by independent readers: the `yaml`
 *               and `csv-parse` libraries, and astropy's ECSV reader (Debian
 *               python3-astropy, astropy.table.Table.read(format="ascii.ecsv")).
 */
import { execFileSync } from 'node:child_process';
import { mkdtempSync, rmSync, writeFileSync } from 'node:fs';
import { tmpdir } from 'node:os';
import { dirname, join } from 'node:path';
import { fileURLToPath } from 'node:url';
import { parse as parseCsv } from 'csv-parse/sync';
import { parse as parseYaml } from 'yaml';
import { afterAll, describe, expect, it } from 'vitest';
import { createRng } from '../../src/demo/random.ts';
import { TableWriteError, formatFloat, writeCsv, writeEcsv, type EcsvColumn, type TableRow } from '../../src/io/writeEcsv.ts';
import { astropyPython } from '../reference/astropy.ts';
import { parseEcsvText } from './ecsvText.ts';

const HERE = dirname(fileURLToPath(import.meta.url));

const SMALL_COLUMNS: EcsvColumn[] = [
  { name: 'star', datatype: 'string', description: 'Star id' },
  { name: 'parallax', datatype: 'float64', unit: 'mas', description: 'Parallax, as measured' },
  { name: 'count', datatype: 'int64' },
  { name: 'ok', datatype: 'bool' },
];
const SMALL_ROWS: TableRow[] = [
  { star: 'A-1', parallax: 1.5, count: 2, ok: true },
  { star: 'B,2', parallax: null, count: -3, ok: false },
  { star: 'say "hi"', parallax: -0.25, count: null, ok: null },
];

describe('writeEcsv [edge]', () => {
  it('writes the ECSV 1.0 preamble, an explicit comma delimiter, the datatype list and a quoted CSV body', () => {
    const expected = [
      '# %ECSV 1.0',
      '# ---',
      "# delimiter: ','",
      '# datatype:',
      '# - {name: star, datatype: string, description: Star id}',
      '# - {name: parallax, unit: mas, datatype: float64, description: "Parallax, as measured"}',
      '# - {name: count, datatype: int64}',
      '# - {name: ok, datatype: bool}',
      '# meta:',
      '#   source: unit test',
      'star,parallax,count,ok',
      'A-1,1.5,2,True',
      '"B,2",,-3,False',
      '"say ""hi""",-0.25,,',
      '',
    ].join('\n');
    expect(writeEcsv(SMALL_COLUMNS, SMALL_ROWS, { source: 'unit test' })).toBe(expected);
  });

  it('omits meta when there is none and is byte-for-byte deterministic', () => {
    const a = writeEcsv(SMALL_COLUMNS, SMALL_ROWS);
    expect(a).toBe(writeEcsv(SMALL_COLUMNS, SMALL_ROWS));
    expect(a).not.toContain('meta');
    expect(a.endsWith('\n')).toBe(true);
    expect(a).not.toContain('\r');
  });

  it('quotes a field that starts with "#" (an ECSV data line starting with # is a comment)', () => {
    const text = writeEcsv([{ name: 'id', datatype: 'string' }], [{ id: '#1' }, { id: 'a#b' }]);
    expect(text.split('\n').slice(-3)).toEqual(['"#1"', 'a#b', '']);
  });

  it('writes an empty string as "" and a null as an empty field', () => {
    const text = writeEcsv(
      [
        { name: 'a', datatype: 'string' },
        { name: 'b', datatype: 'string' },
      ],
      [{ a: '', b: null }],
    );
    expect(text.split('\n').at(-2)).toBe('"",');
  });

  it('quotes YAML words that a YAML 1.1 reader would turn into booleans or null', () => {
    const text = writeEcsv(
      [
        { name: 'n', datatype: 'float64', description: 'yes' },
        { name: 'off', datatype: 'float64', unit: 'null' },
      ],
      [{ n: 1, off: 2 }],
    );
    const header = parseYaml(parseHeaderYaml(text), { version: '1.1' }) as { datatype: Record<string, unknown>[] };
    expect(header.datatype[0]).toEqual({ name: 'n', datatype: 'float64', description: 'yes' });
    expect(header.datatype[1]).toEqual({ name: 'off', unit: 'null', datatype: 'float64' });
  });

  it('refuses malformed input with a message naming the row and column', () => {
    expect(() => writeEcsv([], [])).toThrow(TableWriteError);
    expect(() =>
      writeEcsv(
        [
          { name: 'a', datatype: 'string' },
          { name: 'a', datatype: 'int64' },
        ],
        [],
      ),
    ).toThrow(/appears twice/);
    expect(() => writeEcsv([{ name: 'x', datatype: 'float64' }], [{ x: '1' }])).toThrow(/row 0 column "x": expected a number/);
    expect(() => writeEcsv([{ name: 'k', datatype: 'int64' }], [{ k: 1 }, { k: 1.5 }])).toThrow(/row 1 column "k": expected a safe integer/);
    expect(() => writeEcsv([{ name: 'x', datatype: 'float64' }], [{}])).toThrow(/row 0 column "x": value missing/);
    expect(() => writeEcsv([{ name: 's', datatype: 'string' }], [{ s: 3 }])).toThrow(/expected a string/);
    expect(() => writeEcsv([{ name: 's', datatype: 'string', description: 'bad \ud800' }], [])).toThrow(/not valid Unicode/);
  });
});

describe('formatFloat [edge]', () => {
  it('writes the shortest decimal that reads back as the same double', () => {
    expect(formatFloat(0.1 + 0.2)).toBe('0.30000000000000004');
    expect(formatFloat(20.0436)).toBe('20.0436');
    expect(formatFloat(1e21)).toBe('1e+21');
    expect(formatFloat(1e-7)).toBe('1e-7');
    expect(formatFloat(5e-324)).toBe('5e-324');
    expect(formatFloat(-0)).toBe('-0');
    expect(formatFloat(NaN)).toBe('nan');
    expect(formatFloat(Infinity)).toBe('inf');
    expect(formatFloat(-Infinity)).toBe('-inf');
  });

  it('round-trips 20000 seeded doubles of every magnitude exactly', () => {
    const rng = createRng(1, 'formatFloat');
    for (let i = 0; i < 20000; i++) {
      const x = (rng.uniform() - 0.5) * 10 ** rng.int(-320, 300);
      expect(Number(formatFloat(x))).toBe(x);
    }
  });
});

describe('writeCsv [edge]', () => {
  it('writes RFC 4180 fields (quotes only where needed) with a header row', () => {
    expect(writeCsv(SMALL_COLUMNS, SMALL_ROWS)).toBe(['star,parallax,count,ok', 'A-1,1.5,2,True', '"B,2",,-3,False', '"say ""hi""",-0.25,,', ''].join('\n'));
    // '#' has no meaning in plain CSV, so it is not quoted there.
    expect(writeCsv([{ name: 'id', datatype: 'string' }], [{ id: '#1' }])).toBe('id\n#1\n');
  });
});

/** Strings chosen to break naive writers: delimiters, quotes, line breaks, comment marks, YAML syntax, non-ASCII. */
const AWKWARD = ['plain', 'has,comma', 'say "hi"', 'two\nlines', 'cr\rhere', '#hash', 'ünïcødé ✓', "it's", 'a: b', '[x] {y}', '- dash', '1.5', 'tab\tinside'];
const AWKWARD_COLUMNS: EcsvColumn[] = [
  { name: 'label', datatype: 'string', description: 'Label, with "quotes": and #hash [x] {y}' },
  { name: 'x', datatype: 'float64', unit: 'mas', description: 'A float' },
  { name: 'k', datatype: 'int64', unit: 'd' },
  { name: 'flag', datatype: 'bool', description: 'yes' },
  { name: 'odd, name', datatype: 'string', unit: 'deg' },
];
function awkwardRows(): TableRow[] {
  const xs = [0.1, -0, 1e-7, 1.2345678901234567e300, NaN, Infinity, -Infinity, 3, null, -20.0436, 5e-324, 42, 0.30000000000000004];
  return AWKWARD.map((label, i) => ({
    label,
    x: xs[i]!,
    k: i % 4 === 3 ? null : (i - 6) * 1234567,
    flag: i % 5 === 4 ? null : i % 2 === 0,
    'odd, name': AWKWARD[(i + 3) % AWKWARD.length]!,
  }));
}

describe('writeEcsv read back by yaml + csv-parse [reference]', () => {
  it('gives back every name, unit, description, meta value and cell', () => {
    const rows = awkwardRows();
    const meta = { source: 'test: a, b', nested: { list: [1, 'two', null, true], 'key with space': 0.5, empty: [], obj: {} } };
    const parsed = parseEcsvText(writeEcsv(AWKWARD_COLUMNS, rows, meta));
    expect(parsed.header.delimiter).toBe(',');
    expect(parsed.header.datatype).toEqual(AWKWARD_COLUMNS);
    expect(parsed.header.meta).toEqual(meta);
    expect(parsed.names).toEqual(AWKWARD_COLUMNS.map((c) => c.name));
    expect(parsed.cells.map((r) => r[0])).toEqual(AWKWARD);
    parsed.cells.forEach((cells, i) => {
      const row = rows[i]!;
      expect(cells[4]).toBe(row['odd, name']);
      const x = row.x as number | null;
      if (x === null) expect(cells[1]).toBe('');
      else if (Number.isNaN(x)) expect(cells[1]).toBe('nan');
      else if (!Number.isFinite(x)) expect(cells[1]).toBe(x > 0 ? 'inf' : '-inf');
      else expect(Object.is(Number(cells[1]), x)).toBe(true);
      expect(cells[2]).toBe(row.k === null ? '' : String(row.k));
      expect(cells[3]).toBe(row.flag === null ? '' : row.flag ? 'True' : 'False');
    });
  });

  it('writeCsv output parses back to the same cells', () => {
    const rows = awkwardRows();
    const [names, ...cells] = parseCsv(writeCsv(AWKWARD_COLUMNS, rows)) as string[][];
    expect(names).toEqual(AWKWARD_COLUMNS.map((c) => c.name));
    expect(cells.map((r) => r[0])).toEqual(AWKWARD);
    expect(cells.map((r) => r[4])).toEqual(rows.map((r) => r['odd, name']));
  });
});

describe('writeEcsv read back by astropy [reference]', () => {
  const dir = mkdtempSync(join(tmpdir(), 'rungbook-ecsv-'));
  afterAll(() => rmSync(dir, { recursive: true, force: true }));

  it('astropy reads the same columns, units, descriptions, meta and values', () => {
    const rows = awkwardRows();
    const meta = { source: 'test: a, b', nested: { list: [1, 'two', null, true], 'key with space': 0.5 } };
    const file = join(dir, 'awkward.ecsv');
    writeFileSync(file, writeEcsv(AWKWARD_COLUMNS, rows, meta));
    const out = JSON.parse(execFileSync(astropyPython(), [join(HERE, 'astropy_read_ecsv.py'), file], { encoding: 'utf8' })) as {
      columns: { name: string; kind: string; unit: string | null; description: string | null; values: unknown[] }[];
      meta: unknown;
    };
    expect(out.columns.map((c) => c.name)).toEqual(AWKWARD_COLUMNS.map((c) => c.name));
    expect(out.columns.map((c) => c.kind)).toEqual(['U', 'f', 'i', 'b', 'U']);
    expect(out.columns.map((c) => c.unit)).toEqual([null, 'mas', 'd', null, 'deg']);
    expect(out.columns.map((c) => c.description)).toEqual(AWKWARD_COLUMNS.map((c) => c.description ?? null));
    expect(out.meta).toEqual(meta);
    // astropy's reader strips blanks at the ends of a string cell (none of AWKWARD has any), and
    // opens the file in Python's universal-newline mode, which turns a lone CR into LF.
    const asAstropyReads = (s: string): string => s.replace(/\r/g, '\n');
    expect(out.columns[0]!.values).toEqual(AWKWARD.map(asAstropyReads));
    expect(out.columns[4]!.values).toEqual(rows.map((r) => asAstropyReads(r['odd, name'] as string)));
    const expectedX = rows.map((r) => {
      const x = r.x as number | null;
      if (x === null) return null;
      if (Number.isNaN(x)) return 'nan';
      if (!Number.isFinite(x)) return x > 0 ? 'inf' : '-inf';
      return Object.is(x, -0) ? '-0' : x;
    });
    expect(out.columns[1]!.values).toEqual(expectedX);
    expect(out.columns[2]!.values).toEqual(rows.map((r) => r.k));
    expect(out.columns[3]!.values).toEqual(rows.map((r) => r.flag));
  });

  it('astropy reads a demo table with its float precision intact', () => {
    const columns: EcsvColumn[] = [
      { name: 'star', datatype: 'string' },
      { name: 'parallax', datatype: 'float64', unit: 'mas' },
    ];
    const rng = createRng(2, 'astropy-floats');
    const rows = Array.from({ length: 200 }, (_, i) => ({ star: `s${i}`, parallax: rng.gauss(1, 3) * 10 ** rng.int(-5, 5) }));
    const file = join(dir, 'floats.ecsv');
    writeFileSync(file, writeEcsv(columns, rows));
    const out = JSON.parse(execFileSync(astropyPython(), [join(HERE, 'astropy_read_ecsv.py'), file], { encoding: 'utf8' })) as {
      columns: { values: unknown[] }[];
    };
    expect(out.columns[1]!.values).toEqual(rows.map((r) => r.parallax));
  });
});

function parseHeaderYaml(text: string): string {
  const lines = text.split('\n');
  const header: string[] = [];
  for (const line of lines.slice(2)) {
    if (!line.startsWith('#')) break;
    header.push(line.slice(2));
  }
  return header.join('\n');
}
