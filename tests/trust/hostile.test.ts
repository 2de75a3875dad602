/**
 * Hostile text is inert end to end (kind: edge cases; the rules are the stack
 * notes' items 6-8 and common practice for HTML output, no outside source).
 *
 * A valid release whose system, star and supernova ids, title and notes.md
 * carry the corpus of tests/trust/hostile.ts is built with `rungbook build`
 * (real calibration, real Astro). The built HTML is parsed with jsdom:
 * - nothing executable: no script element (the report ships no JavaScript),
 *   no on* attribute, no javascript: or data: link target (the site's own empty
 *   favicon `data:,` excepted), no frames, objects, forms or base elements;
 * - every id and every file name is ours (safe characters only, unique per
 *   page), so data never becomes an anchor, an id or a path;
 * - every hostile string reads back unchanged as text where it belongs (the
 *   title, the tables of systems and supernovae, the notes), and no math or
 *   markup was made from it.
 * A release whose folder name (and so its id) is hostile is refused before
 * anything is written, with a message naming it.
 */
import { existsSync, mkdirSync, readdirSync, readFileSync, rmSync } from 'node:fs';
import { join } from 'node:path';
import { JSDOM } from 'jsdom';
import { afterAll, beforeAll, describe, expect, it } from 'vitest';
import { main } from '../../src/cli/main.ts';
import { readEcsv } from '../../src/io/ecsv.ts';
import { listFilesSync } from '../report/linkCheck.ts';
import { HOSTILE, HOSTILE_TITLE, LONG_ID, type HostileRelease, writeHostileRelease } from './hostile.ts';
import { copyDemo, setManifestId, tempDir } from './releaseCopy.ts';

const BUILD_TIMEOUT_MS = 600_000;
const BASE = '/h0/';
/** Characters of our own ids and file names. */
const SAFE_ID = /^[A-Za-z0-9_.:-]+$/;
const SAFE_PATH = /^[A-Za-z0-9_./-]+$/;

const tmp = tempDir('rungbook-hostile-');
const releases = join(tmp, 'releases');
const dist = join(tmp, 'dist');
let hostile: HostileRelease;
let buildCode: number;
let buildErr = '';
const docs = new Map<string, Document>();

function page(rel: string): Document {
  let d = docs.get(rel);
  if (!d) {
    d = new JSDOM(readFileSync(join(dist, rel), 'utf8')).window.document;
    docs.set(rel, d);
  }
  return d;
}
const htmlPages = () => listFilesSync(dist).filter((f) => f.endsWith('.html'));
const rowHeaders = (d: Document, tableId: string) =>
  // The cell's own text node (a mark tag may follow it); the blanks around it come from the page template.
  Array.from(d.querySelectorAll(`section[aria-labelledby="table-${tableId}"] tbody th[scope="row"]`)).map((th) => th.firstChild?.textContent?.trim() ?? '');
const column = (d: Document, tableId: string, j: number) =>
  Array.from(d.querySelectorAll(`section[aria-labelledby="table-${tableId}"] tbody tr`)).map((tr) => tr.children[j]?.textContent ?? '');

beforeAll(async () => {
  mkdirSync(releases);
  hostile = writeHostileRelease(releases);
  const io = { stdout: () => undefined, stderr: (s: string) => void (buildErr += s), workDir: join(tmp, 'work'), cacheDir: join(tmp, 'cache') };
  buildCode = await main(['build', '--releases', releases, '--out', dist, '--base', BASE], io);
}, BUILD_TIMEOUT_MS);

afterAll(() => rmSync(tmp, { recursive: true, force: true }));

describe('hostile text: the build', () => {
  it('builds the hostile release', () => {
    expect(buildErr).toBe('');
    expect(buildCode).toBe(0);
    expect(existsSync(join(dist, 'releases', '2026.1', 'index.html'))).toBe(true);
    // The corpus reached the data: 19 systems, 6 stars, 18 supernovae renamed (all 12 calibrators).
    expect([hostile.systems.size, hostile.stars.size, hostile.sns.size]).toEqual([19, 6, 18]);
  });
});

