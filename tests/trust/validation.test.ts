/**
 * Validation through the command line, where tests/io stops at the readers
 * (kind: edge cases; the physics of each case is common practice, no source).
 *
 * tests/io already covers every rule of the format contract with file, line,
 * column, expected and found (tables.test.ts, ecsv/csv/votable tests), unknown
 * keys with their suggestion at reader level (manifest.test.ts), BOM, CRLF and
 * quoted fields with commas and line breaks (csv.test.ts, ecsv.test.ts). Here:
 * - an unknown analysis key and a misspelt variant key, as `rungbook calibrate` prints them;
 * - a ladder that cannot reach a geometric anchor, naming the system;
 * - numerically degenerate releases written from demo release 2026.1 with small
 *   edits: each ends with an explanation (exit 1) or a valid result (exit 0),
 *   and the releases that calibrate are built into a report in which no page,
 *   figure table or download holds NaN or an infinity.
 */
import { existsSync, mkdirSync, readFileSync, rmSync, unlinkSync, writeFileSync } from 'node:fs';
import { join } from 'node:path';
import { afterAll, beforeAll, describe, expect, it } from 'vitest';
import { main } from '../../src/cli/main.ts';
import { parseResults } from '../../src/io/results.ts';
import type { Results } from '../../src/types/results.ts';
import { listFilesSync } from '../report/linkCheck.ts';
import { copyDemo, editTable, setManifestValue, tempDir } from './releaseCopy.ts';

const BUILD_TIMEOUT_MS = 600_000;

type Io = Parameters<typeof main>[1] & { workDir?: string; cacheDir?: string };
async function run(argv: string[], extra: Partial<Io> = {}) {
  let out = '';
  let err = '';
  const code = await main(argv, { stdout: (s) => void (out += s), stderr: (s) => void (err += s), ...extra } as Io);
  return { code, out, err };
}

function allFinite(x: unknown): boolean {
  if (typeof x === 'number') return Number.isFinite(x);
  if (Array.isArray(x)) return x.every(allFinite);
  if (x && typeof x === 'object') return Object.values(x).every(allFinite);
  return true;
}

const tmp = tempDir('rungbook-validation-');
afterAll(() => rmSync(tmp, { recursive: true, force: true }));

/** Copy demo 2026.1 as release `name` under `parent`, apply `edit`, and calibrate it. */
async function calibrateEdited(parent: string, name: string, edit: (dir: string) => void) {
  mkdirSync(parent, { recursive: true });
  const dir = copyDemo('2026.1', parent, name);
  edit(dir);
  const json = join(tmp, `${name}.json`);
  const r = await run(['calibrate', dir, '--json', json]);
  return { ...r, dir, json, results: r.code === 0 ? parseResults(readFileSync(json, 'utf8')) : null };
}

describe('unknown keys, as the command line reports them', () => {
  it('names the line of a misspelt analysis key and suggests the known one', async () => {
    const r = await calibrateEdited(join(tmp, 'keys'), 'typo', (d) => setManifestValue(d, 'clip_sigma', '3.5\n  clip_sigmaa: 4'));
    expect(r.code).toBe(1);
    const line =
      readFileSync(join(r.dir, 'release.yaml'), 'utf8')
        .split('\n')
        .findIndex((l) => l.includes('clip_sigmaa')) + 1;
    expect(r.err).toContain(`${join(r.dir, 'release.yaml')}:${line}: column "analysis.clip_sigmaa": `);
    expect(r.err).toContain('(did you mean "clip_sigma"?)');
    expect(existsSync(r.json)).toBe(false);
  });

  it('names a misspelt key inside a variant', async () => {
    let n = 0;
    const r = await calibrateEdited(join(tmp, 'keys'), 'variant-typo', (d) => {
      const file = join(d, 'release.yaml');
      const text = readFileSync(file, 'utf8');
      n = text.split('\n').filter((l) => l.startsWith('    - {')).length;
      writeFileSync(file, `${text.trimEnd()}\n    - { name: "low z", z_mni: 0.01 }\n`);
    });
    expect(n).toBeGreaterThan(0);
    expect(r.code).toBe(1);
    // Variants are counted from 1 in messages, as an editor's reader counts them (src/io/manifest.ts).
    expect(r.err).toMatch(new RegExp(`column "analysis\\.variants\\[${n + 1}\\]\\.z_mni": .*\\(did you mean "z_min"\\?\\)`));
  });
});

