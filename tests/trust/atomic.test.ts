/**
 * Atomic builds (kind: pipeline regressions). A build that fails at any step
 * leaves the previous site AND every cache byte-identical (generated pages and
 * figures with their stamps, Astro's cache, cached results.json files), and its
 * message names the step that failed. The failures are injected where they
 * happen in real life: the calibration throws, a figure fails while the
 * figures are being written (after others were written), Astro rejects a method
 * note, the finished site fails its check (math KaTeX cannot typeset).
 *
 * Each failing build is one that would have changed the caches (two releases
 * changed since the previous build), so equality is not vacuous; a final
 * successful build shows that the caches then do move forward.
 *
 * The fixture releases use the fake calibration of tests/fixtures/report.
 */
import { createHash } from 'node:crypto';
import { cpSync, existsSync, mkdirSync, readdirSync, readFileSync, renameSync, rmSync, writeFileSync } from 'node:fs';
import { join, relative } from 'node:path';
import { afterAll, beforeAll, describe, expect, it } from 'vitest';
import { runBuild } from '../../src/cli/build.ts';
import { buildReport, REPO_ROOT, type BuildReportOptions } from '../../src/report/build.ts';
import { RELEASE_FIGURES } from '../../src/report/figures/index.ts';
import { beginWork } from '../../src/report/workState.ts';
import { calibrateFixture } from '../fixtures/report/syntheticResults.ts';
import { FIXTURE_RELEASES } from '../report/fixtureBuild.ts';
import { tempDir } from './releaseCopy.ts';

const BUILD_TIMEOUT_MS = 600_000;

/** Every file under `dir` (dot files included) with its SHA-256; an absent folder is an empty map. */
function snapshot(dir: string): Map<string, string> {
  const out = new Map<string, string>();
  if (!existsSync(dir)) return out;
  const walk = (d: string) => {
    for (const e of readdirSync(d, { withFileTypes: true })) {
      const p = join(d, e.name);
      if (e.isDirectory()) walk(p);
      else out.set(relative(dir, p), createHash('sha256').update(readFileSync(p)).digest('hex'));
    }
  };
  walk(dir);
  return out;
}
const sorted = (m: Map<string, string>) => [...m.entries()].sort(([a], [b]) => (a < b ? -1 : 1));

const tmp = tempDir('rungbook-atomic-');
const releases = join(tmp, 'releases');
const paths = { dist: join(tmp, 'dist'), work: join(tmp, 'work'), cache: join(tmp, 'cache') };
const base = (over: Partial<BuildReportOptions> = {}): BuildReportOptions => ({
  releasesDir: releases,
  outDir: paths.dist,
  workDir: paths.work,
  cacheDir: paths.cache,
  base: '/',
  progress: false,
  calibrate: calibrateFixture,
  // fixture releases hold no data tables to compare (their comparison pages say "not computed")
  compare: null,
  ...over,
});
let before: Record<keyof typeof paths, [string, string][]>;
const state = () => ({ dist: sorted(snapshot(paths.dist)), work: sorted(snapshot(paths.work)), cache: sorted(snapshot(paths.cache)) });

beforeAll(async () => {
  cpSync(FIXTURE_RELEASES, releases, { recursive: true });
  await buildReport(base());
  before = state();
  // Two releases change, so the next build has results to cache and pages to regenerate.
  for (const id of ['2025.4', '2026.1']) {
    const f = join(releases, id, 'release.yaml');
    writeFileSync(f, readFileSync(f, 'utf8').replace(/^title: .*$/m, `title: "Changed title of ${id}"`));
  }
}, BUILD_TIMEOUT_MS);

afterAll(() => rmSync(tmp, { recursive: true, force: true }));

