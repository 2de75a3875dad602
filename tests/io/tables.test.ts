/**
 * The table rules of the contract, each checked with a broken copy of a valid
 * release: the issue must name the file, the line as an editor shows it, the
 * column, and what was expected and found.
 */
import { readFileSync, writeFileSync } from 'node:fs';
import { join } from 'node:path';
import { describe, expect, test } from 'vitest';
import { TABLE_SPECS } from '../../src/registry/tables.ts';
import { TABLE_NAMES, type TableName } from '../../src/types/release.ts';
import { REL_1E15, relErr } from '../tolerances.ts';
import { dropColumn, edited, issuesOf, lineOf, loadValid, onlyIssue, setCell, setUnit, validRelease, writeRelease, type ReleaseDef } from './fixtures.ts';

const fileText = (dir: string, table: TableName): string => readFileSync(join(dir, `${table}.ecsv`), 'utf8');
/** In the fixture ECSV the column-name row follows the "# schema:" line. */
const namesRowLine = (text: string): number => lineOf(text, '# schema:') + 1;
/** Line of row `i` of a fixture table: the line holding its first cell. */
const rowLine = (def: ReleaseDef, dir: string, table: TableName, i: number): number =>
  lineOf(fileText(dir, table), def.tables[table]!.rows[i][0] + ',', namesRowLine(fileText(dir, table)));

const fixtureColumns = (table: TableName): string[] => validRelease().tables[table]!.columns.map((c) => c.name);
const specOf = (table: TableName, column: string) => TABLE_SPECS[table].columns.find((c) => c.name === column)!;

/** Every (table, column) of the fixture that the contract requires. */
const REQUIRED = TABLE_NAMES.flatMap((t) =>
  fixtureColumns(t)
    .filter((c) => specOf(t, c)?.required)
    .map((c) => [t, c] as [TableName, string]),
);
const NUMERIC = TABLE_NAMES.flatMap((t) =>
  fixtureColumns(t)
    .filter((c) => specOf(t, c)?.type === 'number')
    .map((c) => [t, c] as [TableName, string]),
);
const POSITIVE = TABLE_NAMES.flatMap((t) =>
  fixtureColumns(t)
    .filter((c) => specOf(t, c)?.positive)
    .map((c) => [t, c] as [TableName, string]),
);

describe('the contract itself, as the schema encodes it', () => {
  test('every *_err column, the period and the Hubble-flow redshift must be > 0, and nothing else', () => {
    const positive = TABLE_NAMES.flatMap((t) => TABLE_SPECS[t].columns.filter((c) => c.positive).map((c) => `${t}.${c.name}`));
    // The redshift: the model's Hubble-flow modulus is 5 log10(c z f(z)), defined for z > 0 only (content/guide/input-format.md, the model).
    const expected = TABLE_NAMES.flatMap((t) =>
      TABLE_SPECS[t].columns
        .filter((c) => c.name.endsWith('_err') || c.name === 'period' || (t === 'sn_hubble_flow' && c.name === 'z'))
        .map((c) => `${t}.${c.name}`),
    );
    expect(positive).toEqual(expected);
    // Counted by hand from the contract as agreed (content/guide/input-format.md), independently of the registry: systems 2, parallax 1, main_sequence 2,
    // cepheids 4 (period and three *_err), sn_calibrators 3, sn_hubble_flow 5 (z and four *_err).
    expect(positive.length).toBe(17);
  });

  test('optional columns are exactly those optional in the contract as agreed (list kept by hand, independent of the registry)', () => {
    const optional = TABLE_NAMES.flatMap((t) => TABLE_SPECS[t].columns.filter((c) => !c.required).map((c) => `${t}.${c.name}`));
    expect(optional).toEqual([
      'systems.feh',
      'systems.feh_err',
      'systems.ebv',
      'systems.ebv_err',
      'systems.age_gyr',
      'parallax.ra',
      'parallax.dec',
      'cepheids.oh',
      'sn_calibrators.cov_mb_x1',
      'sn_calibrators.cov_mb_c',
      'sn_calibrators.cov_x1_c',
      'sn_calibrators.host_logmass',
      'sn_hubble_flow.cov_mb_x1',
      'sn_hubble_flow.cov_mb_c',
      'sn_hubble_flow.cov_x1_c',
      'sn_hubble_flow.host_logmass',
    ]);
  });

  test('the valid fixture loads', () => {
    const r = loadValid(writeRelease(validRelease()));
    expect([r.systems.length, r.parallax.length, r.mainSequence.length, r.cepheids.length, r.snCalibrators.length, r.snHubbleFlow.length]).toEqual([
      4, 3, 2, 2, 1, 2,
    ]);
  });
});