describe('a ladder that cannot reach a geometric anchor names the system', () => {
  it('a supernova host without Cepheids', async () => {
    const r = await calibrateEdited(join(tmp, 'links'), 'orphan-host', (d) =>
      editTable(d, 'cepheids', (t, col) => {
        t.rows = t.rows.filter((row) => row[col('system')] !== 'Rowanstead');
      }),
    );
    expect(r.code).toBe(1);
    expect(r.err).toContain(
      'rungbook calibrate: The ladder cannot reach a geometric anchor from "Rowanstead": this supernova host has no Cepheids and no distance of its own.',
    );
    expect(existsSync(r.json)).toBe(false);
  });

  it('Cepheid systems of which none has a distance of its own', async () => {
    const r = await calibrateEdited(join(tmp, 'links'), 'no-anchor', (d) => {
      unlinkSync(join(d, 'parallax.ecsv'));
      unlinkSync(join(d, 'main_sequence.ecsv'));
    });
    expect(r.code).toBe(1);
    expect(r.err).toMatch(/^rungbook calibrate: The ladder cannot reach a geometric anchor from any Cepheid system \("[^"]+"(, "[^"]+"){9} and 6 more\)/);
    expect(r.err).toContain('"Hearthfield"');
  });

  it('main-sequence targets without a geometric anchor', async () => {
    const r = await calibrateEdited(join(tmp, 'links'), 'no-ms-anchor', (d) =>
      editTable(d, 'main_sequence', (t, col) => {
        const anchors = new Set(['Alder', 'Birchmoor', 'Copperwell', 'Dunholt', 'Emberly']);
        t.rows = t.rows.filter((row) => !anchors.has(row[col('system')]!));
      }),
    );
    expect(r.code).toBe(1);
    expect(r.err).toMatch(
      /rungbook calibrate: main-sequence target\(s\) "Fernhollow", "Greywick", "Hollinford", "Wrenmere" but no geometric anchor has main-sequence rows/,
    );
  });
});

