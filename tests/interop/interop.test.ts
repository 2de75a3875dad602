/**
 * Interoperability with an independent implementation: astropy (Debian
 * python3-astropy; astropy.table with its ECSV and CSV writers and readers,
 * astropy.io.votable, astropy.units), driven by tests/interop/astropy_interop.py
 * with the Python that tests/reference/astropy.ts finds. Missing astropy is a
 * failure with the fix in the message, never a skip.
 *
 * 1. astropy reads the six tables of demo release 2026.1 and writes them again
 *    with its own writers (ECSV with its default space delimiter, ECSV with
 *    commas, plain CSV, VOTable TABLEDATA); rungbook reads each written release
 *    to the same typed rows, and calibrates it to the same results.
 * 2. astropy converts units on the way (parallaxes to µas, periods to hours,
 *    ages to Myr, positions to radians); rungbook converts them back.
 * 3. The same releases with a byte-order mark and CRLF line ends read the same.
 * 4. The result tables the report offers for download (src/report/generate.ts
 *    writes them with src/io/writeEcsv.ts) are read back by astropy to the same
 *    values and units, as ECSV and as CSV.
 *
 * Tiny tables and the cell-level rules are covered in tests/io (ecsv, csv,
 * votable, units tests); this file works on whole releases and the report's files.
 */
import { execFileSync } from 'node:child_process';
import { cpSync, mkdirSync, readdirSync, readFileSync, rmSync, writeFileSync } from 'node:fs';
import { dirname, join } from 'node:path';
import { fileURLToPath } from 'node:url';
import { afterAll, beforeAll, describe, expect, it } from 'vitest';
import { calibrateReleaseDir } from '../../src/cli/calibrate.ts';
import { loadRelease } from '../../src/io/release.ts';
import { genLayout, generateRelease } from '../../src/report/generate.ts';
import { resultTables } from '../../src/report/resultTables.ts';
import type { Release } from '../../src/types/release.ts';
import type { Results } from '../../src/types/results.ts';
import { astropyPython } from '../reference/astropy.ts';
import { FIT_REPEAT_REL, REL_1E15, relErr } from '../tolerances.ts';
import { HOSTILE } from '../trust/hostile.ts';
import { DEMO_RELEASES, tempDir } from '../trust/releaseCopy.ts';

const SCRIPT = join(dirname(fileURLToPath(import.meta.url)), 'astropy_interop.py');
const TABLES = ['systems', 'parallax', 'main_sequence', 'cepheids', 'sn_calibrators', 'sn_hubble_flow'];
const DEMO = join(DEMO_RELEASES, '2026.1');

function astropy<T>(request: Record<string, unknown>): T {
  return JSON.parse(execFileSync(astropyPython(), [SCRIPT], { input: JSON.stringify(request), encoding: 'utf8', maxBuffer: 256 * 1024 * 1024 })) as T;
}

const tmp = tempDir('rungbook-interop-');
afterAll(() => rmSync(tmp, { recursive: true, force: true }));

/** A release folder whose tables astropy wrote (release.yaml and notes.md copied as they are). */
function astropyRelease(format: string, units: Record<string, Record<string, string>> = {}, name = format): string {
  const dir = join(tmp, name, '2026.1');
  mkdirSync(dir, { recursive: true });
  cpSync(join(DEMO, 'release.yaml'), join(dir, 'release.yaml'));
  cpSync(join(DEMO, 'notes.md'), join(dir, 'notes.md'));
  const r = astropy<{ files: string[] }>({ op: 'write_release', src: DEMO, out: dir, tables: TABLES, format, units });
  expect(r.files.length).toBe(TABLES.length);
  return dir;
}

/** The typed rows of every table (the line numbers differ between writers and are left out). */
function rowsOf(r: Release) {
  const strip = <T extends { line: number }>(rows: readonly T[]) => rows.map(({ line: _line, ...rest }) => rest);
  return {
    systems: strip(r.systems),
    parallax: strip(r.parallax),
    mainSequence: strip(r.mainSequence),
    cepheids: strip(r.cepheids),
    snCalibrators: strip(r.snCalibrators),
    snHubbleFlow: strip(r.snHubbleFlow),
  };
}

/** results.json without what legitimately differs between formats: file names, formats, checksums, line numbers. */
function comparable(r: Results): unknown {
  return JSON.parse(JSON.stringify({ ...r, provenance: { ...r.provenance, inputs: [], inputs_hash: '' } }, (k, v) => (k === 'line' ? undefined : v)));
}

let reference: Release;
let referenceResults: Results;
beforeAll(async () => {
  reference = loadRelease(DEMO);
  referenceResults = await calibrateReleaseDir(DEMO);
});