describe('required columns', () => {
  test.each(REQUIRED)('%s without column %s', (table, column) => {
    const def = edited((d) => dropColumn(d, table, column));
    const dir = writeRelease(def);
    const issue = onlyIssue(issuesOf(dir), 'missing-column');
    expect(issue).toMatchObject({
      file: join(dir, `${table}.ecsv`),
      line: namesRowLine(fileText(dir, table)),
      column,
      expected: `a column "${column}"`,
    });
    expect(issue.found).toMatch(/^columns /);
  });

  test('a misnamed column gets a hint naming it', () => {
    const def = edited((d) => {
      d.tables.parallax!.columns.find((c) => c.name === 'parallax_err')!.name = 'parallax_error';
    });
    const issue = onlyIssue(issuesOf(writeRelease(def)), 'missing-column');
    expect(issue.hint).toBe('is "parallax_error" meant to be "parallax_err"?');
  });

  test.each(REQUIRED)('%s: an empty cell in required column %s', (table, column) => {
    const def = edited((d) => setCell(d, table, 0, column, ''));
    const dir = writeRelease(def);
    const issue = onlyIssue(issuesOf(dir), 'missing-value');
    // The row is found by its second cell when the first (its id) is the one emptied.
    const text = fileText(dir, table);
    const firstRow = namesRowLine(text) + 1;
    expect(issue).toMatchObject({ file: join(dir, `${table}.ecsv`), line: firstRow, column, expected: 'a value', found: 'an empty cell' });
  });
});

describe('numbers', () => {
  test.each(NUMERIC)('%s.%s: nan, inf and text are errors, with the value found', (table, column) => {
    for (const [bad, code] of [
      ['nan', 'not-finite'],
      ['NaN', 'not-finite'],
      ['inf', 'not-finite'],
      ['-Infinity', 'not-finite'],
      ['1e999', 'not-finite'],
      ['abc', 'not-a-number'],
      ['0x10', 'not-a-number'],
      ['1.2.3', 'not-a-number'],
      ['1,5', 'not-a-number'],
    ]) {
      const def = edited((d) => setCell(d, table, 1 % d.tables[table]!.rows.length, column, bad));
      const dir = writeRelease(def);
      const row = 1 % def.tables[table]!.rows.length;
      const issue = onlyIssue(issuesOf(dir), code);
      expect(issue, `${bad}`).toMatchObject({ file: join(dir, `${table}.ecsv`), line: rowLine(def, dir, table, row), column, found: JSON.stringify(bad) });
      expect(issue.expected).toBe(code === 'not-finite' ? 'a finite number' : 'a number');
    }
  });

  test.each(POSITIVE)('%s.%s must be > 0', (table, column) => {
    for (const bad of ['0', '-0.01', '-0']) {
      const def = edited((d) => setCell(d, table, 0, column, bad));
      const dir = writeRelease(def);
      const issue = onlyIssue(issuesOf(dir), 'not-positive');
      expect(issue).toMatchObject({ file: join(dir, `${table}.ecsv`), line: rowLine(def, dir, table, 0), column, expected: '> 0', found: JSON.stringify(bad) });
    }
  });

  test('parallaxes may be zero or negative, as published', () => {
    const def = edited((d) => {
      setCell(d, 'parallax', 0, 'parallax', '0');
      setCell(d, 'parallax', 1, 'parallax', '-0.35');
    });
    const r = loadValid(writeRelease(def));
    expect(r.parallax.map((p) => p.parallaxMas)).toEqual([0, -0.35, 3.2]);
  });

  test('an integer datatype with a fractional value', () => {
    const def = edited((d) => {
      d.tables.main_sequence!.columns.find((c) => c.name === 'mag')!.datatype = 'int64';
      setCell(d, 'main_sequence', 0, 'mag', '7');
    });
    const dir = writeRelease(def);
    const issue = onlyIssue(issuesOf(dir), 'not-an-integer');
    expect(issue).toMatchObject({ line: rowLine(def, dir, 'main_sequence', 1), column: 'mag', found: '"9.80"' });
  });
});