describe('numerically degenerate releases: an explanation or a valid result, never NaN', () => {
  const parent = join(tmp, 'degenerate');
  const ok: { name: string; results: Results }[] = [];
  const outcomes = new Map<string, Awaited<ReturnType<typeof calibrateEdited>>>();
  const cases: [string, (dir: string) => void][] = [
    [
      'one-anchor-star',
      (d) =>
        editTable(d, 'parallax', (t, col) => {
          const first = t.rows.findIndex((r) => r[col('system')] === 'Alder');
          t.rows = t.rows.filter((r, i) => r[col('system')] !== 'Alder' || i === first);
        }),
    ],
    [
      'single-cepheid-host',
      (d) =>
        editTable(d, 'cepheids', (t, col) => {
          const first = t.rows.findIndex((r) => r[col('system')] === 'Ivyreach');
          t.rows = t.rows.filter((r, i) => r[col('system')] !== 'Ivyreach' || i === first);
        }),
    ],
    [
      'all-sn-cut',
      (d) => {
        setManifestValue(d, 'z_min', '0.2');
        setManifestValue(d, 'z_max', '0.3');
      },
    ],
    [
      'one-period',
      (d) =>
        editTable(d, 'cepheids', (t, col) => {
          for (const r of t.rows) r[col('period')] = '10';
        }),
    ],
    [
      'single-flow-sn',
      (d) =>
        editTable(d, 'sn_hubble_flow', (t) => {
          t.rows = t.rows.slice(0, 1);
        }),
    ],
    ['no-calibrators', (d) => unlinkSync(join(d, 'sn_calibrators.ecsv'))],
    ['series-not-positive', (d) => setManifestValue(d, 'j0', '1e9')],
    [
      'covariance-not-a-covariance',
      (d) =>
        editTable(d, 'sn_hubble_flow', (t, col) => {
          t.rows[4]![col('cov_mb_c')] = '0.5';
        }),
    ],
  ];

  beforeAll(async () => {
    for (const [name, edit] of cases) {
      const r = await calibrateEdited(parent, name, edit);
      outcomes.set(name, r);
      if (r.code === 0) ok.push({ name, results: r.results! });
    }
  }, BUILD_TIMEOUT_MS);

  const explained = (name: string, message: RegExp) => {
    const r = outcomes.get(name)!;
    expect(r.code, r.err).toBe(1);
    expect(r.err).toMatch(message);
    expect(r.err).not.toMatch(/internal error|non-finite/);
    expect(existsSync(r.json)).toBe(false);
  };

  it('one anchor star: explained, naming the anchor and the line', () => {
    explained('one-anchor-star', /anchor "Alder" has 1 parallax star\(s\) \(line \d+ of parallax\); a mean parallax needs at least 2\n {2}hint: /);
  });

  it('every supernova outside the redshift range: explained, naming the range', () => {
    explained('all-sn-cut', /No Hubble-flow supernova lies inside 0\.2 <= z <= 0\.3 \(all 150 are cut\)\.\n {2}hint: Widen z_min\/z_max/);
  });

  it('every Cepheid with one period: explained (no period-luminosity slope)', () => {
    explained('one-period', /cannot determine the period-luminosity slope b_W \(the Cepheid periods do not span a range\)/);
  });

  it('q0 and j0 that make the distance series negative: explained, naming the keys and a supernova', () => {
    explained(
      'series-not-positive',
      /With q0 = -0\.55 and j0 = 1000000000, the kinematic distance series is not positive at z = [\d.]+ \(Hubble-flow supernova "hf-\d+", sn_hubble_flow line \d+\)/,
    );
  });

  it('a light-curve covariance that is no covariance: refused as input, naming file, line and column', () => {
    const r = outcomes.get('covariance-not-a-covariance')!;
    expect(r.code).toBe(1);
    const line =
      readFileSync(join(r.dir, 'sn_hubble_flow.ecsv'), 'utf8')
        .split('\n')
        .findIndex((l) => l.startsWith('hf-0005,')) + 1;
    expect(r.err).toMatch(
      new RegExp(`sn_hubble_flow\\.ecsv:${line}: column "cov_mb_c": the covariance implies a correlation of [\\d.]+ between m_b and c, beyond ±1`),
    );
  });

  it('a host with one Cepheid, a single Hubble-flow supernova: valid results with finite numbers', () => {
    for (const name of ['single-cepheid-host', 'single-flow-sn']) {
      const r = outcomes.get(name)!;
      expect(r.code, `${name}: ${r.err}`).toBe(0);
      expect(allFinite(r.results), name).toBe(true);
      expect(r.results!.h0!.value, name).toBeGreaterThan(0);
      expect(r.results!.h0!.stat, name).toBeGreaterThan(0);
    }
    // One Hubble-flow supernova: the intercept rests on it alone, so H0's error grows (2026.1 itself: 1.77).
    expect(outcomes.get('single-flow-sn')!.results!.h0!.stat).toBeGreaterThan(3);
    expect(outcomes.get('single-cepheid-host')!.results!.rungs.cepheids.filter((c) => c.system === 'Ivyreach').length).toBe(1);
  });

  it('Hubble-flow supernovae without calibrators: the ladder stops at the Cepheid rung and says why', () => {
    const r = outcomes.get('no-calibrators')!;
    expect(r.code, r.err).toBe(0);
    expect(r.results!.reached).toBe('cepheids');
    expect(r.results!.h0).toBeNull();
    expect(allFinite(r.results)).toBe(true);
    expect(r.results!.checks.find((c) => c.id === 'hubble-flow-without-calibrators')).toMatchObject({ passed: false, severity: 'warning' });
    expect(r.out).toContain('H0 not measured: the ladder stops at the cepheids rung.');
  });

  it(
    'builds the releases that calibrate into a report with no NaN or infinity on any page or in any download',
    async () => {
      expect(ok.map((o) => o.name).sort()).toEqual(['no-calibrators', 'single-cepheid-host', 'single-flow-sn']);
      // Only the releases that calibrate go into the report.
      for (const [name] of cases) if (!ok.some((o) => o.name === name)) rmSync(join(parent, name), { recursive: true });
      const dist = join(tmp, 'degenerate-dist');
      const b = await run(['build', '--releases', parent, '--out', dist], { workDir: join(tmp, 'degenerate-work'), cacheDir: join(tmp, 'degenerate-cache') });
      expect(b.err).toBe('');
      expect(b.code).toBe(0);
      const files = listFilesSync(dist);
      const pages = files.filter((f) => f.endsWith('.html'));
      expect(pages.length).toBeGreaterThan(3 * 20);
      for (const f of pages) {
        const text = readFileSync(join(dist, f), 'utf8').replace(/<[^>]*>/g, ' ');
        expect(text, f).not.toMatch(/\bNaN\b|Infinity|∞/);
      }
      for (const f of files.filter((x) => /\.(csv|ecsv|json)$/.test(x))) {
        expect(readFileSync(join(dist, f), 'utf8'), f).not.toMatch(/(^|[,\s:"])(-?inf|nan|NaN|-?Infinity)([,\s"]|$)/m);
      }
    },
    BUILD_TIMEOUT_MS,
  );
});