describe('hostile text: nothing executable in any page', () => {
  it('has no script, no event handler, no unsafe link target, no frame, object, form or base', () => {
    const pages = htmlPages();
    expect(pages.length).toBeGreaterThan(20);
    for (const p of pages) {
      const d = page(p);
      expect(d.querySelectorAll('script').length, p).toBe(0);
      expect(d.querySelectorAll('iframe, frame, object, embed, form, base, applet').length, p).toBe(0);
      const all = Array.from(d.querySelectorAll('*'));
      expect(all.flatMap((e) => e.getAttributeNames().filter((a) => a.toLowerCase().startsWith('on'))), p).toEqual([]);
      const targets = all.flatMap((e) =>
        ['href', 'src', 'action', 'formaction', 'xlink:href', 'srcset', 'poster', 'data'].flatMap((a) => (e.hasAttribute(a) ? [{ tag: e.tagName, value: e.getAttribute(a)! }] : [])),
      );
      for (const t of targets) {
        // Browsers ignore blanks and control characters inside a scheme ("java\tscript:").
        const v = t.value.replace(/[\u0000-\u0020\u007f-\u009f]/g, '').toLowerCase();
        expect(v.startsWith('javascript:') || v.startsWith('vbscript:'), `${p}: ${t.tag} ${t.value}`).toBe(false);
        if (v.startsWith('data:')) expect(`${t.tag} ${t.value}`, p).toBe('LINK data:,');
      }
      // The only meta refresh is the /latest/ redirect, to a page of ours.
      for (const m of Array.from(d.querySelectorAll('meta[http-equiv]'))) expect(m.getAttribute('content'), p).toMatch(/^0; url=\/h0\/releases\/2026\.1\/$/);
    }
  });

  it('has no script and no event handler in any standalone SVG figure either', () => {
    const svgs = listFilesSync(dist).filter((f) => f.endsWith('.svg'));
    expect(svgs.length).toBeGreaterThan(10);
    for (const f of svgs) {
      const xml = new JSDOM(readFileSync(join(dist, f), 'utf8'), { contentType: 'image/svg+xml' }).window.document;
      expect(xml.querySelectorAll('script, foreignObject').length, f).toBe(0);
      expect(Array.from(xml.querySelectorAll('*')).flatMap((e) => e.getAttributeNames().filter((a) => a.startsWith('on'))), f).toEqual([]);
    }
  });
});

describe('hostile text: ids and file names are ours', () => {
  it('gives every element id safe characters, unique within its page, and never a hostile string', () => {
    for (const p of htmlPages()) {
      const ids = Array.from(page(p).querySelectorAll('[id]')).map((e) => e.id);
      for (const id of ids) expect(SAFE_ID.test(id), `${p}: id ${JSON.stringify(id.slice(0, 80))}`).toBe(true);
      expect(ids.length - new Set(ids).size, `${p}: duplicate ids ${ids.filter((x, i) => ids.indexOf(x) !== i).join(', ')}`).toBe(0);
    }
  });

  it('keeps every file name and every internal link path to safe characters', () => {
    for (const f of listFilesSync(dist)) expect(SAFE_PATH.test(f), f).toBe(true);
    for (const p of htmlPages()) {
      for (const a of Array.from(page(p).querySelectorAll('[href], [src]'))) {
        const v = a.getAttribute('href') ?? a.getAttribute('src')!;
        if (/^https?:|^mailto:|^data:,$/.test(v)) continue;
        const path = v.split('#')[0]!;
        if (path !== '') expect(SAFE_PATH.test(path), `${p}: ${v.slice(0, 120)}`).toBe(true);
      }
    }
  });
});