describe('text columns', () => {
  test('ids are compared exactly: a quoted " alder " is not alder; a quoted " 1.5 " is still a number', () => {
    const def = edited((d) => {
      setCell(d, 'parallax', 0, 'system', ' alder ');
      setCell(d, 'parallax', 1, 'parallax', ' 21.40 ');
    });
    const dir = writeRelease(def);
    const issues = issuesOf(dir);
    expect(issues.map((i) => [i.code, i.line, i.found])).toEqual([['unknown-system', rowLine(def, dir, 'parallax', 0), '" alder "']]);
  });

  test('kind is cluster, galaxy or field', () => {
    for (const bad of ['globular', 'Cluster', 'group']) {
      const def = edited((d) => setCell(d, 'systems', 2, 'kind', bad));
      const dir = writeRelease(def);
      const issue = onlyIssue(issuesOf(dir), 'not-allowed');
      expect(issue).toMatchObject({
        file: join(dir, 'systems.ecsv'),
        line: rowLine(def, dir, 'systems', 2),
        column: 'kind',
        expected: 'cluster, galaxy or field',
        found: JSON.stringify(bad),
      });
    }
  });

  test('an id holding a control character (a terminal escape, DEL, a C1 control) is refused, shown escaped', () => {
    // Common practice, no source: control characters are never part of an id, and printed they drive the terminal.
    for (const [bad, code] of [
      ['alder\u001b[31m', '001B'],
      ['al\u007fder', '007F'],
      ['alder\u009b2J', '009B'],
    ] as const) {
      const def = edited((d) => setCell(d, 'systems', 0, 'system', bad));
      const dir = writeRelease(def);
      const issue = onlyIssue(issuesOf(dir), 'control-character');
      expect(issue).toMatchObject({ file: join(dir, 'systems.ecsv'), line: rowLine(def, dir, 'systems', 0), column: 'system', expected: 'printable text' });
      expect(issue.message).toContain(`U+${code}`);
      // the message itself carries no control character
      expect(/[\u0000-\u001f\u007f-\u009f]/.test(`${issue.message} ${issue.found}`)).toBe(false);
    }
  });

  test('a text column declared numeric, and a numeric column declared text', () => {
    const def = edited((d) => {
      d.tables.parallax!.columns.find((c) => c.name === 'star')!.datatype = 'int64';
      d.tables.parallax!.columns.find((c) => c.name === 'parallax_err')!.datatype = 'string';
    });
    const dir = writeRelease(def);
    const issues = issuesOf(dir).filter((i) => i.code === 'wrong-datatype');
    const text = fileText(dir, 'parallax');
    expect(issues).toEqual([
      expect.objectContaining({ line: lineOf(text, 'name: star'), column: 'star', found: '"int64"' }),
      expect.objectContaining({ line: lineOf(text, 'name: parallax_err'), column: 'parallax_err', found: '"string"' }),
    ]);
  });
});