describe('a failed build leaves the site and the caches byte-identical and names the step', () => {
  it('has a previous site and caches to protect', () => {
    expect(before.dist.length).toBeGreaterThan(50);
    expect(before.work.some(([f]) => f.startsWith('gen/stamps/'))).toBe(true);
    expect(before.work.some(([f]) => f.startsWith('astro-cache/'))).toBe(true);
    expect(before.cache.length).toBe(3);
  });

  it('fails at the calibration (after another release was calibrated)', async () => {
    let calls = 0;
    const calibrate = async (dir: string) => {
      calls += 1;
      if (dir.endsWith('2026.1')) throw new Error('injected: calibration refused');
      return calibrateFixture(dir);
    };
    await expect(buildReport(base({ calibrate }))).rejects.toThrow(/^calibration of .*2026\.1 failed: injected: calibration refused/);
    expect(calls).toBe(2); // 2025.4 (changed, so calibrated and due for the cache), then 2026.1
    expect(state()).toEqual(before);
  });

  it('fails while the figures are written (after the first figures of a release were written)', async () => {
    const figures = RELEASE_FIGURES.map((f, i) =>
      i === 2
        ? {
            id: f.id,
            render: () => {
              throw new Error('injected: figure refused');
            },
          }
        : f,
    );
    await expect(buildReport(base({ figures }))).rejects.toThrow(/^figures and pages of release 2025\.4 failed: injected: figure refused/);
    expect(state()).toEqual(before);
  });

  it(
    'fails in the Astro step (a method note without its title)',
    async () => {
      const methods = join(tmp, 'methods-no-title');
      cpSync(join(REPO_ROOT, 'content/methods'), methods, { recursive: true });
      const note = join(methods, 'cepheids.md');
      writeFileSync(note, readFileSync(note, 'utf8').replace(/^title: .*$/m, ''));
      await expect(buildReport(base({ methodsDir: methods }))).rejects.toThrow(/^site build \(Astro\) failed: .*title/s);
      expect(state()).toEqual(before);
    },
    BUILD_TIMEOUT_MS,
  );

  it(
    'fails the check of the finished site (math KaTeX cannot typeset)',
    async () => {
      const methods = join(tmp, 'methods-bad-math');
      cpSync(join(REPO_ROOT, 'content/methods'), methods, { recursive: true });
      const note = join(methods, 'cepheids.md');
      writeFileSync(
        note,
        readFileSync(note, 'utf8').replace('$$', () => '$$\n\\frac{1}{'),
      );
      await expect(buildReport(base({ methodsDir: methods }))).rejects.toThrow(/^site check failed: math that KaTeX cannot typeset/);
      expect(state()).toEqual(before);
    },
    BUILD_TIMEOUT_MS,
  );

  it('says on the command line which step failed and that nothing was changed', async () => {
    let err = '';
    const code = await runBuild(['--releases', releases, '--out', paths.dist], {
      stdout: () => undefined,
      stderr: (s) => void (err += s),
      stderrIsTTY: false,
      env: {},
      workDir: paths.work,
      cacheDir: paths.cache,
      calibrate: async (dir) => {
        if (dir.endsWith('2026.1')) throw new Error('injected: calibration refused');
        return calibrateFixture(dir);
      },
    });
    expect(code).toBe(1);
    expect(err).toMatch(/^rungbook build: calibration of .*2026\.1 failed: injected: calibration refused\n/);
    expect(err).toContain(`the previous report in ${paths.dist} and the build caches were left as they were`);
    expect(state()).toEqual(before);
  });

  it(
    'moves the site and the caches forward when the build succeeds',
    async () => {
      await buildReport(base());
      const after = state();
      expect(after.cache.length).toBe(5); // two new results.json entries
      expect(after.work).not.toEqual(before.work);
      const home = readFileSync(join(paths.dist, 'index.html'), 'utf8');
      expect(home).toContain('Changed title of 2026.1');
      expect(readdirSync(paths.work).filter((f) => f.endsWith('.previous'))).toEqual([]);
    },
    BUILD_TIMEOUT_MS,
  );
});

describe('the work state of a build (src/report/workState.ts)', () => {
  const root = join(tmp, 'ws');
  const folder = join(root, 'gen');
  const seed = () => {
    rmSync(root, { recursive: true, force: true });
    mkdirSync(join(folder, 'sub'), { recursive: true });
    writeFileSync(join(folder, 'a.txt'), 'a');
    writeFileSync(join(folder, 'sub', 'b.txt'), 'b');
  };

  it('rolls back every change to a folder and forgets pending files', async () => {
    seed();
    const s0 = sorted(snapshot(folder));
    const w = await beginWork([folder]);
    writeFileSync(join(folder, 'a.txt'), 'changed');
    rmSync(join(folder, 'sub'), { recursive: true });
    w.later(join(root, 'cache', 'new.json'), '{}');
    await w.rollback();
    expect(sorted(snapshot(folder))).toEqual(s0);
    expect(existsSync(join(root, 'cache'))).toBe(false);
    expect(existsSync(`${folder}.previous`)).toBe(false);
  });

  it('keeps the changes and writes the pending files on commit', async () => {
    seed();
    const w = await beginWork([folder]);
    writeFileSync(join(folder, 'a.txt'), 'changed');
    w.later(join(root, 'cache', 'new.json'), '{}');
    await w.commit();
    expect(readFileSync(join(folder, 'a.txt'), 'utf8')).toBe('changed');
    expect(readFileSync(join(root, 'cache', 'new.json'), 'utf8')).toBe('{}');
    expect(existsSync(`${folder}.previous`)).toBe(false);
  });

  it('restores what a build killed half-way left behind before starting', async () => {
    seed();
    const s0 = sorted(snapshot(folder));
    // A killed build: the folder set aside, a half-changed copy in its place.
    renameSync(folder, `${folder}.previous`);
    mkdirSync(folder);
    writeFileSync(join(folder, 'half.txt'), 'half');
    const w = await beginWork([folder]);
    expect(sorted(snapshot(folder))).toEqual(s0);
    await w.rollback();
    expect(sorted(snapshot(folder))).toEqual(s0);
  });

  it('removes a folder that did not exist before a failed build', async () => {
    rmSync(root, { recursive: true, force: true });
    const w = await beginWork([folder]);
    mkdirSync(folder, { recursive: true });
    writeFileSync(join(folder, 'x'), 'x');
    await w.rollback();
    expect(existsSync(folder)).toBe(false);
  });
});
