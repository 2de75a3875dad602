/**
 * The static report, built from the fixture releases (synthetic results.json:
 * see tests/fixtures/report/syntheticResults.ts) and the committed method notes.
 *
 * Pipeline checks on the built folder: pages per release, links, math, figure
 * files, preview tags, escaping of hostile strings, blinding, determinism,
 * caching and atomic replacement.
 */
import { cp, mkdtemp, readFile, rm, writeFile } from 'node:fs/promises';
import { existsSync, readFileSync } from 'node:fs';
import { tmpdir } from 'node:os';
import { join } from 'node:path';
import { JSDOM } from 'jsdom';
import { afterAll, beforeAll, describe, expect, it } from 'vitest';
import { REPO_ROOT } from '../../src/report/build.ts';
import { svgSize } from '../../src/report/svg.ts';
import { GENERATED_MARK } from '../../src/report/types.ts';
import { REQUIRED_NOTES, RUNG_PAGES } from '../../src/report/pageData.ts';
import { RELEASE_FIGURES } from '../../src/report/figures/index.ts';
import { calibrateFixture, HOSTILE_NAME } from '../fixtures/report/syntheticResults.ts';
import { BASE, buildFixture, FIXTURE_IDS, FIXTURE_RELEASES, type FixtureBuild, SITE } from './fixtureBuild.ts';
import { checkLinks, type LinkReport, listFilesSync } from './linkCheck.ts';
import { decodePng } from './pngDecode.ts';

/** Page-weight budget: the dense fixture release (3000 supernovae, 2250 Cepheids, 2200 parallax stars) must still give pages below this. */
const MAX_PAGE_BYTES = 300_000;
const BUILD_TIMEOUT_MS = 300_000;

let first: FixtureBuild;
let links: LinkReport;
const html = (rel: string) => readFileSync(join(first.dist, rel), 'utf8');
const docs = new Map<string, Document>();
/** Parsed page, parsed once per test file (jsdom parsing is synchronous and not cheap). */
const doc = (rel: string): Document => {
  let d = docs.get(rel);
  if (!d) {
    d = new JSDOM(html(rel)).window.document;
    docs.set(rel, d);
  }
  return d;
};
/** Every HTML page, yielding to the event loop between pages so the test runner stays responsive. */
async function* pages(): AsyncGenerator<string> {
  for (const p of listFilesSync(first.dist).filter((f) => f.endsWith('.html'))) {
    await new Promise<void>((ok) => setImmediate(ok));
    yield p;
  }
}

beforeAll(async () => {
  first = await buildFixture();
  links = await checkLinks(first.dist, BASE);
}, BUILD_TIMEOUT_MS);

afterAll(async () => {
  if (first) await rm(first.tmp, { recursive: true, force: true });
});

describe('pages', () => {
  it('has exactly one overview page per release, and every rung page', () => {
    const overviews = listFilesSync(first.dist).filter((f) => /^releases\/[^/]+\/index\.html$/.test(f));
    expect(overviews.sort()).toEqual(FIXTURE_IDS.map((id) => `releases/${id}/index.html`).sort());
    for (const id of FIXTURE_IDS) {
      for (const r of RUNG_PAGES) expect(existsSync(join(first.dist, 'releases', id, r.slug, 'index.html')), `${id}/${r.slug}`).toBe(true);
      for (const p of ['global-fit', 'error-budget', 'variants', 'data', 'compare', 'figures']) {
        expect(existsSync(join(first.dist, 'releases', id, p, 'index.html')), `${id}/${p}`).toBe(true);
      }
    }
  });

  it('lists releases newest first on the home page and sends /latest/ to the newest', () => {
    const d = doc('index.html');
    const ids = Array.from(d.querySelectorAll('.release-list .release-id')).map((e) => e.textContent);
    // Fixture dates: 2026.2 on 2026-05-30, 2026.1 on 2026-02-14, 2025.4 on 2025-11-03.
    expect(ids).toEqual(['2026.2', '2026.1', '2025.4']);
    const refresh = doc('latest/index.html').querySelector('meta[http-equiv="refresh"]')!.getAttribute('content');
    expect(refresh).toBe(`0; url=${BASE}releases/2026.2/`);
  });

  it('shows the internal-review notice on every page', async () => {
    let n = 0;
    for await (const p of pages()) {
      n += 1;
      expect(doc(p).querySelector('.notice')?.textContent, p).toContain('Internal results for collaboration review');
    }
    expect(n).toBe(first.summary.pages);
  });

  it('shows each rung’s cautions from its method note in a box next to the results', () => {
    const note = readFileSync(join(REPO_ROOT, 'content/methods/cepheids.md'), 'utf8');
    const firstCaution = /cautions:\s*\n\s*- "([^"]{20,60})/.exec(note)![1]!;
    const d = doc('releases/2026.1/cepheids/index.html');
    const box = d.querySelector('.results-with-cautions > aside.cautions');
    expect(box?.textContent).toContain(firstCaution);
  });

  it('shows the variants note’s cautions on the variants page, and the blinding cautions only on blinded overviews', () => {
    const cautionOf = (file: string) => /cautions:\s*\n\s*- "([^"]{20,60})/.exec(readFileSync(join(REPO_ROOT, 'content/methods', file), 'utf8'))![1]!;
    expect(doc('releases/2026.1/variants/index.html').querySelector('aside.cautions')?.textContent).toContain(cautionOf('variants.md'));
    expect(doc('releases/2026.2/index.html').querySelector('aside.cautions')?.textContent).toContain(cautionOf('blinding.md'));
    expect(doc('releases/2026.1/index.html').querySelector('aside.cautions')).toBeNull();
  });
});

