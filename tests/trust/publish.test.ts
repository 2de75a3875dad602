/**
 * Frozen published results (kind: pipeline regressions and edge cases).
 *
 * `rungbook publish` records a release's results, the code version that made
 * them, the date, the publisher and the SHA-256 of every file beside the data
 * (published.json). Afterwards:
 * - check, calibrate and build refuse the folder when a file changed, went
 *   missing or was added, naming the file;
 * - the report shows the published values, with a notice on every page of the
 *   release that says whether the current code reproduces them, and which
 *   values it moves and by how much. A code change is simulated by editing the
 *   published record's numbers and code version in a temporary copy (the demo
 *   releases are never published).
 * Checksums are checked against node:crypto's SHA-256 of the file bytes.
 */
import { createHash } from 'node:crypto';
import { existsSync, mkdirSync, readdirSync, readFileSync, rmSync, unlinkSync, writeFileSync } from 'node:fs';
import { join } from 'node:path';
import { JSDOM } from 'jsdom';
import { afterAll, beforeAll, describe, expect, it } from 'vitest';
import { main } from '../../src/cli/main.ts';
import { parseResults } from '../../src/io/results.ts';
import { compareResults, DRIFT_RELATIVE } from '../../src/publish/drift.ts';
import { PUBLISHED_FILE, type PublishedRecord } from '../../src/io/publishedRecord.ts';
import { changeOf, digitsToTellApart } from '../../src/report/published.ts';
import type { Results } from '../../src/types/results.ts';
import { codeVersion } from '../../src/version.ts';
import { listFilesSync } from '../report/linkCheck.ts';
import { copyDemo, DEMO_RELEASES, editTable, tempDir } from './releaseCopy.ts';

const BUILD_TIMEOUT_MS = 600_000;
const DATE = '2026-03-01';
const BY = 'A. Person';

type Io = Parameters<typeof main>[1] & { workDir?: string; cacheDir?: string };
async function run(argv: string[], extra: Partial<Io> = {}) {
  let out = '';
  let err = '';
  const code = await main(argv, { stdout: (s) => void (out += s), stderr: (s) => void (err += s), ...extra } as Io);
  return { code, out, err };
}
const sha = (file: string) => createHash('sha256').update(readFileSync(file)).digest('hex');
const record = (dir: string) => JSON.parse(readFileSync(join(dir, PUBLISHED_FILE), 'utf8')) as PublishedRecord;

const tmp = tempDir('rungbook-publish-');
afterAll(() => rmSync(tmp, { recursive: true, force: true }));

