/**
 * The release folder as a whole: which files are tables, misspelt names,
 * absent tables, the description of every input, errors gathered across
 * files, the cap per file, and that reading never writes.
 */
import { spawnSync } from 'node:child_process';
import { createHash } from 'node:crypto';
import { chmodSync, copyFileSync, mkdirSync, readdirSync, readFileSync, renameSync, statSync, symlinkSync, unlinkSync, writeFileSync } from 'node:fs';
import { join, relative } from 'node:path';
import { fileURLToPath } from 'node:url';
import { describe, expect, test } from 'vitest';
import { classifyFolder, isIgnoredName } from '../../src/io/folder.ts';
import { loadRelease, releaseFolderEntries } from '../../src/io/release.ts';
import { runCheck } from '../../src/cli/check.ts';
import { InputError, MAX_ISSUES_PER_FILE } from '../../src/types/issues.ts';
import { TABLE_NAMES } from '../../src/types/release.ts';
import { edited, issuesOf, loadValid, onlyIssue, setCell, tempDir, validRelease, writeRelease, type FixtureFormat } from './fixtures.ts';

describe('a valid release', () => {
  test('every input is described: table, file, format, sha256 of the bytes, rows', () => {
    const dir = writeRelease(edited((d) => (d.extraFiles = { 'notes.md': '# What changed\n\nFirst release.\n' })));
    const r = loadValid(dir);
    const sha = (name: string) =>
      createHash('sha256')
        .update(readFileSync(join(dir, name)))
        .digest('hex');
    expect(r.inputs.map((f) => [f.table, f.file, f.format, f.rows])).toEqual([
      ['release', 'release.yaml', 'yaml', 0],
      ['systems', 'systems.ecsv', 'ecsv', 4],
      ['parallax', 'parallax.ecsv', 'ecsv', 3],
      ['main_sequence', 'main_sequence.ecsv', 'ecsv', 2],
      ['cepheids', 'cepheids.ecsv', 'ecsv', 2],
      ['sn_calibrators', 'sn_calibrators.ecsv', 'ecsv', 1],
      ['sn_hubble_flow', 'sn_hubble_flow.ecsv', 'ecsv', 2],
      ['notes', 'notes.md', 'markdown', 0],
    ]);
    for (const f of r.inputs) expect(f.sha256, f.file).toBe(sha(f.file));
    expect(r.notes).toBe('# What changed\n\nFirst release.\n');
    expect(r.absentTables).toEqual([]);
    expect(r.dir).toBe(dir);
  });

  test('the sha256 is of the bytes as stored (a BOM changes it, the values do not)', () => {
    const plain = loadValid(writeRelease(validRelease()));
    const bom = loadValid(writeRelease(validRelease(), { text: { bom: true, eol: '\r\n' } }));
    const hashOf = (r: typeof plain) => r.inputs.find((f) => f.table === 'parallax')!.sha256;
    expect(hashOf(bom)).not.toBe(hashOf(plain));
    expect(bom.parallax.map(({ line: _l, ...x }) => x)).toEqual(plain.parallax.map(({ line: _l, ...x }) => x));
    expect(bom.parallax.map((p) => p.line)).toEqual(plain.parallax.map((p) => p.line));
  });

  test('tables other than systems may be absent and are listed', () => {
    const def = edited((d) => {
      delete d.tables.sn_calibrators;
      delete d.tables.sn_hubble_flow;
      delete d.tables.main_sequence;
    });
    const r = loadValid(writeRelease(def));
    expect(r.absentTables).toEqual(['main_sequence', 'sn_calibrators', 'sn_hubble_flow']);
    expect([r.mainSequence, r.snCalibrators, r.snHubbleFlow]).toEqual([[], [], []]);
    expect(r.notes).toBeNull();
  });

  test.each(['csv', 'vot', 'xml'] as FixtureFormat[])('every table as .%s gives the same rows as ECSV', (format) => {
    const ecsv = loadValid(writeRelease(validRelease()));
    const formats = Object.fromEntries(TABLE_NAMES.map((t) => [t, format]));
    const other = loadValid(writeRelease(validRelease(), { formats }));
    const strip = <T extends { line: number }>(rows: T[]) => rows.map(({ line: _l, ...rest }) => rest);
    expect(strip(other.systems)).toEqual(strip(ecsv.systems));
    expect(strip(other.parallax)).toEqual(strip(ecsv.parallax));
    expect(strip(other.mainSequence)).toEqual(strip(ecsv.mainSequence));
    expect(strip(other.cepheids)).toEqual(strip(ecsv.cepheids));
    expect(strip(other.snCalibrators)).toEqual(strip(ecsv.snCalibrators));
    expect(strip(other.snHubbleFlow)).toEqual(strip(ecsv.snHubbleFlow));
    expect(other.inputs.filter((f) => f.table === 'parallax').map((f) => [f.file, f.format])).toEqual([
      [`parallax.${format}`, format === 'csv' ? 'csv' : 'votable'],
    ]);
  });

  test('CSV rows are on lines 2, 3, ... (header row on line 1)', () => {
    const r = loadValid(writeRelease(validRelease(), { formats: { parallax: 'csv' } }));
    expect(r.parallax.map((p) => p.line)).toEqual([2, 3, 4]);
  });

  test('other files are ignored, blinding.json included', () => {
    const def = edited((d) => {
      d.extraFiles = { 'blinding.json': '{"not": "read here"', 'README.md': 'x', 'photometry_raw.csv': 'a\n1\n', 'plot.png': new Uint8Array([0x89, 0x50]) };
    });
    const r = loadValid(writeRelease(def));
    expect(r.inputs.map((f) => f.file)).not.toContain('blinding.json');
    expect(r.inputs).toHaveLength(7);
  });

  test('a path given with a trailing slash or as a relative path works and issues use it', () => {
    const dir = writeRelease(edited((d) => setCell(d, 'systems', 0, 'kind', 'cloud')));
    const [issue] = issuesOf(dir + '/');
    expect(issue.file).toBe(join(dir, 'systems.ecsv'));
    const rel = join('.', relative(process.cwd(), dir));
    const [relIssue] = issuesOf(rel);
    expect(relIssue.file).toBe(join(rel, 'systems.ecsv'));
  });
});