describe('links', () => {
  it('every internal link, image, stylesheet, font and refresh target resolves under the base path', () => {
    expect(links.pages).toBe(first.summary.pages);
    expect(links.checked).toBeGreaterThan(links.pages * 10);
    expect(links.problems).toEqual([]);
  });

  it('loads nothing from outside the site and keeps only safe outbound links', () => {
    // The only outbound links are the two https ones of the fixture notes (a link and an image turned into a link);
    // javascript: and data: links were dropped.
    expect(links.outboundLinks).toEqual(['https://example.org/notes', 'https://example.org/pixel.png']);
  });
});

describe('math', () => {
  it('leaves no raw $$ and renders KaTeX on every rung page and in the summaries', async () => {
    for await (const f of pages()) expect(html(f).includes('$$'), f).toBe(false);
    for (const id of FIXTURE_IDS) {
      for (const r of RUNG_PAGES)
        expect(doc(`releases/${id}/${r.slug}/index.html`).querySelectorAll('.method .katex').length, `${id}/${r.slug}`).toBeGreaterThan(0);
      expect(doc(`releases/${id}/index.html`).querySelectorAll('.prose .katex').length).toBeGreaterThan(0);
    }
  });

  it('serves the KaTeX stylesheet and fonts from the site itself', () => {
    const css = listFilesSync(first.dist).filter((f) => f.startsWith('_astro/') && f.endsWith('.css'));
    expect(css.some((f) => readFileSync(join(first.dist, f), 'utf8').includes('.katex'))).toBe(true);
    expect(listFilesSync(first.dist).filter((f) => /^_astro\/KaTeX_.*\.woff2$/.test(f)).length).toBeGreaterThan(10);
  });
});