describe('ids and references', () => {
  test.each(TABLE_NAMES)('%s: ids are unique', (table) => {
    const def = edited((d) => {
      const t = d.tables[table]!;
      const copy = [...t.rows[0]];
      t.rows.push(copy);
    });
    const dir = writeRelease(def);
    const issue = onlyIssue(issuesOf(dir), 'duplicate-id');
    const text = fileText(dir, table);
    const id = def.tables[table]!.rows[0][0];
    const first = rowLine(def, dir, table, 0);
    const second = lineOf(text, id + ',', first);
    expect(second).toBeGreaterThan(first);
    expect(issue).toMatchObject({ file: join(dir, `${table}.ecsv`), line: second, column: TABLE_SPECS[table].key, found: `"${id}" (also at line ${first})` });
  });

  test.each(['parallax', 'main_sequence', 'cepheids', 'sn_calibrators'] as TableName[])('%s: a system not in systems', (table) => {
    const def = edited((d) => setCell(d, table, 0, 'system', 'aldre'));
    const dir = writeRelease(def);
    const issue = onlyIssue(issuesOf(dir), 'unknown-system');
    expect(issue).toMatchObject({
      file: join(dir, `${table}.ecsv`),
      line: rowLine(def, dir, table, 0),
      column: 'system',
      found: '"aldre"',
      hint: 'did you mean "alder"?',
    });
    expect(issue.expected).toBe('a system of systems.ecsv');
  });

  test('the Hubble-flow table has no system column to check (an extra one is ignored)', () => {
    const def = edited((d) => {
      d.tables.sn_hubble_flow!.columns.push({ name: 'system', datatype: 'string' });
      for (const r of d.tables.sn_hubble_flow!.rows) r.push('nowhere');
    });
    const r = loadValid(writeRelease(def));
    expect(r.inputs.find((f) => f.table === 'sn_hubble_flow')?.extraColumns).toEqual(['system']);
  });

  test('a Cepheid with its own parallax must be in the same system in both tables', () => {
    const def = edited((d) => setCell(d, 'cepheids', 0, 'system', 'alder'));
    const dir = writeRelease(def);
    const issue = onlyIssue(issuesOf(dir), 'star-system-mismatch');
    expect(issue).toMatchObject({
      file: join(dir, 'cepheids.ecsv'),
      line: rowLine(def, dir, 'cepheids', 0),
      column: 'system',
      expected: '"dune"',
      found: '"alder"',
    });
  });

  test('when the systems file is unreadable, references are not all reported as unknown', () => {
    const def = edited((d) => dropColumn(d, 'systems', 'system'));
    const issues = issuesOf(writeRelease(def));
    expect(issues.map((i) => i.code)).toEqual(['missing-column']);
  });
});

describe('rows', () => {
  test.each(TABLE_NAMES)('%s: a file with a header and no rows', (table) => {
    const def = edited((d) => {
      d.tables[table]!.rows = [];
    });
    const dir = writeRelease(def);
    const issue = onlyIssue(issuesOf(dir), 'empty-table');
    expect(issue).toMatchObject({
      file: join(dir, `${table}.ecsv`),
      line: namesRowLine(fileText(dir, table)),
      expected: 'at least one data row',
      found: 'none',
    });
  });

  test('a row with too many or too few values', () => {
    const def = validRelease();
    const dir = writeRelease(def);
    const path = join(dir, 'main_sequence.ecsv');
    const fixed = readFileSync(path, 'utf8')
      .replace('a-101,alder,0.55,0.01,6.90,0.02', 'a-101,alder,0.55,0.01,6.90')
      .replace('b-101,birch,0.60,0.01,9.80,0.02', 'b-101,birch,0.60,0.01,9.80,0.02,7');
    expect(fixed).toContain('6.90\n');
    writeFileSync(path, fixed);
    const issues = issuesOf(dir).filter((i) => i.code === 'field-count');
    expect(issues).toEqual([
      expect.objectContaining({ file: path, line: lineOf(fixed, 'a-101'), expected: '6 values', found: '5' }),
      expect.objectContaining({ file: path, line: lineOf(fixed, 'b-101'), expected: '6 values', found: '7' }),
    ]);
  });
});

describe('column names', () => {
  test('a column given twice, and a column with no name (plain CSV)', () => {
    const dir = writeRelease(validRelease(), { formats: { main_sequence: 'csv' } });
    const path = join(dir, 'main_sequence.csv');
    const text = readFileSync(path, 'utf8').replace('star,system,color,color_err,mag,mag_err', 'star,system,color,color_err,mag,mag_err,color,');
    const fixed = text.replace(/^(a-101.*)$/m, '$1,0.5,x').replace(/^(b-101.*)$/m, '$1,0.6,y');
    writeFileSync(path, fixed);
    const issues = issuesOf(dir);
    expect(issues).toEqual([
      expect.objectContaining({ code: 'duplicate-column', file: path, line: 1, column: 'color', found: 'a second "color" (the first is column 3)' }),
      expect.objectContaining({ code: 'empty-column-name', file: path, line: 1, message: 'column 8 has no name' }),
    ]);
  });

  test('a column name holding a control character (plain CSV)', () => {
    const dir = writeRelease(validRelease(), { formats: { main_sequence: 'csv' } });
    const path = join(dir, 'main_sequence.csv');
    const text = readFileSync(path, 'utf8').replace('star,system,color,color_err,mag,mag_err', 'star,system,color,color_err,mag,mag_err,note\u001b[0m');
    writeFileSync(path, text.replace(/^(a-101.*)$/m, '$1,x').replace(/^(b-101.*)$/m, '$1,y'));
    const issue = onlyIssue(issuesOf(dir), 'control-character');
    expect(issue).toMatchObject({ file: path, line: 1, message: 'the name of column 7 holds a control character', found: '"note\\u001b[0m"' });
  });

  test('an ECSV unit that is not text', () => {
    const dir = writeRelease(validRelease());
    const path = join(dir, 'cepheids.ecsv');
    const text = readFileSync(path, 'utf8').replace('name: period, unit: "d"', 'name: period, unit: 86400');
    writeFileSync(path, text);
    expect(onlyIssue(issuesOf(dir), 'bad-unit')).toMatchObject({ file: path, line: lineOf(text, 'name: period'), column: 'period', found: '86400' });
  });
});

