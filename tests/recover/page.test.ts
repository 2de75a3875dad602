/**
 * The recovery page in the built report (issue 16): a release with recovery.json beside it gets
 * the page, its figure and a link in its navigation; one without gets none. The table shows the
 * summary's numbers; the page carries the caution that recovery tests the model against itself
 * and the internal-review notice; links resolve; Chromium loads it cleanly and axe finds no serious
 * violation; a blinded release's page says its truth is the blinded fit and holds no true H0.
 * Kind: report pipeline (DEVELOPERS.md, trust and report checks).
 */
import { cpSync, existsSync, mkdirSync, readFileSync } from 'node:fs';
import { join } from 'node:path';
import { JSDOM } from 'jsdom';
import { afterAll, beforeAll, describe, expect, it } from 'vitest';
import { calibrateReleaseDir } from '../../src/cli/calibrate.ts';
import { main } from '../../src/cli/main.ts';
import { releaseAndTruth } from '../../src/recover/run.ts';
import { describeQuantity } from '../../src/recover/quantities.ts';
import { parseRecoverySummary, type RecoverySummary } from '../../src/recover/summary.ts';
import { capture, hasNumberToken, tempDir, writeKeyFile } from '../blinding/helpers.ts';
import { expectClean, openInChromium, type SiteInBrowser } from '../browser/visit.ts';
import { buildInTemp, type FixtureBuild } from '../report/fixtureBuild.ts';
import { checkLinks } from '../report/linkCheck.ts';
import { HALF_UNIT_1ST_DECIMAL, HALF_UNIT_3RD_DECIMAL } from '../tolerances.ts';

const RELEASES = join(import.meta.dirname, '../../content/releases');
const DEMO_KEY = 'lantern-demo-key-NOT-SECRET-7c1f0e9a2b5d4863';
const BASE = '/collab/ladder/';

const tmp = tempDir('recover-page');
const releases = join(tmp, 'releases');
let built: FixtureBuild;
let site: SiteInBrowser | null = null;
const summaries: Record<string, RecoverySummary> = {};

const page = (rel: string) => new JSDOM(readFileSync(join(built.dist, rel), 'utf8')).window.document;
/** A cell's number: the report writes a real minus sign. */
const number = (text: string) => Number(text.replace(/\u2212/g, '-'));

beforeAll(async () => {
  mkdirSync(releases);
  for (const id of ['2026.2', '2026.3', '2026.4']) cpSync(join(RELEASES, id), join(releases, id), { recursive: true });
  for (const [id, seeds] of [
    ['2026.3', '6'],
    ['2026.4', '3'],
  ] as const) {
    const c = capture();
    await main(['recover', join(releases, id), '--seeds', seeds, '--workers', '2', '--out', join(tmp, `${id}.jsonl`)], c.io);
    const file = join(releases, id, 'recovery.json');
    summaries[id] = parseRecoverySummary(file, readFileSync(file, 'utf8'));
  }
  built = await buildInTemp('rungbook-recover-site-', {
    releasesDir: releases,
    base: BASE,
    site: 'https://reports.example.org',
    calibrate: calibrateReleaseDir,
    compare: null,
  });
}, 600_000);

afterAll(async () => {
  await site?.close();
});