describe('releases written by astropy are read by rungbook to identical values', () => {
  for (const format of ['ecsv', 'ecsv_comma', 'csv', 'votable']) {
    it(`${format}: same rows in every table, same results`, async () => {
      const dir = astropyRelease(format);
      const ext = { ecsv: 'ecsv', ecsv_comma: 'ecsv', csv: 'csv', votable: 'vot' }[format];
      expect(readdirSync(dir).filter((f) => f.endsWith(`.${ext}`)).length).toBe(6);
      const r = loadRelease(dir);
      expect(r.inputs.filter((f) => TABLES.includes(f.table)).map((f) => f.format)).toEqual(TABLES.map(() => (format.startsWith('ecsv') ? 'ecsv' : format)));
      expect(rowsOf(r)).toEqual(rowsOf(reference));
      expect(comparable(await calibrateReleaseDir(dir))).toEqual(comparable(referenceResults));
    });
  }
});

describe('units converted by astropy are converted back by rungbook', () => {
  const units = {
    parallax: { parallax: 'uas', parallax_err: 'uas', ra: 'rad', dec: 'rad' },
    cepheids: { period: 'h' },
    systems: { age_gyr: 'Myr' },
  };

  for (const format of ['ecsv', 'votable']) {
    it(`${format}: parallaxes in µas, positions in rad, periods in h, ages in Myr`, async () => {
      const dir = astropyRelease(format, units, `${format}-units`);
      const text = readFileSync(join(dir, `parallax.${format === 'ecsv' ? 'ecsv' : 'vot'}`), 'utf8');
      expect(text).toMatch(/uas/);
      const r = loadRelease(dir);
      // Each value went x -> x * factor (astropy) -> / factor (rungbook): a few units in the last place at most.
      const close = (a: number, b: number, what: string) => expect(relErr(a, b), `${what}: ${a} vs ${b}`).toBeLessThanOrEqual(REL_1E15);
      r.parallax.forEach((p, i) => {
        const q = reference.parallax[i]!;
        expect(p.star).toBe(q.star);
        close(p.parallaxMas, q.parallaxMas, `${p.star} parallax`);
        close(p.parallaxErrMas, q.parallaxErrMas, `${p.star} parallax_err`);
        if (q.raDeg !== undefined) close(p.raDeg!, q.raDeg, `${p.star} ra`);
        if (q.decDeg !== undefined) close(p.decDeg!, q.decDeg, `${p.star} dec`);
      });
      r.cepheids.forEach((c, i) => close(c.periodDays, reference.cepheids[i]!.periodDays, `${c.star} period`));
      r.systems.forEach((s, i) => {
        const q = reference.systems[i]!;
        if (q.ageGyr === undefined) expect(s.ageGyr).toBeUndefined();
        else close(s.ageGyr!, q.ageGyr, `${s.system} age`);
      });
      // Inputs equal to round-off give the same H0 to the fit's own convergence limits.
      const res = await calibrateReleaseDir(dir);
      expect(relErr(res.h0!.value, referenceResults.h0!.value)).toBeLessThanOrEqual(FIT_REPEAT_REL);
      expect(relErr(res.h0!.stat, referenceResults.h0!.stat)).toBeLessThanOrEqual(FIT_REPEAT_REL);
    });
  }
});

describe('a byte-order mark and CRLF line ends change nothing', () => {
  for (const format of ['ecsv', 'csv', 'votable']) {
    it(`${format} written by astropy, then saved with a BOM and CRLF`, () => {
      const dir = astropyRelease(format, {}, `${format}-crlf`);
      for (const f of readdirSync(dir).filter((x) => /\.(ecsv|csv|vot)$/.test(x))) {
        const text = readFileSync(join(dir, f), 'utf8');
        writeFileSync(join(dir, f), `\uFEFF${text.replace(/\r?\n/g, '\r\n')}`);
      }
      const r = loadRelease(dir);
      expect(rowsOf(r)).toEqual(rowsOf(reference));
    });
  }
});

