/**
 * Hostile text is inert end to end (kind: edge cases; the rules are the stack
 * notes' items 6-8 and common practice for HTML output, no outside source).
 *
 * A valid release whose system, star and supernova ids, title and notes.md
 * carry the corpus of tests/trust/hostile.ts is built with `rungbook build`
 * (real calibration, real Astro). The built HTML is parsed with jsdom:
 * - nothing executable: no script element but the site's own bundled enhancement files,
 *   no on* attribute, no javascript: or data: link target (the site's own empty
 *   favicon `data:,` excepted), no frames, objects, forms or base elements;
 * - every id and every file name is ours (safe characters only, unique per
 *   page), so data never becomes an anchor, an id or a path;
 * - every hostile string reads back unchanged as text where it belongs (the
 *   title, the tables of systems and supernovae, the notes), and no math or
 *   markup was made from it.
 * A release whose folder name (and so its id) is hostile is refused before
 * anything is written, with a message naming it.
 *
 * A second build carries the corpus of code payloads (tests/trust/hostile.ts:
 * notesPayloads, one release per payload, and namePayloads in the ids, title and
 * variant names of a calibrated release), each of which writes its own canary
 * file if it ever runs: the build exits 0, no canary exists, each payload reads
 * back as text, and no page holds an element or attribute that the same page of
 * a control release (benign notes with every Markdown construct, the original
 * names) does not hold.
 */
import { appendFileSync, existsSync, mkdirSync, readdirSync, readFileSync, rmSync, writeFileSync } from 'node:fs';
import { join } from 'node:path';
import { JSDOM } from 'jsdom';
import { afterAll, beforeAll, describe, expect, it } from 'vitest';
import { main } from '../../src/cli/main.ts';
import { readEcsv } from '../../src/io/ecsv.ts';
import { listFilesSync } from '../report/linkCheck.ts';
import { calibrateReleaseDir } from '../../src/cli/calibrate.ts';
import { calibrateFixture } from '../fixtures/report/syntheticResults.ts';
import { CONTROL_NOTES, HOSTILE, HOSTILE_TITLE, LONG_ID, namePayloads, notesPayloads, type HostileRelease, writeHostileRelease } from './hostile.ts';
import { copyDemo, editTable, setManifestId, setManifestValue, tempDir } from './releaseCopy.ts';

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
const htmlPages = (site = dist) => listFilesSync(site).filter((f) => f.endsWith('.html'));
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

/** What makes a page unsafe: a script, a frame, object, form or base, an event handler, a javascript: or data: target, a refresh elsewhere. */
function executableProblems(d: Document, p: string, latest: string): string[] {
  const problems: string[] = [];
  // The only scripts are the site's own bundled files (sortable tables, figures you can hover): a
  // module loaded from the site's _astro folder, with no inline code. Anything else was injected.
  for (const script of Array.from(d.querySelectorAll('script'))) {
    if (
      !/^\/h0\/_astro\/(DataTable|Figure)\.astro_astro_type_script_index_0_lang\.[\w-]+\.js$/.test(script.getAttribute('src') ?? '') ||
      script.textContent !== ''
    )
      problems.push(`${p}: script element`);
  }
  if (d.querySelectorAll('iframe, frame, object, embed, form, base, applet').length > 0) problems.push(`${p}: frame, object, form or base`);
  const all = Array.from(d.querySelectorAll('*'));
  for (const a of all.flatMap((e) => e.getAttributeNames().filter((n) => n.toLowerCase().startsWith('on')))) problems.push(`${p}: event handler ${a}`);
  const targets = all.flatMap((e) =>
    ['href', 'src', 'action', 'formaction', 'xlink:href', 'srcset', 'poster', 'data'].flatMap((a) =>
      e.hasAttribute(a) ? [{ tag: e.tagName, value: e.getAttribute(a)! }] : [],
    ),
  );
  for (const t of targets) {
    // Browsers ignore blanks and control characters inside a scheme ("java\tscript:").
    const v = t.value.replace(/[\u0000-\u0020\u007f-\u009f]/g, '').toLowerCase();
    if (v.startsWith('javascript:') || v.startsWith('vbscript:')) problems.push(`${p}: ${t.tag} ${t.value}`);
    if (v.startsWith('data:') && `${t.tag} ${t.value}` !== 'LINK data:,') problems.push(`${p}: ${t.tag} ${t.value.slice(0, 80)}`);
  }
  // The only meta refresh is the /latest/ redirect, to a page of ours.
  for (const m of Array.from(d.querySelectorAll('meta[http-equiv]')))
    if (m.getAttribute('content') !== `0; url=/h0/releases/${latest}/`) problems.push(`${p}: refresh ${m.getAttribute('content')}`);
  return problems;
}

