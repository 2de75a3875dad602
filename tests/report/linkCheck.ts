/**
 * Link checker over a built site folder (tests only).
 *
 * For every HTML page: each href/src (and a meta refresh target) is resolved
 * against the page's URL under the base path. Internal links must stay under
 * the base and point to an existing file ("…/" means "…/index.html"); a
 * fragment must name an element id in the target page. For every CSS file:
 * each url(...) must resolve the same way. Loads from other origins (scripts,
 * styles, images, fonts) are errors: the report must work offline. Links to
 * other origins in <a href> are allowed (clicking is not loading) and listed.
 */
import { existsSync, readdirSync, readFileSync, statSync } from 'node:fs';
import { join } from 'node:path';
import { JSDOM } from 'jsdom';

export interface LinkProblem {
  page: string;
  attribute: string;
  url: string;
  problem: string;
}

export interface LinkReport {
  pages: number;
  checked: number;
  problems: LinkProblem[];
  outboundLinks: string[];
  /** Internal links with a fragment whose target element was looked up (…/#object-id). */
  fragments: number;
}

const ORIGIN = 'http://report.test';

function fileFor(dist: string, base: string, pathname: string): string | null {
  const decoded = decodeURIComponent(pathname);
  if (!decoded.startsWith(base)) return null;
  const rel = decoded.slice(base.length);
  const candidate = join(dist, rel.endsWith('/') || rel === '' ? `${rel}index.html` : rel);
  return candidate;
}

/** Let other work (the test runner's messages) through between pages: parsing is synchronous. */
const breathe = () => new Promise<void>((ok) => setImmediate(ok));

export async function checkLinks(dist: string, base: string): Promise<LinkReport> {
  const files = listFilesSync(dist);
  const pages = files.filter((f) => f.endsWith('.html'));
  const idCache = new Map<string, Set<string>>();
  const idsOf = (file: string): Set<string> => {
    let ids = idCache.get(file);
    if (!ids) {
      const window = new JSDOM(readFileSync(file, 'utf8')).window;
      ids = new Set(Array.from(window.document.querySelectorAll('[id]')).map((e) => e.id));
      window.close();
      idCache.set(file, ids);
    }
    return ids;
  };
  const problems: LinkProblem[] = [];
  const outbound = new Set<string>();
  let checked = 0;
  let fragments = 0;

  const checkUrl = (page: string, pageUrl: URL, attribute: string, raw: string, isNavigation: boolean, allowData: boolean) => {
    checked += 1;
    let u: URL;
    try {
      u = new URL(raw, pageUrl);
    } catch {
      problems.push({ page, attribute, url: raw, problem: 'not a URL' });
      return;
    }
    if (u.protocol === 'data:') {
      if (!allowData) problems.push({ page, attribute, url: raw.slice(0, 60), problem: 'data: URL where none is expected' });
      return;
    }
    if (u.origin !== ORIGIN) {
      if (isNavigation && ['http:', 'https:', 'mailto:'].includes(u.protocol)) outbound.add(u.href);
      else problems.push({ page, attribute, url: raw, problem: `loads from outside the site (${u.protocol})` });
      return;
    }
    const file = fileFor(dist, base, u.pathname);
    if (file === null) {
      problems.push({ page, attribute, url: raw, problem: `outside the base path ${base}` });
      return;
    }
    if (!existsSync(file) || !statSync(file).isFile()) {
      problems.push({ page, attribute, url: raw, problem: `no file ${file.slice(dist.length)}` });
      return;
    }
    if (u.hash.length > 1 && file.endsWith('.html')) fragments += 1;
    if (u.hash.length > 1 && file.endsWith('.html') && !idsOf(file).has(decodeURIComponent(u.hash.slice(1)))) {
      problems.push({ page, attribute, url: raw, problem: `no element with id ${u.hash} in the target page` });
    }
  };

  for (const rel of pages) {
    await breathe();
    const pageUrl = new URL(`${base}${rel.replace(/index\.html$/, '')}`, ORIGIN);
    const window = new JSDOM(readFileSync(join(dist, rel), 'utf8')).window;
    const doc = window.document;
    for (const el of Array.from(doc.querySelectorAll('[href]'))) {
      const tag = el.tagName.toLowerCase();
      const relAttr = (el.getAttribute('rel') ?? '').toLowerCase();
      checkUrl(rel, pageUrl, `${tag} href`, el.getAttribute('href')!, tag === 'a', tag === 'link' && relAttr === 'icon');
    }
    for (const el of Array.from(doc.querySelectorAll('[src]'))) {
      checkUrl(rel, pageUrl, `${el.tagName.toLowerCase()} src`, el.getAttribute('src')!, false, false);
    }
    for (const el of Array.from(doc.querySelectorAll('meta[http-equiv="refresh"]'))) {
      const m = /url=(.+)$/i.exec(el.getAttribute('content') ?? '');
      if (!m) problems.push({ page: rel, attribute: 'meta refresh', url: '', problem: 'refresh without url' });
      else checkUrl(rel, pageUrl, 'meta refresh', m[1]!.trim(), true, false);
    }
    // jsdom frees a closed window once the event loop turns (the next breathe()).
    window.close();
  }
  for (const rel of files.filter((f) => f.endsWith('.css'))) {
    const cssUrl = new URL(`${base}${rel}`, ORIGIN);
    const css = readFileSync(join(dist, rel), 'utf8');
    for (const m of css.matchAll(/url\(\s*(['"]?)([^'")]+)\1\s*\)/g)) checkUrl(rel, cssUrl, 'css url()', m[2]!, false, true);
  }
  return { pages: pages.length, checked, problems, outboundLinks: [...outbound].sort(), fragments };
}

/** Every file under dir, relative, "/"-separated, sorted. */
export function listFilesSync(dir: string): string[] {
  const out: string[] = [];
  const walk = (d: string, prefix: string) => {
    for (const name of readdirSync(d, { withFileTypes: true })) {
      const rel = prefix ? `${prefix}/${name.name}` : name.name;
      if (name.isDirectory()) walk(join(d, name.name), rel);
      else out.push(rel);
    }
  };
  walk(dir, '');
  return out.sort();
}