describe('the recovery page', () => {
  it('exists, with its figure and a navigation link, only for releases with a recovery.json', () => {
    for (const id of ['2026.3', '2026.4']) {
      expect(existsSync(join(built.dist, `releases/${id}/recovery/index.html`))).toBe(true);
      const nav = [...page(`releases/${id}/index.html`).querySelectorAll('.release-nav a')].map((a) => a.getAttribute('href'));
      expect(nav).toContain(`${BASE}releases/${id}/recovery/`);
      for (const ext of ['svg', 'png', 'csv']) expect(existsSync(join(built.dist, `releases/${id}/figures/recovery-pulls.${ext}`))).toBe(true);
      expect(existsSync(join(built.dist, `releases/${id}/figures/recovery-pulls/index.html`))).toBe(true);
    }
    expect(existsSync(join(built.dist, 'releases/2026.2/recovery'))).toBe(false);
    const nav = page('releases/2026.2/index.html').querySelector('.release-nav')!.textContent!;
    expect(nav).not.toContain('Recovery');
  });

  it("shows the summary's numbers, the verdict, the caution and the internal-review notice", () => {
    const s = summaries['2026.3']!;
    const doc = page('releases/2026.3/recovery/index.html');
    const text = doc.body.textContent!.replace(/\s+/g, ' ');
    expect(text).toContain('Recovery tests the model against itself: it cannot find an effect the simulation leaves out.');
    expect(text).toContain('Internal results for collaboration review');
    expect(text).toContain(`Verdict: ${s.verdict}`);
    const rows = [...doc.querySelectorAll('section[aria-labelledby="table-recovery-pulls-table"] tbody tr')];
    expect(rows).toHaveLength(s.quantities.length);
    rows.forEach((tr, i) => {
      const q = s.quantities[i]!;
      const cells = [...tr.querySelectorAll('td, th')].map((c) => c.textContent!.trim());
      expect(cells[0]).toContain(describeQuantity(q.key));
      expect(number(cells[1]!)).toBe(q.n);
      const [mean, meanSe] = cells[2]!.split(' ± ').map(number);
      expect(Math.abs(mean! - q.mean.value)).toBeLessThanOrEqual(HALF_UNIT_3RD_DECIMAL);
      expect(Math.abs(meanSe! - q.mean.se)).toBeLessThanOrEqual(HALF_UNIT_3RD_DECIMAL);
      const [sd] = cells[3]!.split(' ± ').map(number);
      expect(Math.abs(sd! - q.sd.value)).toBeLessThanOrEqual(HALF_UNIT_3RD_DECIMAL);
      const [c1] = cells[4]!.replace(' %', '').split(' ± ').map(number);
      expect(Math.abs(c1! - 100 * q.coverage1.value)).toBeLessThanOrEqual(HALF_UNIT_1ST_DECIMAL);
      const [c2] = cells[5]!.replace(' %', '').split(' ± ').map(number);
      expect(Math.abs(c2! - 100 * q.coverage2.value)).toBeLessThanOrEqual(HALF_UNIT_1ST_DECIMAL);
      expect(cells[6]).toBe(q.verdict);
    });
  });

  it('has no broken link anywhere in the report', async () => {
    const report = await checkLinks(built.dist, BASE);
    expect(report.problems).toEqual([]);
  });

  it('says, for a blinded release, that the truth is the blinded fit, and holds no true H0', async () => {
    const doc = page('releases/2026.4/recovery/index.html');
    expect(doc.body.textContent!.replace(/\s+/g, ' ')).toContain('the truth of the simulations is the blinded fit');
    const copy = join(tmp, 'unblinded', '2026.4');
    cpSync(join(RELEASES, '2026.4'), copy, { recursive: true });
    const u = capture();
    expect(await main(['unblind', copy, '--by', 'Test', '--key-file', writeKeyFile(tmp, 'k.txt', DEMO_KEY), '--date', '2027-01-01'], u.io)).toBe(0);
    const trueH0 = releaseAndTruth(copy, 'test').truthResults.h0!.value;
    const files = [
      'releases/2026.4/recovery/index.html',
      'releases/2026.4/figures/recovery-pulls.svg',
      'releases/2026.4/figures/recovery-pulls.csv',
      'releases/2026.4/figures/recovery-pulls/index.html',
    ];
    // 2 to 4 decimals: one decimal is how the page writes coverages in per cent, where any value may occur
    for (const f of files) {
      const t = readFileSync(join(built.dist, f), 'utf8');
      for (const d of [2, 3, 4]) expect(hasNumberToken(t, trueH0.toFixed(d)), `${f} holds ${trueH0.toFixed(d)}`).toBe(false);
    }
  });

  it('loads cleanly in Chromium and passes axe', async () => {
    site = await openInChromium(built, BASE);
    expectClean(await site.visit('releases/2026.3/recovery/', 'recovery-2026.3'));
    expectClean(await site.visit('releases/2026.3/figures/recovery-pulls/', 'figure-2026.3-recovery-pulls'));
  }, 300_000);
});

describe('a recovery.json the report cannot read', () => {
  it('is refused naming the file', () => {
    expect(() => parseRecoverySummary('x/recovery.json', '{"schema": "other"}')).toThrow(/x\/recovery\.json: "schema"/);
    expect(() => parseRecoverySummary('x/recovery.json', 'not json')).toThrow(/x\/recovery\.json: not JSON/);
  });
});