describe('rungbook publish', () => {
  const parent = join(tmp, 'one');
  let dir: string;
  beforeAll(() => {
    mkdirSync(parent);
    dir = copyDemo('2026.1', parent);
  });

  it('records the results, the code version, the date, the publisher and the checksum of every file', async () => {
    const cal = await run(['calibrate', dir, '--json', join(tmp, 'before.json')]);
    expect(cal.code).toBe(0);
    const r = await run(['publish', dir, '--by', BY, '--date', DATE]);
    expect(r.err).toBe('');
    expect(r.code).toBe(0);
    expect(r.out).toContain(`Published release 2026.1 on ${DATE} by ${BY}: H0 = `);
    const rec = record(dir);
    expect(rec.schema).toBe('rungbook.published/1');
    expect([rec.release, rec.published_on, rec.published_by]).toEqual(['2026.1', DATE, BY]);
    expect(rec.code_version).toBe(codeVersion());
    expect(rec.results.provenance.code_version).toBe(codeVersion());
    // The results are exactly what `rungbook calibrate` writes for the folder.
    expect(rec.results).toEqual(parseResults(readFileSync(join(tmp, 'before.json'), 'utf8')));
    // Every file of the folder (the record itself excepted), with its size and SHA-256.
    const files = readdirSync(dir)
      .filter((f) => f !== PUBLISHED_FILE)
      .sort();
    expect(files.length).toBe(8);
    expect(rec.files).toEqual(files.map((f) => ({ file: f, bytes: readFileSync(join(dir, f)).length, sha256: sha(join(dir, f)) })));
  });

  it('leaves a published, unchanged folder readable by check and calibrate', async () => {
    expect((await run(['check', dir])).code).toBe(0);
    const cal = await run(['calibrate', dir, '--json', join(tmp, 'after.json')]);
    expect(cal.code).toBe(0);
    expect(parseResults(readFileSync(join(tmp, 'after.json'), 'utf8'))).toEqual(record(dir).results);
  });

  it('refuses to publish a release twice', async () => {
    const text = readFileSync(join(dir, PUBLISHED_FILE));
    const r = await run(['publish', dir, '--date', '2026-04-01']);
    expect(r.code).toBe(1);
    expect(r.err).toContain(`${join(dir, PUBLISHED_FILE)}: the release was already published on ${DATE}`);
    expect(readFileSync(join(dir, PUBLISHED_FILE)).equals(text)).toBe(true);
  });

  it('refuses a bad date or a missing folder as a usage error', async () => {
    const fresh = copyDemo('2026.2', parent);
    for (const args of [
      ['--date', '2026-02-30'],
      ['--date', 'yesterday'],
      ['--by', '  '],
    ]) {
      const r = await run(['publish', fresh, ...args]);
      expect(r.code, args.join(' ')).toBe(2);
    }
    expect((await run(['publish'])).code).toBe(2);
    expect(existsSync(join(fresh, PUBLISHED_FILE))).toBe(false);
  });

  it('refuses to publish a blinded release, naming release.yaml', async () => {
    const blinded = copyDemo('2026.4', parent);
    const r = await run(['publish', blinded, '--date', DATE]);
    expect(r.code).toBe(1);
    expect(r.err).toContain(`${join(blinded, 'release.yaml')}: column "blinded": a blinded release cannot be published`);
    expect(existsSync(join(blinded, PUBLISHED_FILE))).toBe(false);
  });

  it('never touches the committed demo releases', () => {
    for (const id of readdirSync(DEMO_RELEASES)) expect(existsSync(join(DEMO_RELEASES, id, PUBLISHED_FILE)), id).toBe(false);
  });
});

describe('a published folder whose files changed is refused by check, calibrate and build', () => {
  const parent = join(tmp, 'frozen');
  let dir: string;
  beforeAll(async () => {
    mkdirSync(parent);
    dir = copyDemo('2026.1', parent);
    expect((await run(['publish', dir, '--date', DATE])).code).toBe(0);
  });

  it('names a changed data file, in each command', async () => {
    const file = join(dir, 'cepheids.ecsv');
    const original = readFileSync(file);
    const before = { sha: sha(file), bytes: original.length };
    editTable(dir, 'cepheids', (t, col) => {
      t.rows[3]![col('m_h')] = String(Number(t.rows[3]![col('m_h')]) + 0.01);
    });
    const now = { sha: sha(file), bytes: readFileSync(file).length };
    const check = await run(['check', dir]);
    expect(check.code).toBe(1);
    expect(check.err).toContain(
      `${file}: the release was published on ${DATE} and this file has changed since; ` +
        `expected sha256 ${before.sha.slice(0, 16)}… (${before.bytes} bytes) as recorded in ${PUBLISHED_FILE}, found sha256 ${now.sha.slice(0, 16)}… (${now.bytes} bytes)`,
    );
    const out = join(tmp, 'frozen.json');
    const cal = await run(['calibrate', dir, '--json', out]);
    expect(cal.code).toBe(1);
    expect(cal.err).toContain(`${file}: the release was published on ${DATE} and this file has changed since`);
    expect(existsSync(out)).toBe(false);
    const dist = join(tmp, 'frozen-dist');
    const build = await run(['build', '--releases', parent, '--out', dist], { workDir: join(tmp, 'frozen-work'), cacheDir: join(tmp, 'frozen-cache') });
    expect(build.code).toBe(1);
    expect(build.err).toContain(`${file}: the release was published on ${DATE} and this file has changed since`);
    expect(build.err).toContain(`rungbook build: release ${dir} is published and a file has changed since: ${file}`);
    expect(existsSync(dist)).toBe(false);
    writeFileSync(file, original);
    expect((await run(['check', dir])).code).toBe(0);
  });

  it('names a missing file and an added file', async () => {
    const notes = join(dir, 'notes.md');
    const text = readFileSync(notes);
    unlinkSync(notes);
    writeFileSync(join(dir, 'extra-notes.txt'), 'added later\n');
    const check = await run(['check', dir]);
    expect(check.code).toBe(1);
    expect(check.err).toContain(`${notes}: the release was published on ${DATE} with this file, which is now missing`);
    expect(check.err).toContain(`${join(dir, 'extra-notes.txt')}: the file was added after the release was published on ${DATE}`);
    writeFileSync(notes, text);
    unlinkSync(join(dir, 'extra-notes.txt'));
    expect((await run(['check', dir])).code).toBe(0);
  });

  it('ignores an editor backup and a hidden file that appear later, as every reader does', async () => {
    const backup = join(dir, 'cepheids.ecsv~');
    writeFileSync(backup, readFileSync(join(dir, 'cepheids.ecsv')));
    writeFileSync(join(dir, '.editor-state'), 'x');
    const check = await run(['check', dir]);
    expect(check.err).toBe('');
    expect(check.code).toBe(0);
    expect(check.out).toContain(`${dir}: ignored ".editor-state", "cepheids.ecsv~" (hidden files and editor backups are never read)`);
    unlinkSync(backup);
    unlinkSync(join(dir, '.editor-state'));
  });

  it('names an unreadable publication record', async () => {
    const rec = join(dir, PUBLISHED_FILE);
    const text = readFileSync(rec);
    writeFileSync(rec, '{"schema": "rungbook.published/1", "files": ');
    const check = await run(['check', dir]);
    expect(check.code).toBe(1);
    expect(check.err).toContain(`${rec}: the publication record cannot be read`);
    writeFileSync(rec, text);
  });
});