describe('file names', () => {
  test.each([
    ['cepheid.ecsv', 'cepheids', 'cepheids.ecsv'],
    ['parralax.csv', 'parallax', 'parallax.csv'],
    ['sn_hubbleflow.ecsv', 'sn_hubble_flow', 'sn_hubble_flow.ecsv'],
    ['Parallax.ecsv', 'parallax', 'parallax.ecsv'],
    ['main-sequence.vot', 'main_sequence', 'main_sequence.vot'],
    ['sn_calibrator.xml', 'sn_calibrators', 'sn_calibrators.xml'],
    ['parallax.ECSV', 'parallax', 'parallax.ecsv'],
  ])('%s is refused with a suggestion', (name, table, right) => {
    const def = validRelease();
    const dir = writeRelease(def);
    renameSync(join(dir, `${table}.ecsv`), join(dir, name));
    const issue = onlyIssue(issuesOf(dir), 'misspelt-file-name');
    expect(issue).toMatchObject({ file: join(dir, name), found: JSON.stringify(name), hint: `did you mean "${right}"?` });
  });

  test('release.yml is a misspelt manifest', () => {
    const dir = writeRelease(validRelease());
    renameSync(join(dir, 'release.yaml'), join(dir, 'release.yml'));
    const issues = issuesOf(dir);
    expect(issues).toContainEqual(
      expect.objectContaining({ code: 'misspelt-file-name', file: join(dir, 'release.yml'), hint: 'did you mean "release.yaml"?' }),
    );
    expect(issues).toContainEqual(expect.objectContaining({ code: 'missing-file', file: join(dir, 'release.yaml') }));
  });

  test('a table name with a format that is not read', () => {
    const dir = writeRelease(edited((d) => (d.extraFiles = { 'cepheids.txt': 'x' })));
    expect(onlyIssue(issuesOf(dir), 'unsupported-table-format')).toMatchObject({ file: join(dir, 'cepheids.txt'), found: '"cepheids.txt"' });
  });

  test('one table in two formats', () => {
    const dir = writeRelease(validRelease());
    writeFileSync(join(dir, 'parallax.csv'), 'star,system,parallax,parallax_err\nq,alder,1,0.1\n');
    const issue = onlyIssue(issuesOf(dir), 'duplicate-table');
    expect(issue).toMatchObject({ file: join(dir, 'parallax.ecsv'), found: 'parallax.csv and parallax.ecsv' });
  });

  test('systems is required', () => {
    const dir = writeRelease(validRelease());
    unlinkSync(join(dir, 'systems.ecsv'));
    const issues = issuesOf(dir);
    // Only the missing table: references are not checked against a table that is not there.
    expect(issues).toEqual([expect.objectContaining({ code: 'missing-table', file: join(dir, 'systems.ecsv'), found: 'no such file' })]);
  });

  test('release.yaml is required', () => {
    const dir = writeRelease(edited((d) => (d.manifest = null)));
    expect(issuesOf(dir)).toEqual([expect.objectContaining({ code: 'missing-file', file: join(dir, 'release.yaml') })]);
  });

  test('the id must equal the folder name', () => {
    const dir = writeRelease(validRelease(), { folder: '2026.9' });
    expect(issuesOf(dir)).toEqual([
      expect.objectContaining({ code: 'id-mismatch', file: join(dir, 'release.yaml'), line: 1, column: 'id', expected: '"2026.9"', found: '"2026.1"' }),
    ]);
  });

  test('a folder that does not exist, and a file given as a folder', () => {
    const missing = join(tempDir(), 'nope');
    expect(issuesOf(missing)).toEqual([expect.objectContaining({ code: 'no-release-folder', file: missing, found: 'nothing' })]);
    const dir = writeRelease(validRelease());
    expect(issuesOf(join(dir, 'release.yaml'))).toEqual([expect.objectContaining({ code: 'no-release-folder', found: 'a file' })]);
  });

  test('notes.md that is not UTF-8', () => {
    const dir = writeRelease(edited((d) => (d.extraFiles = { 'notes.md': Buffer.from('caf\u00e9\n', 'latin1') })));
    expect(onlyIssue(issuesOf(dir), 'not-utf8')).toMatchObject({ file: join(dir, 'notes.md'), line: 1 });
  });
});