/** Ids that are not ours (unsafe characters, or repeated in the page), and internal links with unsafe paths. */
function idProblems(d: Document, p: string): string[] {
  const problems: string[] = [];
  const ids = Array.from(d.querySelectorAll('[id]')).map((e) => e.id);
  for (const id of ids) if (!SAFE_ID.test(id)) problems.push(`${p}: id ${JSON.stringify(id.slice(0, 80))}`);
  const dup = ids.filter((x, i) => ids.indexOf(x) !== i);
  if (dup.length > 0) problems.push(`${p}: duplicate ids ${dup.join(', ')}`);
  for (const a of Array.from(d.querySelectorAll('[href], [src]'))) {
    const v = a.getAttribute('href') ?? a.getAttribute('src')!;
    if (/^https?:|^mailto:|^data:,$/.test(v)) continue;
    const path = v.split('#')[0]!;
    if (path !== '' && !SAFE_PATH.test(path)) problems.push(`${p}: ${v.slice(0, 120)}`);
  }
  return problems;
}

/** Standalone SVG figures with a script, foreignObject or event handler, and file names that are not ours. */
function fileProblems(site: string): string[] {
  const problems: string[] = [];
  const svgs = listFilesSync(site).filter((f) => f.endsWith('.svg'));
  if (svgs.length <= 10) problems.push(`only ${svgs.length} SVG figures`);
  const parser = new JSDOM('').window;
  for (const f of svgs) {
    const xml = new parser.DOMParser().parseFromString(readFileSync(join(site, f), 'utf8'), 'image/svg+xml');
    if (xml.querySelectorAll('script, foreignObject').length > 0) problems.push(`${f}: script or foreignObject`);
    for (const a of Array.from(xml.querySelectorAll('*')).flatMap((e) => e.getAttributeNames().filter((n) => n.startsWith('on')))) problems.push(`${f}: ${a}`);
  }
  parser.close();
  for (const f of listFilesSync(site)) if (!SAFE_PATH.test(f)) problems.push(`file name ${f}`);
  return problems;
}

/** What one pass over every page of the first build found (each page parsed once, its window closed). */
const scan = { pages: 0, executable: [] as string[], ids: [] as string[], titles: [] as { p: string; title: string; h1: string | null }[] };
beforeAll(async () => {
  if (buildCode !== 0) return; // the build's own test says why
  for (const p of htmlPages()) {
    const window = new JSDOM(readFileSync(join(dist, p), 'utf8')).window;
    const d = window.document;
    scan.pages++;
    scan.executable.push(...executableProblems(d, p, '2026.1'));
    scan.ids.push(...idProblems(d, p));
    if (p.startsWith('releases/2026.1/')) scan.titles.push({ p, title: d.title, h1: d.querySelector('main h1')?.textContent ?? null });
    window.close();
    // jsdom frees a closed window only after the event loop turns (see the corpus below).
    await new Promise((resolve) => setImmediate(resolve));
  }
}, BUILD_TIMEOUT_MS);