describe('hostile text: read back unchanged as text', () => {
  it('shows the title as text in the heading and the document title of every page of the release', () => {
    for (const p of htmlPages().filter((f) => f.startsWith('releases/2026.1/'))) {
      const d = page(p);
      expect(d.title, p).toContain(p === 'releases/2026.1/index.html' ? HOSTILE_TITLE : 'release 2026.1');
      if (p === 'releases/2026.1/index.html') expect(d.querySelector('main h1')?.textContent).toBe(HOSTILE_TITLE);
    }
    const home = page('index.html');
    expect(Array.from(home.querySelectorAll('.release-list li')).some((li) => li.textContent?.includes(HOSTILE_TITLE))).toBe(true);
  });

  it('lists every hostile system id, unchanged, in the tables of the rung pages', () => {
    const cep = page('releases/2026.1/cepheids/index.html');
    const cepSystems = rowHeaders(cep, 'cepheid-systems');
    // Every system with Cepheids (16 of the 19) appears once, exactly as written in the data.
    expect(cepSystems.length).toBe(16);
    for (const s of cepSystems) expect([...hostile.systems.values()]).toContain(s);
    expect(cepSystems).toContain(LONG_ID);
    const anchors = rowHeaders(page('releases/2026.1/parallax/index.html'), 'anchors');
    expect(anchors.sort()).toEqual(['Alder', 'Birchmoor', 'Copperwell', 'Dunholt', 'Emberly'].map((s) => hostile.systems.get(s)!).sort());
    const targets = rowHeaders(page('releases/2026.1/main-sequence/index.html'), 'targets');
    expect(targets.sort()).toEqual(['Fernhollow', 'Greywick', 'Hollinford', 'Wrenmere'].map((s) => hostile.systems.get(s)!).sort());
  });

  it('lists every hostile supernova id and host, unchanged, in the calibrator table', () => {
    const sup = page('releases/2026.1/supernovae/index.html');
    expect(hostile.calibrators.length).toBe(12);
    expect(rowHeaders(sup, 'calibrators').sort()).toEqual([...hostile.calibrators].sort());
    const hosts = new Set(column(sup, 'calibrators', 1));
    for (const h of hosts) expect([...hostile.systems.values()]).toContain(h);
    expect(hosts.has(LONG_ID)).toBe(true);
  });

  it('makes no math, no markup and no link out of an id', () => {
    for (const p of ['cepheids', 'supernovae', 'parallax', 'main-sequence'].map((r) => `releases/2026.1/${r}/index.html`)) {
      const d = page(p);
      for (const cell of Array.from(d.querySelectorAll('.table-block td, .table-block th'))) {
        expect(cell.querySelector('.katex, a, b, img, em, strong, code'), `${p}: ${cell.textContent?.slice(0, 60)}`).toBeNull();
      }
    }
  });

  it('offers the downloads with every hostile id intact (read back by our ECSV reader)', () => {
    const t = readEcsv(readFileSync(join(dist, 'releases/2026.1/downloads/systems.ecsv'))).table!;
    const ids = t.rows.map((r) => r.cells[0]);
    expect(ids.sort()).toEqual([...hostile.systems.values()].sort());
    const flow = readEcsv(readFileSync(join(dist, 'releases/2026.1/downloads/sn_hubble_flow.ecsv'))).table!;
    const flowIds = new Set(flow.rows.map((r) => r.cells[0]));
    const flowHostile = [...hostile.sns.values()].filter((id) => !hostile.calibrators.includes(id));
    expect(flowHostile.length).toBe(6);
    for (const id of flowHostile) expect(flowIds.has(id), id).toBe(true);
  });

  it('renders notes.md as Markdown text: raw HTML, expressions and math shown as written, only safe links kept', () => {
    const d = page('releases/2026.1/index.html');
    const notes = d.querySelector('[aria-labelledby="notes"] .prose')!;
    const text = notes.textContent!;
    for (const s of [
      // A backslash before ( or [ is a Markdown escape: the reader sees "(y)", and no math is made.
      'A price of $5 and $6. Math $$x$$ and (y) and [z].',
      'An expression {1+1} and {x} and ${process.exit(1)} and',
      '<script>alert("notes")</script>',
      '<img src=x onerror=alert(1)>',
      '<!-- hidden comment -->',
      'c<d and a>b & c.',
      '<a href="javascript:alert(3)">raw anchor</a>',
      'Right-to-left: שלום \u202Eevil\u202C, emoji 🔭👩‍🚀 and zero\u200Bwidth.',
    ]) {
      expect(text, s).toContain(s);
    }
    expect(Array.from(notes.querySelectorAll('code')).map((c) => c.textContent)).toEqual(['code {x}', 'two ` ticks']);
    expect(notes.querySelectorAll('.katex, img, script').length).toBe(0);
    // Links: only the https ones survive, as links; the unsafe ones become their text.
    expect(Array.from(notes.querySelectorAll('a')).map((a) => a.getAttribute('href'))).toEqual(['https://example.org/ok', 'https://example.org/p.png']);
    // A destination with a blank in it is no link in Markdown: it stays text, as written.
    for (const s of ['click me', 'data link', '[JaVaScRiPt](  JAVA\tSCRIPT:alert(2))', 'image: pixel', '[ref link][r]']) expect(text).toContain(s);
    // Note headings get our ids, so "main", "top" and "checks" do not clash with the page's own.
    expect(Array.from(notes.querySelectorAll('h3, h4, h5')).map((h) => [h.textContent, h.id])).toEqual([
      ['main', 'notes-heading-1'],
      ['top', 'notes-heading-2'],
      ['checks', 'notes-heading-3'],
    ]);
    expect(d.querySelectorAll('#main').length).toBe(1);
    expect(notes.querySelector('td')?.textContent).toBe('<b>x</b>');
  });

  it('covers the whole corpus: every hostile string is an id somewhere in the release', () => {
    const used = new Set([...hostile.systems.values(), ...hostile.stars.values(), ...hostile.sns.values()]);
    expect(HOSTILE.filter((h) => !used.has(h))).toEqual([]);
  });
});

describe('hostile text: a hostile release id', () => {
  it('is refused before anything is written, naming it', async () => {
    const dir = tempDir('rungbook-hostile-id-');
    try {
      const folder = 'x<script>';
      copyDemo('2026.1', dir, folder);
      setManifestId(join(dir, folder), folder);
      let err = '';
      const code = await main(['build', '--releases', dir, '--out', join(dir, 'dist')], {
        stdout: () => undefined,
        stderr: (s: string) => void (err += s),
        workDir: join(dir, 'work'),
        cacheDir: join(dir, 'cache'),
      } as Parameters<typeof main>[1]);
      expect(code).toBe(1);
      expect(err).toContain('release id "x<script>"');
      expect(err).toContain('cannot be used in a URL');
      expect(existsSync(join(dir, 'dist'))).toBe(false);
      expect(readdirSync(dir).filter((f) => f.startsWith('.dist'))).toEqual([]);
    } finally {
      rmSync(dir, { recursive: true, force: true });
    }
  }, BUILD_TIMEOUT_MS);
});
