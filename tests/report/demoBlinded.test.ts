/**
 * The blinded demo release 2026.4 in the built report. Its true H0 (the generator's truth,
 * and the fit of the release unblinded with the public demo key, baseline and every variant)
 * must appear nowhere in what the report publishes about it: its pages, figures (SVG and the
 * CSV beside each), tables (CSV, ECSV), results.json, and the comparison with 2026.3, at every
 * precision the site writes (1 to 4 decimals) and at full precision. Pages shared by all
 * releases (home, history) are checked too; there a number may legitimately coincide with a
 * value that another, unblinded release shows, and such coincidences are listed, not hidden.
 * Then a copy unblinded with the demo key shows its true values and the unblinding record on
 * every page. Kind: pipeline checks on the committed demo data.
 */
import { cpSync, mkdtempSync, readFileSync } from 'node:fs';
import { rm } from 'node:fs/promises';
import { tmpdir } from 'node:os';
import { join } from 'node:path';
import { JSDOM } from 'jsdom';
import { afterAll, beforeAll, describe, expect, it } from 'vitest';
import { calibrateReleaseDir } from '../../src/cli/calibrate.ts';
import { main } from '../../src/cli/main.ts';
import { DEMO_SEED, writeGeneratedRelease } from '../../src/demo/index.ts';
import { fixed } from '../../src/report/format.ts';
import type { Results } from '../../src/types/results.ts';
import { capture, writeKeyFile } from '../blinding/helpers.ts';
import { buildDemo, DEMO_BUILD_TIMEOUT_MS, DEMO_RELEASES, type DemoBuild } from './demoBuild.ts';
import { listFilesSync } from './linkCheck.ts';

/** The public demo key (README; scripts/generate-demo.ts). Demonstration data only. */
const DEMO_KEY = 'lantern-demo-key-NOT-SECRET-7c1f0e9a2b5d4863';
const BLINDED = '2026.4';
const TEXT_FILE = /\.(html|svg|csv|ecsv|json|md|txt|xml|vot)$/;
/** Precisions the site writes H0 with (2 in text and tables, 1 to 4 in axes, captions and CSV summaries). */
const PRECISIONS = [1, 2, 3, 4];

const tmp = mkdtempSync(join(tmpdir(), 'rungbook-blinded-site-'));
let site: DemoBuild;
let unblindedSite: DemoBuild;
let unblinded: Results;
let truthH0: number;

beforeAll(async () => {
  const truth = writeGeneratedRelease(join(tmp, 'never-blinded'), BLINDED, { seed: DEMO_SEED, release: BLINDED });
  truthH0 = truth.parameters.h0KmSMpc;
  // the unblinded copy sits beside its previous release, so that the comparison is computed too
  const releases = join(tmp, 'releases');
  for (const id of ['2026.3', BLINDED]) cpSync(join(DEMO_RELEASES, id), join(releases, id), { recursive: true });
  const c = capture();
  const code = await main(
    ['unblind', join(releases, BLINDED), '--by', 'Demo Reader', '--key-file', writeKeyFile(tmp, 'demo-key.txt', DEMO_KEY), '--date', '2027-01-15'],
    c.io,
  );
  if (code !== 0) throw new Error(`unblind failed: ${c.err()}`);
  [site, unblindedSite, unblinded] = await Promise.all([
    buildDemo({}, join(tmp, 'blinded')),
    buildDemo({ releasesDir: releases }, join(tmp, 'unblinded')),
    calibrateReleaseDir(join(releases, BLINDED)),
  ]);
}, DEMO_BUILD_TIMEOUT_MS);

afterAll(async () => {
  await rm(tmp, { recursive: true, force: true });
});

/** True H0 values: the generator's truth, the unblinded baseline fit and each variant's. */
function trueValues(): number[] {
  return [truthH0, unblinded.h0!.value, ...unblinded.variants.filter((v) => v.h0 !== null).map((v) => v.h0!)];
}

/** Text forms of a number as the site may write it: 1 to 4 decimals, and full precision. */
function forms(x: number): string[] {
  return [...new Set([...PRECISIONS.map((p) => x.toFixed(p)), String(x)])];
}

/** SVG attributes that place a mark on the drawing (pixel coordinates and sizes), not values. */
const SVG_GEOMETRY = ['d', 'cx', 'cy', 'r', 'x', 'y', 'x1', 'x2', 'y1', 'y2', 'dx', 'dy', 'width', 'height', 'transform', 'points', 'viewBox'];