describe('no silent loss: names the release reads that are not readable regular files', () => {
  const notAFile = (dir: string, name: string, found: string) =>
    expect(onlyIssue(issuesOf(dir), 'not-a-file')).toMatchObject({ file: join(dir, name), expected: 'a regular file', found });

  test('a table that is a folder is an error naming it (not a release without that table)', () => {
    const dir = writeRelease(validRelease());
    unlinkSync(join(dir, 'main_sequence.ecsv'));
    mkdirSync(join(dir, 'main_sequence.ecsv'));
    notAFile(dir, 'main_sequence.ecsv', 'a folder');
    expect(onlyIssue(issuesOf(dir), 'not-a-file').message).toBe('the file of the table "main_sequence" is not a regular file, so it cannot be read');
  });

  test('a table that is a symbolic link to nothing', () => {
    const dir = writeRelease(validRelease());
    unlinkSync(join(dir, 'parallax.ecsv'));
    symlinkSync(join(dir, 'no-such-file.ecsv'), join(dir, 'parallax.ecsv'));
    notAFile(dir, 'parallax.ecsv', 'a symbolic link to nothing');
  });

  test('a table that is a symbolic link to a file is read as that file', () => {
    const dir = writeRelease(validRelease());
    renameSync(join(dir, 'parallax.ecsv'), join(dir, 'stars.data'));
    symlinkSync(join(dir, 'stars.data'), join(dir, 'parallax.ecsv'));
    expect(loadValid(dir).parallax).toHaveLength(3);
  });

  test('a table that is a named pipe (reading it would hang) is an error, not read', () => {
    const dir = writeRelease(validRelease());
    unlinkSync(join(dir, 'cepheids.ecsv'));
    expect(spawnSync('mkfifo', [join(dir, 'cepheids.ecsv')]).status).toBe(0);
    notAFile(dir, 'cepheids.ecsv', 'a special file (device, pipe or socket)');
  });

  test('systems, release.yaml and notes.md that are folders: one problem each, no "missing" besides', () => {
    const dir = writeRelease(edited((d) => (d.extraFiles = { 'notes.md': 'n\n' })));
    for (const name of ['systems.ecsv', 'release.yaml', 'notes.md']) {
      unlinkSync(join(dir, name));
      mkdirSync(join(dir, name));
    }
    const issues = issuesOf(dir);
    expect(issues.map((i) => [relative(dir, i.file), i.code])).toEqual([
      ['release.yaml', 'not-a-file'],
      ['systems.ecsv', 'not-a-file'],
      ['notes.md', 'not-a-file'],
    ]);
  });

  test('other folders and links keep their treatment: ignored', () => {
    const dir = writeRelease(validRelease());
    mkdirSync(join(dir, 'plots'));
    symlinkSync(join(dir, 'nowhere'), join(dir, 'README'));
    expect(loadValid(dir).inputs).toHaveLength(7);
  });

  test('a file that cannot be read is an error naming it (as root, run without the capabilities that let root read anything)', () => {
    const parent = tempDir();
    chmodSync(parent, 0o755);
    const dir = writeRelease(validRelease(), { folder: '2026.1' });
    // writeRelease made its own parent; move the release where the unprivileged user can reach it.
    const reachable = join(parent, '2026.1');
    renameSync(dir, reachable);
    chmodSync(reachable, 0o755);
    for (const f of readdirSync(reachable)) chmodSync(join(reachable, f), 0o644);
    chmodSync(join(reachable, 'cepheids.ecsv'), 0o000);
    const cli = fileURLToPath(new URL('../../scripts/rungbook.mjs', import.meta.url));
    // As root, drop the capabilities that bypass file permissions instead of changing user: the
    // process stays able to reach the checkout (which may sit in a folder only root can enter)
    // but no longer reads a file whose mode forbids it.
    const dropDac = ['--inh-caps=-dac_override,-dac_read_search', '--bounding-set=-dac_override,-dac_read_search'];
    const asUser = process.getuid?.() === 0 ? ['setpriv', ...dropDac, process.execPath] : [process.execPath];
    const r = spawnSync(asUser[0]!, [...asUser.slice(1), cli, 'check', reachable], { encoding: 'utf8', env: { ...process.env, HOME: parent } });
    expect(r.status, r.stderr).toBe(1);
    expect(r.stderr).toContain(
      `${join(reachable, 'cepheids.ecsv')}: the file cannot be read; expected a file that the user running rungbook may read, found EACCES (permission denied) (give read permission (chmod a+r))`,
    );
    expect(r.stderr).not.toMatch(/internal error/);
  });
});