describe('optional and extra columns', () => {
  test('optional columns absent: values undefined, oh and covariances 0', () => {
    const def = edited((d) => {
      for (const c of ['feh', 'feh_err', 'ebv', 'ebv_err', 'age_gyr']) dropColumn(d, 'systems', c);
      for (const c of ['ra', 'dec']) dropColumn(d, 'parallax', c);
      dropColumn(d, 'cepheids', 'oh');
      for (const c of ['cov_mb_x1', 'cov_mb_c', 'cov_x1_c', 'host_logmass']) dropColumn(d, 'sn_calibrators', c);
    });
    const r = loadValid(writeRelease(def));
    expect(r.systems[0]).toEqual({ system: 'alder', kind: 'cluster', line: r.systems[0].line });
    expect(r.parallax[0].raDeg).toBeUndefined();
    expect(r.cepheids.map((c) => c.oh)).toEqual([0, 0]);
    const sn = r.snCalibrators[0];
    expect([sn.covMbX1, sn.covMbC, sn.covX1C, sn.hostLogMass]).toEqual([0, 0, 0, undefined]);
  });

  test('optional cells empty: same as absent', () => {
    const def = edited((d) => {
      setCell(d, 'cepheids', 1, 'oh', '');
      for (const c of ['cov_mb_x1', 'cov_mb_c', 'cov_x1_c', 'host_logmass']) setCell(d, 'sn_calibrators', 0, c, '');
      setCell(d, 'parallax', 0, 'dec', '');
    });
    const r = loadValid(writeRelease(def));
    expect(r.cepheids[1].oh).toBe(0);
    expect(r.snCalibrators[0]).toMatchObject({ covMbX1: 0, covMbC: 0, covX1C: 0 });
    expect(r.snCalibrators[0].hostLogMass).toBeUndefined();
    expect(r.parallax[0]).toMatchObject({ raDeg: 66.7 });
    expect('decDeg' in r.parallax[0]).toBe(false);
  });

  test('extra columns are allowed and listed, and do not change the values', () => {
    const plain = loadValid(writeRelease(validRelease()));
    const def = edited((d) => {
      const t = d.tables.parallax!;
      t.columns.splice(2, 0, { name: 'source_note', datatype: 'string' });
      t.columns.push({ name: 'g_mag', datatype: 'float64', unit: 'mag' });
      t.rows = t.rows.map((r, i) => [r[0], r[1], `note ${i}`, ...r.slice(2), 'nan']);
    });
    const r = loadValid(writeRelease(def));
    const input = r.inputs.find((f) => f.table === 'parallax')!;
    expect(input.extraColumns).toEqual(['source_note', 'g_mag']);
    expect(input.columnUnits).toEqual({ parallax: 'mas', parallax_err: 'mas', ra: 'deg', dec: 'deg', g_mag: 'mag' });
    expect(r.parallax.map(({ line: _l, ...rest }) => rest)).toEqual(plain.parallax.map(({ line: _l, ...rest }) => rest));
  });
});