describe('the report of a published release', () => {
  const parent = join(tmp, 'report');
  const dist = join(tmp, 'report-dist');
  let moved: string;
  let same: string;
  let published: Results;
  const page = (rel: string) => new JSDOM(readFileSync(join(dist, rel), 'utf8')).window.document;

  beforeAll(async () => {
    mkdirSync(parent);
    moved = copyDemo('2026.1', parent);
    same = copyDemo('2026.2', parent);
    const unpublished = copyDemo('2026.3', parent);
    expect(unpublished).toBeTruthy();
    expect((await run(['publish', moved, '--by', BY, '--date', DATE])).code).toBe(0);
    expect((await run(['publish', same, '--date', '2026-06-20'])).code).toBe(0);
    // Simulate a code change since the publication of 2026.1: the published numbers differ from what
    // the current code computes, and were made by another code version.
    const rec = record(moved);
    rec.results.h0!.value -= 1.5;
    rec.results.parameters.M_W!.value += 0.01;
    rec.code_version = '0.0.9+000000000000';
    rec.results.provenance.code_version = rec.code_version;
    writeFileSync(join(moved, PUBLISHED_FILE), `${JSON.stringify(rec, null, 2)}\n`);
    published = rec.results;
    const b = await run(['build', '--releases', parent, '--out', dist], { workDir: join(tmp, 'report-work'), cacheDir: join(tmp, 'report-cache') });
    expect(b.err).toBe('');
    expect(b.code).toBe(0);
  }, BUILD_TIMEOUT_MS);

  it('shows the published values, not the recomputed ones', () => {
    const d = page('releases/2026.1/index.html');
    expect(d.querySelector('.headline .value')?.textContent).toBe(published.h0!.value.toFixed(1));
    const dl = JSON.parse(readFileSync(join(dist, 'releases/2026.1/downloads/results.json'), 'utf8'));
    expect(dl).toEqual(published);
  });

  it('says on every page of the release which published values the current code moves, and by how much', () => {
    const pages = listFilesSync(dist).filter((f) => f.startsWith('releases/2026.1/') && f.endsWith('.html'));
    expect(pages.length).toBeGreaterThan(20);
    for (const p of pages) {
      const notice = page(p).querySelector('aside.published-notice.published-moved');
      expect(notice, p).not.toBeNull();
      expect(notice!.textContent, p).toContain(`Published on ${DATE} by ${BY} with code version 0.0.9+000000000000`);
    }
    const d = page('releases/2026.1/index.html');
    const rows = Array.from(d.querySelectorAll('.published-changes tbody tr')).map((tr) => Array.from(tr.children).map((c) => c.textContent));
    // H0 first, then M_W; nothing else moved. Recomputed H0 is the published one + 1.5 (the edit undone by the recomputation).
    const recomputedH0 = published.h0!.value + 1.5;
    const d0 = digitsToTellApart(published.h0!.value, recomputedH0);
    expect(rows.length).toBe(2);
    expect(rows[0]).toEqual([
      'H0',
      String(Number(published.h0!.value.toPrecision(d0))),
      String(Number(recomputedH0.toPrecision(d0))),
      expect.stringMatching(/^\+1\.5 \(\+2\.\d %\)$/),
    ]);
    expect(rows[1]![0]).toBe('M_W');
    expect(rows[1]![3]).toMatch(/^\u22120\.01 \(/);
    expect(d.querySelector('.published-notice')!.textContent).toContain(`2 of `);
    expect(d.querySelector('.published-notice')!.textContent).toContain(`Recomputed with the current code (${codeVersion()})`);
  });

  it('says that a published release is reproduced when the code moves nothing, and shows no notice on unpublished releases', () => {
    const notice = page('releases/2026.2/index.html').querySelector('aside.published-notice');
    expect(notice).not.toBeNull();
    expect(notice!.classList.contains('published-moved')).toBe(false);
    expect(notice!.textContent).toContain('every published value is reproduced');
    expect(page('releases/2026.3/index.html').querySelector('aside.published-notice')).toBeNull();
  });
});

describe('comparing published results with a recomputation (src/publish/drift.ts)', () => {
  const base = (): Results => JSON.parse(readFileSync(join(tmp, 'before.json'), 'utf8')) as Results;

  it('reports nothing for identical results, or a different code version alone', () => {
    const a = base();
    const b = base();
    b.provenance.code_version = 'other';
    const d = compareResults(a, b);
    expect(d.entries).toEqual([]);
    expect(d.compared).toBeGreaterThan(1000);
    expect([d.publishedCodeVersion, d.currentCodeVersion]).toEqual([a.provenance.code_version, 'other']);
  });

  it('ignores changes below the tolerance and reports those above it, H0 first', () => {
    const a = base();
    const b = base();
    b.h0!.value *= 1 + DRIFT_RELATIVE / 10;
    expect(compareResults(a, b).entries).toEqual([]);
    b.h0!.stat *= 1 + DRIFT_RELATIVE * 10;
    b.rungs.cepheids[0]!.residual += 0.5;
    b.rungs.cepheids[1]!.rejected = !b.rungs.cepheids[1]!.rejected;
    b.rungs.supernovae.hubble_flow.pop();
    const e = compareResults(a, b).entries;
    // H0 first; then the rest by size of change (a flag or a length counts as largest), ties by path.
    expect(e.map((x) => x.label)).toEqual([
      'H0 statistical error',
      `rungs.cepheids[star=${JSON.stringify(a.rungs.cepheids[1]!.star)}].rejected`,
      'rungs.supernovae.hubble_flow.length',
      `rungs.cepheids[star=${JSON.stringify(a.rungs.cepheids[0]!.star)}].residual`,
    ]);
    const residual = e.find((x) => x.path.endsWith('.residual'))!;
    expect(residual.delta).toBeCloseTo(0.5, 12);
    expect(changeOf(e.find((x) => x.path.endsWith('.length'))!)).toMatchObject({
      published: `${a.rungs.supernovae.hubble_flow.length} items`,
      change: 'changed',
    });
  });

  it('shows each moved pair with enough digits to tell them apart', () => {
    expect(digitsToTellApart(70.0, 70.5)).toBe(4);
    expect(digitsToTellApart(70.123456, 70.123457)).toBe(9);
    const c = changeOf({
      path: 'h0.value',
      label: 'H0',
      published: 70.123456,
      recomputed: 70.123457,
      delta: 70.123457 - 70.123456,
      relative: (70.123457 - 70.123456) / 70.123456,
    });
    expect([c.published, c.recomputed]).toEqual(['70.123456', '70.123457']);
  });
});