describe('hidden files and editor backups are ignored and listed', () => {
  test.each(['parallax.ecsv~', 'parallax.ecsv.bak', 'cepheids.ecsv.orig', '.cepheids.ecsv.swp', 'release.yaml~', '.DS_Store', 'notes.md.bak'])('%s', (name) => {
    expect(isIgnoredName(name)).toBe(true);
    const dir = writeRelease(validRelease());
    writeFileSync(join(dir, name), 'garbage that is not a table\n');
    // Never read: the release is as valid as without it, and nothing advises converting it.
    expect(loadValid(dir).inputs).toHaveLength(7);
    expect(classifyFolder(releaseFolderEntries(dir)).ignored).toEqual([name]);
  });

  test('look-alikes are not ignored: a misspelt table stays an error', () => {
    for (const name of ['parallax.ecsv', 'bak.ecsv', 'origin.csv', 'notes.md']) expect(isIgnoredName(name), name).toBe(false);
    const dir = writeRelease(validRelease());
    copyFileSync(join(dir, 'parallax.ecsv'), join(dir, 'parralax.ecsv'));
    expect(onlyIssue(issuesOf(dir), 'misspelt-file-name').file).toBe(join(dir, 'parralax.ecsv'));
  });

  test('check lists them as ignored, and no longer advises converting parallax.ecsv~ into a table', async () => {
    const dir = writeRelease(edited((d) => setCell(d, 'systems', 0, 'kind', '')));
    copyFileSync(join(dir, 'parallax.ecsv'), join(dir, 'parallax.ecsv~'));
    writeFileSync(join(dir, '.hidden'), 'x');
    const out: string[] = [];
    const err: string[] = [];
    expect(await runCheck([dir], { stdout: (s) => out.push(s), stderr: (s) => err.push(s) })).toBe(1);
    expect(out).toEqual([`${dir}: ignored ".hidden", "parallax.ecsv~" (hidden files and editor backups are never read)`]);
    expect(err.join('\n')).not.toContain('parallax.ecsv~');
    expect(err.join('\n')).not.toContain('convert it');
  });
});