/**
 * What a file publishes, as text to search. Two kinds of content are left out, each not derived
 * from any value of the data as such: the method notes (committed prose, whose invented worked
 * examples may hold any number) and SVG geometry (path shapes, positions and sizes of marks: KaTeX's
 * glyph outlines and plot coordinates in pixels, e.g. a point drawn at cy="70.5").
 */
function published(dist: string, rel: string): string {
  const raw = readFileSync(join(dist, rel), 'utf8');
  const geometry = new RegExp(`\\s(?:${SVG_GEOMETRY.join('|')})="[^"]*"`, 'g');
  if (!rel.endsWith('.html')) return rel.endsWith('.svg') ? raw.replace(geometry, '') : raw;
  const doc = new JSDOM(raw).window.document;
  doc.querySelectorAll('section.method').forEach((e) => e.remove());
  doc.querySelectorAll('svg, svg *').forEach((e) => SVG_GEOMETRY.forEach((a) => e.removeAttribute(a)));
  return doc.documentElement.outerHTML;
}

/**
 * A number written as a percentage ("70.3 %": a share of the error budget, a coverage) is not a
 * value in km/s/Mpc: the H0 forms are searched only where no per-cent sign follows.
 */
function hasValueToken(text: string, token: string): boolean {
  const esc = token.replace(/[.+-]/g, (c) => `\\${c}`);
  return new RegExp(`(?<![0-9.])${esc}(?![0-9])(?!\\s?%)`).test(text);
}

function leaks(files: string[], dist: string, tokens: string[]): string[] {
  const found: string[] = [];
  for (const rel of files) {
    const text = published(dist, rel).replace(/\u2212/g, '-');
    for (const t of tokens) if (hasValueToken(text, t)) found.push(`${rel}: ${t}`);
  }
  return found;
}

describe('the blinded release in the built report', () => {
  it('is really blinded: the unblinded fit differs from the blinded H0 by more than the forms searched for', () => {
    const shown = JSON.parse(site.text(`releases/${BLINDED}/downloads/results.json`)) as Results;
    expect(shown.blinded).toBe(true);
    // results.json carries the blinded value, which must not coincide with the true one at 1 decimal
    expect(Math.abs(shown.h0!.value - unblinded.h0!.value)).toBeGreaterThan(1);
  });

  it('publishes its true H0 nowhere in its own pages, figures, tables, downloads or its comparison', () => {
    const files = listFilesSync(site.dist).filter((f) => f.startsWith(`releases/${BLINDED}/`) && TEXT_FILE.test(f));
    expect(files.length).toBeGreaterThan(40);
    expect(files).toContain(`releases/${BLINDED}/compare/index.html`);
    expect(leaks(files, site.dist, trueValues().flatMap(forms))).toEqual([]);
  });

  it('publishes nowhere the true Hubble-flow intercept a_B, from which H0 follows (3 to 5 decimals, full precision)', () => {
    // a_B = log10 H0 - 0.2 M_B - 5 for the fitted M_B: with M_B (shown) it would give H0 away.
    const aB = unblinded.parameters.a_B!.value;
    const files = listFilesSync(site.dist).filter((f) => f.startsWith(`releases/${BLINDED}/`) && TEXT_FILE.test(f));
    const tokens = [...new Set([3, 4, 5].map((p) => aB.toFixed(p)).concat(String(aB)))];
    // System pages echo thousands of input values with three decimals (colours, magnitudes of the
    // release's own rows, which carry no information on a_B): a three-decimal search there finds
    // chance matches (a main-sequence star's colour 0.698 did), so on those pages only the four- and
    // five-decimal and full forms are searched.
    const isSystemPage = (f: string) => f.startsWith(`releases/${BLINDED}/systems/`);
    expect(
      leaks(
        files.filter((f) => !isSystemPage(f)),
        site.dist,
        tokens,
      ),
    ).toEqual([]);
    expect(
      leaks(
        files.filter(isSystemPage),
        site.dist,
        tokens.filter((t) => t !== aB.toFixed(3)),
      ),
    ).toEqual([]);
    // and the same search finds it in the unblinded copy's downloads
    expect(leaks([`releases/${BLINDED}/downloads/results.json`], unblindedSite.dist, tokens)).not.toEqual([]);
  });

  it("publishes it nowhere in the pages shared by all releases, apart from other releases' own values", () => {
    const shared = listFilesSync(site.dist).filter((f) => !f.startsWith('releases/') && !f.startsWith('_astro/') && TEXT_FILE.test(f));
    expect(shared).toContain('index.html');
    expect(shared).toContain('figures/h0-history.csv');
    // A number another release shows as its own (its results.json, any field) is not evidence of a leak.
    const others = new Set<string>();
    for (const id of ['2026.1', '2026.2', '2026.3']) {
      const walk = (v: unknown): void => {
        if (typeof v === 'number') forms(v).forEach((f) => others.add(f));
        else if (v && typeof v === 'object') Object.values(v).forEach(walk);
      };
      walk(JSON.parse(site.text(`releases/${id}/downloads/results.json`)));
    }
    const tokens = trueValues().flatMap(forms);
    const found = leaks(shared, site.dist, tokens);
    const unexplained = found.filter((f) => !others.has(f.split(': ')[1]!));
    expect(unexplained).toEqual([]);
    // and the release's own row of the history has no H0
    const row = site
      .text('figures/h0-history.csv')
      .split('\n')
      .find((l) => l.startsWith(`${BLINDED},`))!;
    expect(row.split(',').slice(0, 4)).toEqual([BLINDED, '2026-11-16', 'True', '']);
  });

  it('marks every one of its pages as blinded', () => {
    const pages = listFilesSync(site.dist).filter((f) => f.startsWith(`releases/${BLINDED}/`) && f.endsWith('.html'));
    expect(pages.length).toBeGreaterThan(10);
    for (const p of pages) expect(site.doc(p).querySelector('.blinded-mark'), p).not.toBeNull();
  });

  it('withholds the H0 shift against the unblinded previous release, and says why', () => {
    const memo = site.doc(`releases/${BLINDED}/compare/index.html`).querySelector('.memo')!.textContent!.replace(/\s+/g, ' ');
    expect(memo).toContain('H₀ and its shift are withheld because of blinding');
    expect(memo).toContain(`Release ${BLINDED} is BLINDED and release 2026.3 is not`);
    const message = site.doc(`releases/${BLINDED}/compare/index.html`).getElementById('paste-message')!.textContent!;
    expect(message).toMatch(/BLINDED/);
  });
});