describe('hostile text: nothing executable in any page', () => {
  it('has no script, no event handler, no unsafe link target, no frame, object, form or base, in any page or standalone SVG figure', () => {
    expect(scan.pages).toBeGreaterThan(20);
    expect(scan.executable).toEqual([]);
    expect(fileProblems(dist)).toEqual([]);
  });
});

describe('hostile text: ids and file names are ours', () => {
  it('gives every element id safe characters, unique within its page, never a hostile string; keeps every file name and internal link path to safe characters', () => {
    expect(scan.pages).toBeGreaterThan(20);
    expect(scan.ids).toEqual([]);
  });
});

describe('hostile text: read back unchanged as text', () => {
  it('shows the title as text in the heading and the document title of every page of the release', () => {
    expect(scan.titles.length).toBeGreaterThan(10);
    for (const { p, title, h1 } of scan.titles) {
      expect(title, p).toContain(p === 'releases/2026.1/index.html' ? HOSTILE_TITLE : 'release 2026.1');
      if (p === 'releases/2026.1/index.html') expect(h1).toBe(HOSTILE_TITLE);
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
        expect(cell.querySelector('.katex, b, img, em, strong, code') === null, `${p}: ${cell.textContent?.slice(0, 60)}`).toBe(true);
        // A link in a cell is ours (to a system's page or an object's row), never made of the id: it
        // points inside the report and holds the id as plain text.
        for (const a of Array.from(cell.querySelectorAll('a'))) {
          expect(a.getAttribute('href')!.startsWith('/h0/releases/2026.1/systems/'), `${p}: link ${a.getAttribute('href')?.slice(0, 60)}`).toBe(true);
          expect(a.children.length, `${p}: ${a.textContent?.slice(0, 60)}`).toBe(0);
        }
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
  it(
    'is refused before anything is written, naming it',
    async () => {
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
    },
    BUILD_TIMEOUT_MS,
  );
});

describe('hostile corpus: text of a release never runs as code', () => {
  const corpus = join(tmp, 'corpus');
  const corpusDist = join(tmp, 'corpus-dist');
  const canaries = join(tmp, 'canaries');
  const payloads = notesPayloads(canaries);
  const names = namePayloads(canaries);
  /** Folder (and id) of the release that carries payload i. */
  const folderOf = (i: number) => `notes-${String(i + 1).padStart(2, '0')}`;
  let code = -1;
  let err = '';
  /** Hostile id -> the id it replaced, in the release "names". */
  const renamed = new Map<string, string>();

  const writeRelease = (id: string, notes: string) => {
    mkdirSync(join(corpus, id), { recursive: true });
    writeFileSync(
      join(corpus, id, 'release.yaml'),
      `id: ${JSON.stringify(id)}\ntitle: "Corpus release ${id}"\ndate: "2026-01-01"\nprevious: null\nblinded: false\n`,
    );
    writeFileSync(join(corpus, id, 'notes.md'), notes);
  };

  beforeAll(async () => {
    mkdirSync(canaries, { recursive: true });
    // Notes: one release per payload and a control, with synthetic results (the notes' path through the build does not depend on them).
    payloads.forEach((p, i) => writeRelease(folderOf(i), p.notes));
    writeRelease('notes-control', CONTROL_NOTES);
    // Names: demo release 2026.1 with code in ids, the title and variant names, calibrated for real; and its control.
    for (const id of ['names', 'names-control']) {
      const dir = copyDemo('2026.1', corpus, id);
      writeFileSync(join(dir, 'notes.md'), CONTROL_NOTES);
      appendFileSync(join(dir, 'release.yaml'), `    - { name: "plain variant one", clip_sigma: 3.4 }\n    - { name: "plain variant two", clip_sigma: 3.6 }\n`);
      if (id === 'names-control') continue;
      const hosts = ['Ivyreach', 'Juniperfold', 'Kettlemoor', 'Lindenmarsh'];
      names.ids.slice(0, hosts.length).forEach((to, i) => renamed.set(to, hosts[i]!));
      const calibrators = new Map<string, string>();
      editTable(dir, 'sn_calibrators', (t, col) => {
        const sns = t.rows.map((r) => r[col('sn')]!);
        names.ids.slice(hosts.length).forEach((to, i) => {
          calibrators.set(sns[i]!, to);
          renamed.set(to, sns[i]!);
        });
      });
      const systems = new Map([...renamed].filter(([, from]) => hosts.includes(from)).map(([to, from]) => [from, to]));
      for (const table of ['systems', 'cepheids', 'sn_calibrators']) {
        editTable(dir, table, (t, col) => {
          for (const r of t.rows) r[col('system')] = systems.get(r[col('system')]!) ?? r[col('system')]!;
          if (table === 'sn_calibrators') for (const r of t.rows) r[col('sn')] = calibrators.get(r[col('sn')]!) ?? r[col('sn')]!;
        });
      }
      setManifestValue(dir, 'title', JSON.stringify(names.title));
      const yaml = readFileSync(join(dir, 'release.yaml'), 'utf8')
        .replace('"plain variant one"', JSON.stringify(names.variants[0]))
        .replace('"plain variant two"', JSON.stringify(names.variants[1]));
      writeFileSync(join(dir, 'release.yaml'), yaml);
    }
    const io = {
      stdout: () => undefined,
      stderr: (s: string) => void (err += s),
      workDir: join(tmp, 'corpus-work'),
      cacheDir: join(tmp, 'corpus-cache'),
      calibrate: (dir: string) => (existsSync(join(dir, 'systems.ecsv')) ? calibrateReleaseDir(dir) : calibrateFixture(dir)),
      compare: null,
    };
    code = await main(['build', '--releases', corpus, '--out', corpusDist, '--base', BASE], io as Parameters<typeof main>[1]);
    if (code !== 0) return;
    // One pass over the pages (about thirteen hundred), each parsed in a window of its own that is
    // closed after use. jsdom frees a closed window only once the event loop has turned (measured
    // with jsdom 29: fifty 12,000-node pages parsed in one synchronous loop kept 1.5 GB, 70 MB when
    // the loop yields after each), so the loop yields after every page.
    const latest = /url=\/h0\/releases\/([^/]+)\//.exec(readFileSync(join(corpusDist, 'latest', 'index.html'), 'utf8'))![1]!;
    for (const p of htmlPages(corpusDist)) {
      const window = new JSDOM(readFileSync(join(corpusDist, p), 'utf8')).window;
      const d = window.document;
      pageProblems.push(...executableProblems(d, p, latest), ...idProblems(d, p));
      const release = /^releases\/([^/]+)\//.exec(p)?.[1];
      if (release !== undefined) {
        const sig = signatures.get(release) ?? new Set<string>();
        for (const e of Array.from(d.querySelectorAll('*'))) {
          const tag = e.tagName.toLowerCase();
          sig.add(tag);
          for (const a of e.getAttributeNames()) sig.add(`${tag}[${a}]`);
        }
        signatures.set(release, sig);
      }
      const match = /^releases\/(notes-\d+)\/index\.html$/.exec(p);
      if (match) {
        const notes = d.querySelector('[aria-labelledby="notes"] .prose');
        notesText.set(match[1]!, notes?.textContent ?? null);
        notesMarkup.set(
          match[1]!,
          notes ? notes.querySelectorAll('script, style, img, iframe, object, embed, form, input, base, svg, math, .katex').length : -1,
        );
      }
      if (/^releases\/names\/(cepheids|supernovae|variants)?\/?index\.html$/.test(p)) {
        namesShown.set(p, {
          cepheidSystems: rowHeaders(d, 'cepheid-systems'),
          calibrators: rowHeaders(d, 'calibrators'),
          h1: d.querySelector('main h1')?.textContent ?? null,
          text: d.body.textContent ?? '',
        });
      }
      window.close();
      await new Promise((resolve) => setImmediate(resolve));
    }
  }, BUILD_TIMEOUT_MS);

  /** Tags and tag[attribute] pairs of every element of each release's pages. */
  const signatures = new Map<string, Set<string>>();
  const pageProblems: string[] = [];
  const notesText = new Map<string, string | null>();
  const notesMarkup = new Map<string, number>();
  const namesShown = new Map<string, { cepheidSystems: string[]; calibrators: string[]; h1: string | null; text: string }>();
  const signature = (release: string): Set<string> => signatures.get(release) ?? new Set();

  it(`builds ${payloads.length} releases of hostile notes, a release of hostile names and their controls: exit 0, nothing on stderr`, () => {
    expect(payloads.length + names.ids.length + 1 + names.variants.length).toBeGreaterThanOrEqual(30);
    expect(err).toBe('');
    expect(code).toBe(0);
    for (const id of [...payloads.map((_, i) => folderOf(i)), 'notes-control', 'names', 'names-control'])
      expect(existsSync(join(corpusDist, 'releases', id, 'index.html')), id).toBe(true);
  });

  it('leaves no canary: no payload ran during the build', () => {
    const expected = [...payloads.flatMap((p) => (p.canary ? [p.canary] : [])), ...names.canaries];
    expect(expected.length).toBeGreaterThanOrEqual(30);
    expect(readdirSync(canaries)).toEqual([]);
    for (const c of expected) expect(existsSync(c), c).toBe(false);
  });

  it.each(payloads.map((p, i) => [p.name, p.kind, i] as const))('notes payload %s (%s) reads back as text', (_name, _kind, i) => {
    const p = payloads[i]!;
    const text = notesText.get(folderOf(i));
    expect(typeof text).toBe('string');
    for (const s of p.shows) expect(text!.includes(s), `${p.name}: ${JSON.stringify(s.slice(0, 120))}`).toBe(true);
    expect(notesMarkup.get(folderOf(i))).toBe(0);
  });

  it('gives no page of a notes release an element or attribute that the control release does not have', () => {
    const control = signature('notes-control');
    // The control holds every construct of the notes (so the comparison is not vacuous).
    for (const x of [
      'h3[id]',
      'h6[id]',
      'blockquote',
      'table',
      'th[align]',
      'pre',
      'del',
      'br',
      'sup',
      'section[data-footnotes]',
      'a[data-footnote-ref]',
      'ol[start]',
    ])
      expect(control.has(x), x).toBe(true);
    payloads.forEach((p, i) =>
      expect(
        [...signature(folderOf(i))].filter((x) => !control.has(x)),
        p.name,
      ).toEqual([]),
    );
  });

  it('gives no page of the names release an element or attribute that its control does not have', () => {
    expect(signature('names').size).toBeGreaterThan(50);
    const extra = [...signature('names')].filter((x) => !signature('names-control').has(x));
    expect(extra).toEqual([]);
  });

  it('shows every hostile name as text: ids in the tables, the title in the heading, the variant names on the variants page', () => {
    const cep = namesShown.get('releases/names/cepheids/index.html')!.cepheidSystems;
    const hosts = [...renamed].filter(([, from]) => ['Ivyreach', 'Juniperfold', 'Kettlemoor', 'Lindenmarsh'].includes(from)).map(([to]) => to);
    expect(hosts).toHaveLength(4);
    for (const h of hosts) expect(cep, h).toContain(h);
    const sns = namesShown.get('releases/names/supernovae/index.html')!.calibrators;
    for (const sn of names.ids.slice(4)) expect(sns, sn).toContain(sn);
    expect(namesShown.get('releases/names/index.html')!.h1).toBe(names.title);
    const variants = namesShown.get('releases/names/variants/index.html')!.text;
    for (const v of names.variants) expect(variants, v).toContain(v);
  });

  it('keeps every page of the corpus build free of anything executable, with ids and paths of ours', () => {
    expect(signatures.size).toBe(payloads.length + 3);
    expect(pageProblems).toEqual([]);
    expect(fileProblems(corpusDist)).toEqual([]);
  });
});