describe('errors gathered', () => {
  test('problems in several files are thrown together as one InputError', () => {
    const def = edited((d) => {
      d.manifest = d.manifest!.replace('clip_sigma: 3.0', 'clip_sigmaa: 3.0');
      setCell(d, 'systems', 1, 'kind', 'cloud');
      setCell(d, 'sn_hubble_flow', 1, 'z_err', '0');
    });
    const dir = writeRelease(def);
    let error: unknown;
    try {
      loadRelease(dir);
    } catch (e) {
      error = e;
    }
    expect(error).toBeInstanceOf(InputError);
    const issues = (error as InputError).issues;
    expect(issues.map((i) => [i.file, i.code])).toEqual([
      [join(dir, 'release.yaml'), 'unknown-key'],
      [join(dir, 'systems.ecsv'), 'not-allowed'],
      [join(dir, 'sn_hubble_flow.ecsv'), 'not-positive'],
    ]);
    expect((error as InputError).omitted).toBe(0);
  });

  test(`at most ${MAX_ISSUES_PER_FILE} issues per file, then "and N more"`, () => {
    const extra = 17;
    const def = edited((d) => {
      const t = d.tables.main_sequence!;
      for (let i = 0; i < MAX_ISSUES_PER_FILE + extra; i++) t.rows.push([`m-${i}`, 'birch', '0.7', '-1', '10', '0.02']);
      setCell(d, 'cepheids', 0, 'm_v', 'bright');
    });
    const dir = writeRelease(def);
    let error: InputError | undefined;
    try {
      loadRelease(dir);
    } catch (e) {
      error = e as InputError;
    }
    const ms = error!.issues.filter((i) => i.file === join(dir, 'main_sequence.ecsv'));
    expect(ms).toHaveLength(MAX_ISSUES_PER_FILE + 1);
    expect(ms.slice(0, -1).every((i) => i.code === 'not-positive' && i.column === 'color_err')).toBe(true);
    expect(ms.at(-1)).toMatchObject({ code: 'more-issues', message: `and ${extra} more problem(s) in this file, not listed` });
    expect(error!.omitted).toBe(extra);
    // The other file's problem is still reported.
    expect(error!.issues.at(-1)).toMatchObject({ file: join(dir, 'cepheids.ecsv'), code: 'not-a-number', column: 'm_v' });
  });
});

describe('reading never modifies the release folder', () => {
  /** Names, sizes, modification times, modes and contents of every entry. */
  function fingerprint(dir: string): string {
    const h = createHash('sha256');
    for (const name of readdirSync(dir).sort()) {
      const s = statSync(join(dir, name));
      h.update(`${name}\0${s.size}\0${s.mtimeMs}\0${s.mode}\0`);
      if (s.isFile()) h.update(readFileSync(join(dir, name)));
    }
    return h.digest('hex');
  }

  test('a valid release, read twice', () => {
    const dir = writeRelease(edited((d) => (d.extraFiles = { 'notes.md': 'n\n', 'blinding.json': '{}' })));
    const before = fingerprint(dir);
    const folderBefore = statSync(dir).mtimeMs;
    loadValid(dir);
    loadValid(dir);
    expect(fingerprint(dir)).toBe(before);
    expect(statSync(dir).mtimeMs).toBe(folderBefore);
  });

  test('an invalid release', () => {
    const dir = writeRelease(
      edited((d) => {
        setCell(d, 'parallax', 0, 'parallax', 'nan');
        d.extraFiles = { 'cepheid.csv': 'x\n' };
      }),
    );
    const before = fingerprint(dir);
    expect(issuesOf(dir).length).toBeGreaterThan(0);
    expect(fingerprint(dir)).toBe(before);
  });
});

describe('readManifest', () => {
  test('reads only release.yaml', async () => {
    const { readManifest } = await import('../../src/io/release.ts');
    const dir = writeRelease(edited((d) => setCell(d, 'parallax', 0, 'parallax', 'nan')));
    const m = readManifest(dir);
    expect(m.manifest).toEqual({ id: '2026.1', title: 'First test release', date: '2026-03-01', previous: null, blinded: false });
    expect(m.analysisKeysSet).toEqual(['z_min', 'clip_sigma']);
    const bad = writeRelease(edited((d) => (d.manifest = d.manifest!.replace('blinded: false', 'blinded: maybe'))));
    expect(() => readManifest(bad)).toThrow(InputError);
  });
});