describe('the result tables offered for download are read by astropy to the same values and units', () => {
  let layoutRoot: string;
  let results: Results;
  beforeAll(async () => {
    results = referenceResults;
    layoutRoot = join(tmp, 'gen');
    await generateRelease(genLayout(layoutRoot), { results, notes: null, previousBuilt: false });
  }, 120_000);

  it('ECSV: names, units, kinds and every cell', () => {
    const tables = resultTables(results);
    expect(tables.length).toBeGreaterThan(10);
    const dl = join(layoutRoot, 'public', 'releases', '2026.1', 'downloads');
    const unitPairs: [string, string][] = [];
    const read = astropy<{ tables: { columns: { name: string; unit: string | null; kind: string }[]; rows: unknown[][] }[] }>({
      op: 'read_tables',
      format: 'ecsv',
      files: tables.map((t) => join(dl, `${t.name}.ecsv`)),
    });
    tables.forEach((t, k) => {
      const got = read.tables[k]!;
      expect(
        got.columns.map((c) => c.name),
        t.name,
      ).toEqual(t.columns.map((c) => c.name));
      const kinds: Record<string, string> = { string: 'U', float64: 'f', int64: 'i', bool: 'b' };
      t.columns.forEach((c, j) => {
        const col = got.columns[j]!;
        // An empty string column is read by astropy as masked floats; a column of nulls has no kind to check.
        if (t.rows.some((r) => r[c.name] !== null && r[c.name] !== undefined)) expect(col.kind, `${t.name}.${c.name}`).toBe(kinds[c.datatype]);
        if (c.unit) unitPairs.push([c.unit, col.unit ?? '']);
        else expect(col.unit, `${t.name}.${c.name}`).toBeNull();
      });
      expect(got.rows.length, t.name).toBe(t.rows.length);
      t.rows.forEach((row, i) => {
        t.columns.forEach((c, j) => {
          const want = row[c.name];
          const have = got.rows[i]![j];
          const where = `${t.name} row ${i} ${c.name}`;
          // astropy reads an empty string cell as masked (see src/io/writeEcsv.ts).
          if (want === null || want === undefined || want === '') expect(have, where).toBeNull();
          else expect(have, where).toEqual(want);
        });
      });
    });
    // The units as astropy reads them are the units written (astropy.units decides equality).
    const same = astropy<{ same_units: boolean[] }>({ op: 'read_tables', format: 'ecsv', files: [], units: unitPairs }).same_units;
    expect(same.length).toBeGreaterThan(20);
    expect(unitPairs.filter((_p, i) => !same[i])).toEqual([]);
  });

  it('CSV: names and every cell', () => {
    const tables = resultTables(results);
    const dl = join(layoutRoot, 'public', 'releases', '2026.1', 'downloads');
    const read = astropy<{ tables: { columns: { name: string }[]; rows: unknown[][] }[] }>({
      op: 'read_tables',
      format: 'csv',
      files: tables.map((t) => join(dl, `${t.name}.csv`)),
    });
    tables.forEach((t, k) => {
      const got = read.tables[k]!;
      expect(
        got.columns.map((c) => c.name),
        t.name,
      ).toEqual(t.columns.map((c) => c.name));
      t.rows.forEach((row, i) => {
        t.columns.forEach((c, j) => {
          const want = row[c.name];
          const have = got.rows[i]![j];
          const where = `${t.name} row ${i} ${c.name}`;
          if (want === null || want === undefined || want === '') expect(have, where).toBeNull();
          // CSV has no types: a bool is read back as the text the writer chose.
          else if (typeof want === 'boolean') expect(String(have), where).toBe(want ? 'True' : 'False');
          else if (typeof want === 'string' && typeof have === 'number') expect(have, where).toBe(Number(want));
          else expect(have, where).toEqual(want);
        });
      });
    });
  });
});

describe('hostile ids in the downloads survive astropy', () => {
  it('reads every system id of the systems and cepheids downloads exactly as written (quotes, commas, #, markup, bidi, emoji)', async () => {
    // The reference results with each system renamed to a string of the hostile corpus (tests/trust/hostile.ts).
    let text = JSON.stringify(referenceResults);
    const names = referenceResults.systems.map((x) => x.id);
    const ids = names.map((_n, i) => (i === 0 ? '#starts with a hash, and a comma' : HOSTILE[i % HOSTILE.length]!));
    names.forEach((n, i) => (text = text.split(JSON.stringify(n)).join(JSON.stringify(ids[i]))));
    const results = JSON.parse(text) as Results;
    const root = join(tmp, 'gen-hostile');
    await generateRelease(genLayout(root), { results, notes: null, previousBuilt: false });
    const dl = join(root, 'public', 'releases', '2026.1', 'downloads');
    const read = astropy<{ tables: { rows: unknown[][] }[] }>({
      op: 'read_tables',
      format: 'ecsv',
      files: [join(dl, 'systems.ecsv'), join(dl, 'cepheids.ecsv')],
    });
    expect(read.tables[0]!.rows.map((r) => r[0])).toEqual(ids);
    expect(read.tables[1]!.rows.map((r) => r[1])).toEqual(results.rungs.cepheids.map((c) => c.system));
    expect(new Set(read.tables[1]!.rows.map((r) => r[1])).size).toBeGreaterThan(10);
  }, 120_000);
});