describe('figures', () => {
  it('writes SVG, PNG and CSV for every figure; each PNG decodes and has its SVG’s size', () => {
    const files = listFilesSync(first.dist);
    const svgs = files.filter((f) => /figures\/[^/]+\.svg$/.test(f));
    // Release 2025.4 stops at the Cepheid rung: 7 of the 12 release figures; the others have all 12; plus h0-history.
    expect(svgs.filter((f) => /^(releases\/[^/]+\/)?figures\//.test(f)).length).toBe(7 + 12 + 12 + 1);
    // The system pages' own figures sit in their folders (and pass the same checks below).
    expect(svgs.filter((f) => /^releases\/[^/]+\/systems\/[^/]+\/figures\//.test(f)).length).toBeGreaterThan(0);
    for (const svg of svgs) {
      const stem = svg.slice(0, -4);
      const svgText = readFileSync(join(first.dist, svg), 'utf8');
      expect(svgText.startsWith(`<!-- ${GENERATED_MARK} -->`)).toBe(true);
      // A standalone SVG must be well-formed XML in the SVG namespace (jsdom's XML parser throws otherwise).
      const xml = new JSDOM(svgText, { contentType: 'image/svg+xml' }).window.document;
      expect(xml.documentElement.namespaceURI, svg).toBe('http://www.w3.org/2000/svg');
      const png = decodePng(readFileSync(join(first.dist, `${stem}.png`)));
      const size = svgSize(svgText);
      expect({ w: png.width, h: png.height }, svg).toEqual({ w: size.width, h: size.height });
      const csv = readFileSync(join(first.dist, `${stem}.csv`), 'utf8');
      expect(csv.split('\n').length, `${stem}.csv`).toBeGreaterThan(2);
    }
  });

  it('keeps the same figure ids in every release that reaches the rung', () => {
    const ids = (id: string) =>
      listFilesSync(join(first.dist, 'releases', id, 'figures'))
        .filter((f) => f.endsWith('.svg'))
        .map((f) => f.slice(0, -4))
        .sort();
    expect(ids('2026.1')).toEqual(RELEASE_FIGURES.map((f) => f.id).sort());
    expect(ids('2026.2')).toEqual(ids('2026.1'));
  });

  it('gives every figure page preview tags with an absolute PNG URL that exists', () => {
    const pages = listFilesSync(first.dist).filter((f) => /figures\/[^/]+\/index\.html$/.test(f));
    expect(pages.length).toBe(7 + 12 + 12 + 1);
    for (const p of pages) {
      const d = doc(p);
      const meta = (sel: string) => d.querySelector(sel)?.getAttribute('content') ?? null;
      expect(meta('meta[property="og:title"]'), p).toBeTruthy();
      expect(meta('meta[name="twitter:card"]'), p).toBe('summary_large_image');
      const image = meta('meta[property="og:image"]')!;
      expect(image.startsWith(`${SITE}${BASE}`), image).toBe(true);
      expect(image.endsWith('.png')).toBe(true);
      expect(existsSync(join(first.dist, new URL(image).pathname.slice(BASE.length))), image).toBe(true);
      expect(d.querySelector('.figure-alt')?.textContent?.length ?? 0, p).toBeGreaterThan(40);
    }
  });

  it('gives inlined SVGs ids unique within each page', async () => {
    for await (const p of pages()) {
      const ids = Array.from(doc(p).querySelectorAll('[id]')).map((e) => e.id);
      expect(ids.length - new Set(ids).size, p).toBe(0);
    }
  });

  it('thins dense scatters and keeps every page under the weight budget', async () => {
    expect(first.summary.largestPage!.bytes).toBeLessThan(MAX_PAGE_BYTES);
    const nCepheids = (await calibrateFixture(join(FIXTURE_RELEASES, '2026.1'))).rungs.cepheids.length;
    expect(nCepheids).toBeGreaterThan(2000);
    const cep = doc('releases/2026.1/cepheids/index.html');
    const note = cep.querySelector('#figure-pl-relation .thinned')?.textContent ?? '';
    const m = /^(\d+) of (\d+) points drawn/.exec(note);
    expect(m && Number(m[2])).toBe(nCepheids);
    expect(Number(m![1])).toBeLessThan(nCepheids / 2);
    // The CSV keeps every point, plus its header line.
    const csv = readFileSync(join(first.dist, 'releases/2026.1/figures/pl-relation.csv'), 'utf8').trim().split('\n');
    expect(csv.length).toBe(nCepheids + 1);
  });
});

describe('escaping', () => {
  it('shows hostile names and notes as text, never as markup, expressions or math', async () => {
    for await (const p of pages()) {
      const d = doc(p);
      // The only JavaScript is the site's own bundled enhancement files (sortable tables, figures you
      // can hover), loaded from the site with no inline code: any other script element would be injected.
      for (const script of Array.from(d.querySelectorAll('script'))) {
        expect(script.getAttribute('src') ?? '', p).toMatch(
          new RegExp(`^${BASE.replace(/[/.]/g, '\\$&')}_astro/(DataTable|Figure)\\.astro_astro_type_script_index_0_lang\\.[\\w-]+\\.js$`),
        );
        expect(script.textContent, p).toBe('');
      }
      const handlers = Array.from(d.querySelectorAll('*')).flatMap((e) => e.getAttributeNames().filter((a) => a.startsWith('on')));
      expect(handlers, p).toEqual([]);
      const hrefs = Array.from(d.querySelectorAll('[href]')).map((e) => e.getAttribute('href')!.trim().toLowerCase());
      expect(
        hrefs.filter((h) => h.startsWith('javascript:') || h.startsWith('data:text')),
        p,
      ).toEqual([]);
    }
    const overview = doc('releases/2026.1/index.html');
    // The failed check's detail carries the hostile system name and must read back unchanged.
    expect(overview.querySelector('.check-fail')?.textContent).toContain(HOSTILE_NAME);
    const notes = overview.querySelector('[aria-labelledby="notes"] .prose')!;
    expect(notes.textContent).toContain('A price of $5 and $6 is not math.');
    expect(notes.textContent).toContain('<script>alert("notes")</script>');
    expect(notes.textContent).toContain('An expression {1+1} and a comment <!-- hidden --> and c<d stay as text.');
    expect(notes.querySelectorAll('.katex').length).toBe(0);
    expect(notes.querySelector('td code')?.textContent).toBe('code {x}');
    const ms = doc('releases/2026.1/main-sequence/index.html');
    expect(Array.from(ms.querySelectorAll('section[aria-labelledby="table-targets"] th[scope="row"]')).map((e) => e.textContent?.trim())).toContain(
      HOSTILE_NAME,
    );
    const svg = readFileSync(join(first.dist, 'releases/2026.1/figures/ms-targets.svg'), 'utf8');
    expect(svg).toContain('&lt;script&gt;');
    expect(svg).not.toContain('<script');
  });
});

describe('blinding', () => {
  it('marks the blinded release and hides its H0 on the home page and in the history', () => {
    const overview = doc('releases/2026.2/index.html');
    expect(overview.querySelector('.headline .value')?.textContent).toBe('blinded');
    expect(overview.querySelectorAll('.blinded-mark').length).toBeGreaterThan(2);
    const home = doc('index.html');
    const item = Array.from(home.querySelectorAll('.release-list li')).find((li) => li.querySelector('.release-id')?.textContent === '2026.2')!;
    expect(item.querySelector('.release-h0')?.textContent).toMatch(/blinded/);
    expect(item.querySelector('.release-h0')?.textContent).not.toMatch(/\d\d\.\d/);
    const history = readFileSync(join(first.dist, 'figures/h0-history.csv'), 'utf8')
      .split('\n')
      .find((l) => l.startsWith('2026.2,'))!;
    // release,date,blinded,h0,... : the h0 cell is empty for the blinded release.
    expect(history.split(',').slice(0, 4)).toEqual(['2026.2', '2026-05-30', 'True', '']);
    const sup = doc('releases/2026.2/supernovae/index.html');
    const mb = Array.from(sup.querySelectorAll('.key-values div')).find((d) => d.querySelector('dt')?.textContent === 'M_B');
    expect(mb?.querySelector('.blinded-mark')).not.toBeNull();
  });
});

describe('data & provenance', () => {
  it('offers results.json and every result table as CSV and ECSV, with checksums of the inputs', async () => {
    const d = doc('releases/2026.1/data/index.html');
    const links = Array.from(d.querySelectorAll('.downloads a')).map((a) => a.getAttribute('href')!);
    expect(links).toContain(`${BASE}releases/2026.1/downloads/results.json`);
    expect(links.filter((l) => l.endsWith('.csv')).length).toBe(links.filter((l) => l.endsWith('.ecsv')).length);
    const ecsv = readFileSync(join(first.dist, 'releases/2026.1/downloads/cepheids.ecsv'), 'utf8');
    expect(ecsv.startsWith('# %ECSV 1.0\n')).toBe(true);
    const results = JSON.parse(readFileSync(join(first.dist, 'releases/2026.1/downloads/results.json'), 'utf8'));
    // results.json is the calibration's output as JSON (a round trip of the object the fake calibration returns).
    expect(results).toEqual(JSON.parse(JSON.stringify(await calibrateFixture(join(FIXTURE_RELEASES, '2026.1')))));
    const sha = results.provenance.inputs[0].sha256;
    expect(d.body.textContent).toContain(sha);
    // Defaults are marked: the fixture sets only parallax_floor and clip_sigma.
    const defaults = Array.from(d.querySelectorAll('section[aria-labelledby="table-analysis"] tr.row-default th')).map((th) =>
      th.textContent?.trim().replace(/\s*default$/, ''),
    );
    expect(defaults).not.toContain('parallax_floor');
    expect(defaults).toContain('r_v');
  });

  it('starts every generated data and prose file with the generated mark', async () => {
    const gen = join(first.workDir, 'gen');
    const files = listFilesSync(gen).filter((f) => /^(data|prose)\//.test(f));
    // Per release: its data, its summary and its notes; the site's list; and one data file per system page.
    let systems = 0;
    for (const id of FIXTURE_IDS) systems += (await calibrateFixture(join(FIXTURE_RELEASES, id))).systems.length;
    expect(files.filter((f) => !f.startsWith('data/systems/')).length).toBe(FIXTURE_IDS.length * 3 + 1);
    expect(files.filter((f) => f.startsWith('data/systems/')).length).toBe(systems);
    for (const f of files) {
      const text = readFileSync(join(gen, f), 'utf8');
      const head = f.endsWith('.json') ? text.split('\n')[1] : text.split('\n')[0];
      expect(head, f).toContain(GENERATED_MARK);
    }
  });
});

describe('rebuilds', () => {
  let second: FixtureBuild;
  beforeAll(async () => {
    second = await buildFixture();
  }, BUILD_TIMEOUT_MS);
  afterAll(async () => {
    if (second) await rm(second.tmp, { recursive: true, force: true });
  });

  it('gives byte-identical sites from two clean builds', () => {
    const a = listFilesSync(first.dist);
    const b = listFilesSync(second.dist);
    expect(b).toEqual(a);
    const differ = a.filter((f) => !readFileSync(join(first.dist, f)).equals(readFileSync(join(second.dist, f))));
    expect(differ).toEqual([]);
  });

  it(
    'reuses cached results and generated files when nothing changed, with the same output',
    async () => {
      let calls = 0;
      const third = await buildFixture(
        {
          outDir: second.dist,
          workDir: second.workDir,
          cacheDir: second.cacheDir,
          calibrate: async (dir) => {
            calls += 1;
            return calibrateFixture(dir);
          },
        },
        second.tmp,
      );
      expect(calls).toBe(0);
      expect(third.summary.releases.map((r) => [r.cached, r.regenerated])).toEqual(FIXTURE_IDS.map(() => [true, false]));
      const differ = listFilesSync(first.dist).filter((f) => !readFileSync(join(first.dist, f)).equals(readFileSync(join(second.dist, f))));
      expect(differ).toEqual([]);
    },
    BUILD_TIMEOUT_MS,
  );

  it(
    'leaves the previous site untouched when a build fails',
    async () => {
      const before = listFilesSync(second.dist);
      const index = await readFile(join(second.dist, 'index.html'));
      // A calibration that fails.
      await expect(
        buildFixture(
          {
            outDir: second.dist,
            workDir: second.workDir,
            cacheDir: null,
            calibrate: async () => {
              throw new Error('fixture: calibration refused');
            },
          },
          second.tmp,
        ),
      ).rejects.toThrow(/calibration of .*2025\.4 failed: fixture: calibration refused/);
      // A method note that Astro rejects (no title), so the failure happens inside the site build.
      const methods = await mkdtemp(join(tmpdir(), 'rungbook-methods-'));
      await cp(join(REPO_ROOT, 'content/methods'), methods, { recursive: true });
      const note = join(methods, 'cepheids.md');
      await writeFile(note, (await readFile(note, 'utf8')).replace(/^title: .*$/m, ''));
      await expect(buildFixture({ outDir: second.dist, workDir: second.workDir, cacheDir: second.cacheDir, methodsDir: methods }, second.tmp)).rejects.toThrow(
        /title/,
      );
      // A formula KaTeX cannot typeset: the site is built, then rejected before it replaces the previous one.
      await writeFile(
        note,
        (await readFile(join(REPO_ROOT, 'content/methods/cepheids.md'), 'utf8')).replace('$$', () => '$$\n\\frac{1}{'),
      );
      await expect(buildFixture({ outDir: second.dist, workDir: second.workDir, cacheDir: second.cacheDir, methodsDir: methods }, second.tmp)).rejects.toThrow(
        /math that KaTeX cannot typeset on 3 page\(s\):\n {2}releases\/2025\.4\/cepheids\/index\.html: ParseError/,
      );
      await rm(methods, { recursive: true, force: true });
      expect(listFilesSync(second.dist)).toEqual(before);
      expect((await readFile(join(second.dist, 'index.html'))).equals(index)).toBe(true);
    },
    BUILD_TIMEOUT_MS,
  );

  it('stops with a message naming the file when a method note is missing', async () => {
    const methods = await mkdtemp(join(tmpdir(), 'rungbook-methods-'));
    await cp(join(REPO_ROOT, 'content/methods'), methods, { recursive: true });
    await rm(join(methods, 'hubble-flow.md'));
    await expect(
      buildFixture({ outDir: join(second.tmp, 'never'), workDir: second.workDir, cacheDir: second.cacheDir, methodsDir: methods }, second.tmp),
    ).rejects.toThrow(/method note missing in .*: hubble-flow\.md/);
    expect(existsSync(join(second.tmp, 'never'))).toBe(false);
    expect(REQUIRED_NOTES).toContain('hubble-flow');
    await rm(methods, { recursive: true, force: true });
  });
});