describe('units in the header', () => {
  test('parallax given in uas, arcsec and deg is converted to mas; ra in rad to deg', () => {
    const def = edited((d) => {
      setUnit(d, 'parallax', 'parallax', 'uas');
      setCell(d, 'parallax', 0, 'parallax', '21500');
      setUnit(d, 'parallax', 'parallax_err', 'arcsec');
      setCell(d, 'parallax', 0, 'parallax_err', '0.00005');
      setUnit(d, 'parallax', 'ra', 'rad');
      setCell(d, 'parallax', 0, 'ra', '1');
      setCell(d, 'parallax', 1, 'ra', '0.5');
      setCell(d, 'parallax', 2, 'ra', '');
    });
    const r = loadValid(writeRelease(def));
    // 21500 uas = 21.5 mas; 0.00005 arcsec = 0.05 mas (definitions); 1 rad = 180/pi deg.
    expect(relErr(r.parallax[0].parallaxMas, 21.5)).toBeLessThanOrEqual(REL_1E15);
    expect(relErr(r.parallax[0].parallaxErrMas, 0.05)).toBeLessThanOrEqual(REL_1E15);
    expect(relErr(r.parallax[0].raDeg!, 180 / Math.PI)).toBeLessThanOrEqual(REL_1E15);
    expect(relErr(r.parallax[1].raDeg!, 90 / Math.PI)).toBeLessThanOrEqual(REL_1E15);
    const input = r.inputs.find((f) => f.table === 'parallax')!;
    expect(input.columnUnits).toMatchObject({ parallax: 'uas', parallax_err: 'arcsec', ra: 'rad' });
  });

  test('parallax in deg', () => {
    const def = edited((d) => {
      setUnit(d, 'parallax', 'parallax', 'deg');
      setCell(d, 'parallax', 0, 'parallax', '0.000005');
    });
    const r = loadValid(writeRelease(def));
    // 5e-6 deg * 3.6e6 mas/deg = 18 mas
    expect(relErr(r.parallax[0].parallaxMas, 18)).toBeLessThanOrEqual(REL_1E15);
  });

  test('periods in h and yr are converted to days (yr = 365.25 d, the Julian year)', () => {
    const hours = edited((d) => {
      setUnit(d, 'cepheids', 'period', 'h');
      setCell(d, 'cepheids', 0, 'period', '240');
      setCell(d, 'cepheids', 1, 'period', '36');
    });
    expect(loadValid(writeRelease(hours)).cepheids.map((c) => c.periodDays)).toEqual([10, 1.5]);
    const years = edited((d) => {
      setUnit(d, 'cepheids', 'period', 'yr');
      setCell(d, 'cepheids', 0, 'period', '0.5');
      setCell(d, 'cepheids', 1, 'period', '0.1');
    });
    const r = loadValid(writeRelease(years));
    expect(r.cepheids[0].periodDays).toBe(182.625);
    expect(relErr(r.cepheids[1].periodDays, 36.525)).toBeLessThanOrEqual(REL_1E15);
  });

  test('ages in Myr are converted to Gyr; cov_mb_c accepts mag^2 and mag**2', () => {
    const def = edited((d) => {
      setUnit(d, 'systems', 'age_gyr', 'Myr');
      setCell(d, 'systems', 0, 'age_gyr', '625');
      setUnit(d, 'sn_calibrators', 'cov_mb_c', 'mag**2');
    });
    const r = loadValid(writeRelease(def));
    expect(r.systems[0].ageGyr).toBe(0.625);
    expect(r.snCalibrators[0].covMbC).toBe(0.0002);
  });

  const REFUSED: [TableName, string, string, string][] = [
    ['parallax', 'parallax', 'pc', 'mas (or uas, arcsec, deg, rad)'],
    ['parallax', 'parallax_err', 'mas2', 'mas (or uas, arcsec, deg, rad)'],
    ['parallax', 'ra', 'hourangle', 'deg (or uas, mas, arcsec, rad)'],
    ['cepheids', 'period', 's', 'd (or day, h, yr)'],
    ['cepheids', 'period', 'deg', 'd (or day, h, yr)'],
    ['cepheids', 'm_h', 'mmag', 'mag'],
    ['cepheids', 'oh', 'mag', 'dex'],
    ['systems', 'ebv', 'dex', 'mag'],
    ['systems', 'age_gyr', 'kyr', 'Gyr (or Myr, yr)'],
    ['sn_calibrators', 'cov_mb_c', 'mag', 'mag2 (or mag^2, mag**2)'],
    ['sn_calibrators', 'cov_mb_x1', 'mag2', 'mag'],
    ['sn_calibrators', 'x1', 'mag', 'no unit (a dimensionless column)'],
    ['sn_hubble_flow', 'z', 'km/s', 'no unit (a dimensionless column)'],
    ['sn_hubble_flow', 'host_logmass', 'solMass', 'dex'],
  ];
  test.each(REFUSED)('%s.%s in %s is refused at the header line of the unit', (table, column, unit, expected) => {
    const def = edited((d) => {
      const t = d.tables[table]!;
      if (!t.columns.some((c) => c.name === column)) {
        t.columns.push({ name: column, datatype: 'float64' });
        for (const r of t.rows) r.push('1');
      }
      setUnit(d, table, column, unit);
    });
    const dir = writeRelease(def);
    const issue = onlyIssue(issuesOf(dir), 'wrong-unit');
    expect(issue).toMatchObject({
      file: join(dir, `${table}.ecsv`),
      line: lineOf(fileText(dir, table), `name: ${column},`),
      column,
      expected,
      found: JSON.stringify(unit),
    });
  });

  test('cells of a column with a refused unit are still checked', () => {
    const def = edited((d) => {
      setUnit(d, 'parallax', 'parallax_err', 'pc');
      setCell(d, 'parallax', 2, 'parallax_err', '-0.02');
    });
    const dir = writeRelease(def);
    expect(issuesOf(dir).map((i) => [i.code, i.line, i.column])).toEqual([
      ['wrong-unit', lineOf(fileText(dir, 'parallax'), 'name: parallax_err'), 'parallax_err'],
      ['not-positive', rowLine(def, dir, 'parallax', 2), 'parallax_err'],
    ]);
  });

  test('an empty unit is the same as none', () => {
    const def = edited((d) => setUnit(d, 'systems', 'feh', ''));
    const r = loadValid(writeRelease(def));
    expect(r.systems[0].feh).toBe(0.1);
  });

  test('a text column with a unit is refused', () => {
    const def = edited((d) => setUnit(d, 'parallax', 'star', 'mas'));
    const dir = writeRelease(def);
    expect(onlyIssue(issuesOf(dir), 'wrong-unit')).toMatchObject({
      column: 'star',
      expected: 'no unit (a text column)',
      found: '"mas"',
      line: lineOf(fileText(dir, 'parallax'), 'name: star'),
    });
  });
});

