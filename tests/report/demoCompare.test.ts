/**
 * The comparison pages of the demo report, built as a user builds it (real calibration and
 * real comparisons). Every number on a page is checked against `compareReleaseDirs` run here
 * on the same two folders, independently of the build: the page must say what the comparison
 * engine says, and the message to paste must be exactly `rungbook diff --format markdown`
 * with links that exist in the built site. Kind: pipeline checks on the committed demo data.
 */
import { existsSync, readFileSync } from 'node:fs';
import { rm } from 'node:fs/promises';
import { join } from 'node:path';
import { afterAll, beforeAll, describe, expect, it } from 'vitest';
import { compareReleaseDirs } from '../../src/diff/compare.ts';
import { compareFigureId, figuresDrawn } from '../../src/diff/links.ts';
import { MARKDOWN_OBJECTS_MAX, renderMarkdown } from '../../src/diff/render.ts';
import type { DiffReport } from '../../src/diff/types.ts';
import { fixed } from '../../src/report/format.ts';
import { GROUP_TITLE, signedText } from '../../src/report/compare/words.ts';
import { BASE, buildDemo, DEMO_BUILD_TIMEOUT_MS, DEMO_PAIRS, DEMO_RELEASES, type DemoBuild, pageNumber, SITE } from './demoBuild.ts';
import { checkLinks } from './linkCheck.ts';

let site: DemoBuild;
const diffs = new Map<string, DiffReport>();
const comparePage = (b: string) => `releases/${b}/compare/index.html`;

beforeAll(async () => {
  const [built, ...reports] = await Promise.all([
    buildDemo(),
    ...DEMO_PAIRS.map(([a, b]) => compareReleaseDirs(join(DEMO_RELEASES, a), join(DEMO_RELEASES, b), { site: SITE, base: BASE, workers: 0 })),
  ]);
  site = built;
  DEMO_PAIRS.forEach(([, b], i) => diffs.set(b, reports[i]!));
}, DEMO_BUILD_TIMEOUT_MS);

afterAll(async () => {
  if (site) await rm(site.tmp, { recursive: true, force: true });
});

/** Rows of a page table: first cell (the row header) and the other cells, as text. */
function tableRows(doc: Document, id: string): string[][] {
  const section = doc.querySelector(`section[aria-labelledby="table-${id}"]`);
  if (!section) throw new Error(`no table ${id}`);
  return Array.from(section.querySelectorAll('tbody tr')).map((tr) => Array.from(tr.children).map((c) => (c.textContent ?? '').trim()));
}

describe('the build', () => {
  it('compares every release with its previous one and reports it', () => {
    expect(site.summary.comparisons).toEqual(DEMO_PAIRS.map(([a, b]) => ({ a, b, cached: false })));
  });

  it('says on the first release that there is nothing to compare with', () => {
    const text = site.doc(comparePage('2026.1')).querySelector('main')!.textContent!;
    expect(text).toMatch(/2026\.1 is the first release: there is no previous release to compare with/);
  });

  it('links the comparison from both overviews', () => {
    for (const [a, b] of DEMO_PAIRS) {
      const target = `${BASE}releases/${b}/compare/`;
      for (const id of [a, b]) {
        const hrefs = Array.from(site.doc(`releases/${id}/index.html`).querySelectorAll('main a')).map((x) => x.getAttribute('href'));
        expect(hrefs, `overview of ${id} links ${target}`).toContain(target);
      }
    }
  });

  it('leaves no broken internal link, image or stylesheet', async () => {
    const report = await checkLinks(site.dist, BASE);
    expect(report.problems).toEqual([]);
  });
});