describe('the same release unblinded with the demo key', () => {
  it('shows the unblinding record on every one of its pages', () => {
    const pages = listFilesSync(unblindedSite.dist).filter((f) => f.startsWith(`releases/${BLINDED}/`) && f.endsWith('.html'));
    expect(pages.length).toBeGreaterThan(10);
    for (const p of pages) {
      expect(unblindedSite.doc(p).querySelector('.unblinded-mark')?.textContent, p).toBe('unblinded on 2027-01-15 by Demo Reader');
      expect(unblindedSite.doc(p).querySelector('.page-header .blinded-mark'), p).toBeNull();
    }
  });

  it('publishes its true H0 where the blinded build did not: the same search finds it', () => {
    const files = listFilesSync(unblindedSite.dist).filter((f) => f.startsWith(`releases/${BLINDED}/`) && TEXT_FILE.test(f));
    const found = leaks(files, unblindedSite.dist, forms(unblinded.h0!.value));
    expect(found).toContain(`releases/${BLINDED}/downloads/results.json: ${String(unblinded.h0!.value)}`);
    expect(found.some((f) => f.startsWith(`releases/${BLINDED}/compare/index.html: `))).toBe(true);
  });

  it('shows the true H0 on its overview and the true shift in its comparison', () => {
    // the headline rounds H0 to the precision of its uncertainty (one decimal here)
    const overview = unblindedSite.doc(`releases/${BLINDED}/index.html`).querySelector('.headline')!.textContent!.replace(/\s+/g, ' ');
    const shownH0 = Number(/H0 ([0-9.]+) ±/.exec(overview)?.[1]);
    expect(Math.abs(shownH0 - unblinded.h0!.value)).toBeLessThanOrEqual(0.05);
    expect(site.doc(`releases/${BLINDED}/index.html`).querySelector('.headline .value')?.textContent).toBe('blinded');
    const lead = unblindedSite.doc(`releases/${BLINDED}/compare/index.html`).querySelector('.memo .lead')!.textContent!;
    const previous = JSON.parse(site.text('releases/2026.3/downloads/results.json')) as Results;
    expect(lead).toContain(`from ${fixed(previous.h0!.value, 2)} to ${fixed(unblinded.h0!.value, 2)}`);
  });

  it('says on 2026.3 that its previous release is not part of that report', () => {
    expect(unblindedSite.doc('releases/2026.3/compare/index.html').querySelector('main')!.textContent).toMatch(/2026\.2, is not part of this report/);
  });
});
