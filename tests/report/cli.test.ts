/**
 * `rungbook build` as a command: argument handling, exit codes, where output
 * goes (summary on stdout, progress and errors on stderr), and one full build
 * of the fixture releases through the command.
 */
import { mkdtemp, readFile, rm } from 'node:fs/promises';
import { tmpdir } from 'node:os';
import { join } from 'node:path';
import { afterAll, describe, expect, it } from 'vitest';
import { runBuild } from '../../src/cli/build.ts';
import { InputError } from '../../src/types/issues.ts';
import { calibrateFixture } from '../fixtures/report/syntheticResults.ts';
import { FIXTURE_RELEASES } from './fixtureBuild.ts';

function capture() {
  const out: string[] = [];
  const err: string[] = [];
  return { out, err, io: { stdout: (s: string) => void out.push(s), stderr: (s: string) => void err.push(s), stderrIsTTY: false, env: {} } };
}

const tmps: string[] = [];
afterAll(async () => {
  for (const t of tmps) await rm(t, { recursive: true, force: true });
});

describe('rungbook build: usage', () => {
  it('refuses an unknown option with exit code 2 and the usage on stderr', async () => {
    const c = capture();
    expect(await runBuild(['--bogus'], { ...c.io, calibrate: calibrateFixture, compare: null })).toBe(2);
    expect(c.out).toEqual([]);
    expect(c.err.join('')).toContain('unknown argument "--bogus"');
    expect(c.err.join('')).toContain('usage: rungbook build');
  });

  it('refuses an option without its value, and a --site that is not http(s)', async () => {
    for (const args of [['--out'], ['--releases', '--out', 'x'], ['--site', 'ftp://host/']]) {
      const c = capture();
      expect(await runBuild(args, { ...c.io, calibrate: calibrateFixture, compare: null }), args.join(' ')).toBe(2);
    }
  });

  it('prints the usage for --help with exit code 0', async () => {
    const c = capture();
    expect(await runBuild(['--help'], { ...c.io, calibrate: calibrateFixture, compare: null })).toBe(0);
    expect(c.err.join('')).toContain('--releases DIR');
  });
});

describe('rungbook build: failures', () => {
  it('exits 1 naming the folder when the releases folder does not exist', async () => {
    const c = capture();
    const missing = join(tmpdir(), 'rungbook-no-such-folder');
    expect(await runBuild(['--releases', missing], { ...c.io, calibrate: calibrateFixture, compare: null })).toBe(1);
    expect(c.err.join('')).toContain(`releases folder ${missing} cannot be read`);
    expect(c.out).toEqual([]);
  });

  it('lists every input problem of a release as file:line with its column, and exits 1', async () => {
    const tmp = await mkdtemp(join(tmpdir(), 'rungbook-cli-'));
    tmps.push(tmp);
    const c = capture();
    const bad = async (dir: string) => {
      throw new InputError([
        {
          code: 'not-finite',
          file: `${dir}/parallax.ecsv`,
          line: 14,
          column: 'parallax',
          expected: 'a finite number',
          found: '"nan"',
          message: 'value is not a number',
        },
        { code: 'unknown-system', file: `${dir}/cepheids.ecsv`, line: 9, column: 'system', message: 'system "Nowhere" is not in systems.ecsv' },
      ]);
    };
    const code = await runBuild(['--releases', FIXTURE_RELEASES, '--out', join(tmp, 'dist')], {
      ...c.io,
      calibrate: bad,
      compare: null,
      workDir: join(tmp, 'work'),
      cacheDir: join(tmp, 'cache'),
    });
    expect(code).toBe(1);
    const err = c.err.join('');
    expect(err).toContain('2025.4/parallax.ecsv:14: column "parallax": value is not a number; expected a finite number, found "nan"');
    expect(err).toContain('2025.4/cepheids.ecsv:9: column "system": system "Nowhere" is not in systems.ecsv');
    expect(c.out).toEqual([]);
  });
});

describe('rungbook build: a full build', () => {
  it('builds the fixture report under the base path from the environment, quietly, with a summary on stdout', async () => {
    const tmp = await mkdtemp(join(tmpdir(), 'rungbook-cli-'));
    tmps.push(tmp);
    const c = capture();
    const code = await runBuild(['--releases', FIXTURE_RELEASES, '--out', join(tmp, 'dist'), '--site', 'https://reports.example.org'], {
      ...c.io,
      env: { RUNGBOOK_BASE: '/team/h0' },
      calibrate: calibrateFixture,
      compare: null,
      workDir: join(tmp, 'work'),
      cacheDir: join(tmp, 'cache'),
    });
    expect(c.err).toEqual([]);
    expect(code).toBe(0);
    expect(c.out.join('')).toMatch(/^Built 3 releases \(2025\.4, 2026\.1, 2026\.2\) into .*dist\n\d+ pages/);
    const home = await readFile(join(tmp, 'dist', 'index.html'), 'utf8');
    expect(home).toContain('href="/team/h0/releases/2026.2/"');
    const fig = await readFile(join(tmp, 'dist', 'releases/2026.1/figures/hubble-diagram/index.html'), 'utf8');
    expect(fig).toContain('content="https://reports.example.org/team/h0/releases/2026.1/figures/hubble-diagram.png"');
  }, 300_000);

  it('prints progress on stderr with --progress', async () => {
    const tmp = tmps[tmps.length - 1]!;
    const c = capture();
    const code = await runBuild(['--releases', FIXTURE_RELEASES, '--out', join(tmp, 'dist'), '--progress'], {
      ...c.io,
      calibrate: calibrateFixture,
      compare: null,
      workDir: join(tmp, 'work'),
      cacheDir: join(tmp, 'cache'),
    });
    expect(code).toBe(0);
    const err = c.err.join('');
    expect(err).toMatch(/calibrating 1\/3: .*2025\.4/);
    expect(err).toContain('building the site with Astro');
  }, 300_000);
});