describe('multiple problems', () => {
  test('every problem of a file is reported, in line order, with those of other files', () => {
    const def = edited((d) => {
      setCell(d, 'parallax', 0, 'parallax_err', '0');
      setCell(d, 'parallax', 1, 'parallax', 'nan');
      setCell(d, 'parallax', 2, 'system', 'nowhere');
      setCell(d, 'parallax', 2, 'ra', 'east');
      setUnit(d, 'parallax', 'dec', 'hms');
      setCell(d, 'cepheids', 1, 'period', '-3');
    });
    const dir = writeRelease(def);
    const issues = issuesOf(dir);
    const par = join(dir, 'parallax.ecsv');
    const text = fileText(dir, 'parallax');
    expect(issues.map((i) => [i.file, i.code, i.line, i.column])).toEqual([
      [par, 'wrong-unit', lineOf(text, 'name: dec'), 'dec'],
      [par, 'not-positive', lineOf(text, 'a-001'), 'parallax_err'],
      [par, 'not-finite', lineOf(text, 'a-002'), 'parallax'],
      [par, 'not-a-number', lineOf(text, 'd-001'), 'ra'],
      [par, 'unknown-system', lineOf(text, 'd-001'), 'system'],
      [join(dir, 'cepheids.ecsv'), 'not-positive', lineOf(fileText(dir, 'cepheids'), 'c-201'), 'period'],
    ]);
  });
});

describe('an error without its value', () => {
  test.each([
    ['ebv_err', 'ebv'],
    ['feh_err', 'feh'],
  ])('%s given without %s', (errColumn, valueColumn) => {
    const def = edited((d) => setCell(d, 'systems', 0, valueColumn, ''));
    const dir = writeRelease(def);
    const issue = onlyIssue(issuesOf(dir), 'value-without-partner');
    expect(issue).toMatchObject({
      file: join(dir, 'systems.ecsv'),
      line: rowLine(def, dir, 'systems', 0),
      column: errColumn,
      expected: `a value of ${valueColumn} in the same row, or no ${errColumn}`,
    });
  });

  test('ebv without ebv_err is a fixed reddening, and valid', () => {
    const def = edited((d) => setCell(d, 'systems', 0, 'ebv_err', ''));
    const r = loadValid(writeRelease(def));
    expect(r.systems[0]).toMatchObject({ ebv: 0.01 });
    expect(r.systems[0].ebvErr).toBeUndefined();
  });
});