describe.each(DEMO_PAIRS.filter(([, b]) => b !== '2026.4'))('comparison %s -> %s (both unblinded)', (a, b) => {
  const d = () => diffs.get(b)!;
  const doc = () => site.doc(comparePage(b));

  it('opens with the H0 shift, both values and its significance, as the comparison engine gives them', () => {
    const h = d().h0!;
    const lead = doc().querySelector('.memo .lead')!.textContent!.replace(/\s+/g, ' ');
    expect(lead).toContain(`H₀ moved by ${signedText(h.delta!, 2)} km/s/Mpc, from ${fixed(h.a!, 2)} to ${fixed(h.b!, 2)}`);
    expect(lead).toContain(`σ = ${fixed(h.sigma_diff!, 2)} km/s/Mpc`);
    expect(lead).toContain(`${signedText(h.delta_sigma!, 1)} σ`);
    // the proper uncertainty of the difference is smaller than the naive quadrature sum (shared data)
    expect(h.sigma_diff!).toBeLessThan(h.sigma_naive!);
  });

  it('names the largest contribution in the opening', () => {
    const moving = d()
      .attribution.filter((e) => e.differs)
      .sort((x, y) => Math.abs(y.delta_h0) - Math.abs(x.delta_h0));
    const opening = doc().querySelector('.memo')!.textContent!;
    expect(opening).toContain(`${GROUP_TITLE[moving[0]!.group]} ${signedText(moving[0]!.delta_h0, 2)}`);
  });

  it("tables a contribution for every group, equal to the engine's and adding up to the shift", () => {
    const rows = tableRows(doc(), 'attribution');
    const total = rows.at(-1)!;
    expect(total[0]).toBe('Total');
    const groups = rows.slice(0, -1);
    expect(groups.map((r) => r[1])).toEqual(d().attribution.map((e) => e.group));
    groups.forEach((r, i) => expect(pageNumber(r[3]!)).toBeCloseTo(d().attribution[i]!.delta_h0, 3));
    // to the 3 decimals shown, the contributions add up to the total (within rounding of each term)
    const sum = groups.reduce((s, r) => s + pageNumber(r[3]!), 0);
    expect(Math.abs(sum - pageNumber(total[3]!))).toBeLessThanOrEqual(0.0005 * groups.length + 1e-12);
    expect(pageNumber(total[3]!)).toBeCloseTo(d().h0!.delta!, 3);
  });

  it("lists the ten rows that moved H0 most, in the engine's order", () => {
    const rows = tableRows(doc(), 'top-objects');
    expect(rows.length).toBe(Math.min(10, d().top_objects.length));
    expect(rows.map((r) => r[1])).toEqual(
      d()
        .top_objects.slice(0, 10)
        .map((o) => o.id),
    );
  });

  it('shows every parameter shift, flagging those the engine flags', () => {
    const rows = tableRows(doc(), 'parameter-shifts');
    expect(rows.length).toBe(d().parameters.length);
    const section = doc().querySelector('section[aria-labelledby="table-parameter-shifts"]')!;
    const flagged = Array.from(section.querySelectorAll('tbody tr.row-flagged th')).map((th) => th.textContent!.replace(/flagged/, '').trim());
    expect(flagged.length).toBe(d().parameters.filter((p) => p.flagged).length);
  });

  it('writes each figure it draws as SVG, PNG and CSV, with a figure page, and inlines it', () => {
    const drawn = figuresDrawn(d());
    expect(drawn).toContain('attribution');
    expect(drawn).toContain('pl-relation');
    for (const f of drawn) {
      const id = compareFigureId(f);
      for (const ext of ['svg', 'png', 'csv']) expect(existsSync(join(site.dist, `releases/${b}/figures/${id}.${ext}`)), `${id}.${ext}`).toBe(true);
      expect(existsSync(join(site.dist, `releases/${b}/figures/${id}/index.html`)), `${id} figure page`).toBe(true);
      expect(doc().getElementById(`figure-${id}`), `${id} on the page`).not.toBeNull();
    }
  });

  it("gives the waterfall's CSV the engine's contributions", () => {
    const [head, ...lines] = readFileSync(join(site.dist, `releases/${b}/figures/compare-attribution.csv`), 'utf8')
      .trim()
      .split('\n');
    const cols = head!.split(',');
    const rows = lines.map((l) => Object.fromEntries(l.split(',').map((v, i) => [cols[i], v])));
    expect(rows.map((r) => r.group)).toEqual(d().attribution.map((e) => e.group));
    rows.forEach((r, i) => expect(Number(r.delta_h0), r.group).toBeCloseTo(d().attribution[i]!.delta_h0, 12));
  });

  it('offers exactly the markdown message of `rungbook diff`, whose links all exist in the site', () => {
    const shown = doc().getElementById('paste-message')!.textContent!;
    expect(shown).toBe(renderMarkdown(d()));
    const urls = [...shown.matchAll(/\((https?:\/\/[^)\s]+)\)/g)].map((m) => m[1]!);
    expect(urls.length).toBeGreaterThanOrEqual(2);
    for (const u of urls) {
      expect(u.startsWith(`${SITE}${BASE}`), u).toBe(true);
      const [rel, fragment] = u.slice(`${SITE}${BASE}`.length).split('#') as [string, string | undefined];
      const file = rel.endsWith('/') ? `${rel}index.html` : rel;
      expect(existsSync(join(site.dist, file)), `${u} in the site`).toBe(true);
      // A link to a row names its anchor, which must exist on that page.
      if (fragment !== undefined) expect(site.doc(file).getElementById(decodeURIComponent(fragment)), `${u}: anchor`).not.toBeNull();
    }
  });

  it('links the rows that moved H0 in the message to their rows on the system pages', () => {
    const shown = doc().getElementById('paste-message')!.textContent!;
    const rowsLine = shown.split('\n').find((l) => l.startsWith('- largest single rows:'));
    const withSystem = d()
      .top_objects.slice(0, MARKDOWN_OBJECTS_MAX)
      .filter((o) => o.system !== null);
    if (withSystem.length === 0) return expect(rowsLine === undefined || !rowsLine.includes('/systems/')).toBe(true);
    expect(rowsLine).toBeDefined();
    const links = [...rowsLine!.matchAll(/\]\((https?:\/\/[^)\s]+)\)/g)].map((m) => m[1]!);
    expect(links.length).toBe(withSystem.length);
    for (const [k, o] of withSystem.entries()) expect(links[k]).toContain(`/systems/${o.system}/`);
  });
});

describe('a rebuild with nothing changed', () => {
  it(
    'takes every comparison from the cache and writes the same comparison pages',
    async () => {
      const again = await buildDemo({ outDir: join(site.tmp, 'dist-again'), cacheDir: site.cacheDir, workDir: join(site.tmp, 'work-again') });
      expect(again.summary.comparisons).toEqual(DEMO_PAIRS.map(([a, b]) => ({ a, b, cached: true })));
      for (const [, b] of DEMO_PAIRS) expect(again.text(comparePage(b)), b).toBe(site.text(comparePage(b)));
    },
    DEMO_BUILD_TIMEOUT_MS,
  );
});
