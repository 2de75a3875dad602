/**
 * The contract between the page builder (src/report) and the site (site/), issue 12 item 2.
 *
 * Routes: every URL of the report comes from src/layout/routes.ts. These tests prove that each
 * route it names has a page (a page file under site/pages, and a built page in the fixture
 * report) and that each page file and each built page is a route it names; that the paths the
 * page builder and the comparison's links use are its routes; and that the base path is
 * normalised one way. Expected strings are written out by hand from the route templates (the
 * report's own conventions; no outside source applies).
 *
 * Page data: every file the site loads passes its strict schema (src/layout/pageSchema.ts), the
 * one the content collections use; a field the schema does not know is refused, by the page
 * builder before it writes and by the schema the site loads with; the site casts no page data.
 *
 * Settings: one function resolves them (src/layout/settings.ts), and the environment handed to
 * the Astro process gives the same settings back.
 */
import { readdirSync, readFileSync, statSync } from 'node:fs';
import { mkdtemp, rm } from 'node:fs/promises';
import { tmpdir } from 'node:os';
import { join, relative, sep } from 'node:path';
import { afterAll, beforeAll, describe, expect, it, vi } from 'vitest';
import { z, ZodArray, ZodNullable, ZodObject, ZodOptional, ZodRecord, type ZodTypeAny } from 'zod';
import { buildLinks } from '../../src/diff/links.ts';
import {
  absoluteUrl,
  downloadsFolder,
  figureFilePath,
  figurePagePath,
  historyPath,
  homePath,
  latestPath,
  normaliseBase,
  objectLink,
  PAGE_ROUTES,
  type PageRoute,
  releaseFiguresFolder,
  releasePagePath,
  releasePath,
  releasesPath,
  rungPath,
  siteFiguresFolder,
  systemFigureLink,
  systemFiguresFolder,
  systemPagePath,
  withBase,
} from '../../src/layout/routes.ts';
import { GENERATED_MARK, proseFileSchema, releaseDataSchema, siteDataSchema, systemPageFileSchema } from '../../src/layout/pageSchema.ts';
import { genLayout, writePageData } from '../../src/report/generate.ts';
import { releasePages, RUNG_PAGES } from '../../src/report/pageData.ts';
import { recoveryPage } from '../../src/report/recovery.ts';
import { buildSettings, DEFAULT_SITE, REPO_ROOT, settingsEnv } from '../../src/layout/settings.ts';
import { buildFixture, FIXTURE_IDS, type FixtureBuild } from './fixtureBuild.ts';

// site/content.config.ts is loaded as it is; Astro's virtual module and its loader helper are stood in for.
vi.mock('astro:content', () => ({ defineCollection: <T>(c: T) => c, z }));
vi.mock('astro/loaders', () => ({ glob: (options: unknown) => ({ options }) }));

const PAGES_DIR = join(REPO_ROOT, 'site', 'pages');
const BUILD_TIMEOUT_MS = 300_000;

/** Every file under a folder, relative, with "/" separators. */
function files(dir: string): string[] {
  const out: string[] = [];
  const walk = (d: string) => {
    for (const name of readdirSync(d)) {
      const p = join(d, name);
      if (statSync(p).isDirectory()) walk(p);
      else out.push(relative(dir, p).split(sep).join('/'));
    }
  };
  walk(dir);
  return out.sort();
}

/** The route a site-relative page path (or link, without its fragment) belongs to; null: none. */
function routeOf(path: string): PageRoute | null {
  const bare = path.replace(/#.*$/, '');
  const hits = (Object.keys(PAGE_ROUTES) as PageRoute[]).filter((name) => {
    const pattern = PAGE_ROUTES[name].replace(/[.]/g, '\\.').replace(/\[[a-z]+\]/g, '[^/]+');
    return new RegExp(`^${pattern}$`).test(bare);
  });
  // A fixed segment wins over a parameter (releases/x/data/ is the data page, not a rung called "data").
  const fixed = hits.filter((n) => !PAGE_ROUTES[n].endsWith(']/'));
  return (fixed.length > 0 ? fixed : hits).sort((a, b) => PAGE_ROUTES[b].length - PAGE_ROUTES[a].length)[0] ?? null;
}

describe('routes and page files', () => {
  it('names exactly the pages under site/pages (one index.astro per route template)', () => {
    const pageFiles = files(PAGES_DIR);
    expect(
      pageFiles.every((f) => f.endsWith('index.astro')),
      pageFiles.join(', '),
    ).toBe(true);
    const templates = pageFiles.map((f) => f.replace(/index\.astro$/, ''));
    expect(templates.sort()).toEqual(Object.values(PAGE_ROUTES).sort());
  });

  it('fills templates with the values it is given, percent-encoded, and refuses a missing one', () => {
    expect(releasePath('2026.3')).toBe('releases/2026.3/');
    expect(releasePath('2026.3', 'downloads/results.json')).toBe('releases/2026.3/downloads/results.json');
    expect(releasePagePath('2026.3', 'errorBudget')).toBe('releases/2026.3/error-budget/');
    expect(releasePagePath('2026.3', 'globalFit')).toBe('releases/2026.3/global-fit/');
    expect(rungPath('2026.3', 'main-sequence')).toBe('releases/2026.3/main-sequence/');
    expect(systemPagePath('2026.3', 'Alder')).toBe('releases/2026.3/systems/Alder/');
    expect(objectLink('2026.3', 'Alder', 'Alder-001')).toBe('releases/2026.3/systems/Alder/#Alder-001');
    expect(systemFiguresFolder('2026.3', 'Alder')).toBe('releases/2026.3/systems/Alder/figures/');
    expect(systemFigureLink('releases/2026.3/systems/Alder/', 'pl-residuals')).toBe('releases/2026.3/systems/Alder/#figure-pl-residuals');
    expect(figureFilePath(releaseFiguresFolder('2026.3'), 'ladder-diagram', 'png')).toBe('releases/2026.3/figures/ladder-diagram.png');
    expect(figurePagePath(siteFiguresFolder(), 'h0-history')).toBe('figures/h0-history/');
    expect(downloadsFolder('2026.3')).toBe('releases/2026.3/downloads/');
    expect([homePath(), releasesPath(), latestPath(), historyPath()]).toEqual(['', 'releases/', 'latest/', 'history/']);
    // `rungbook diff` may meet a release id the report would refuse: it stays one folder.
    expect(releasePagePath('a b/c', 'compare')).toBe('releases/a%20b%2Fc/compare/');
    expect(() => releasePath('')).toThrow(/parameter id is missing/);
  });

  it('gives every path the page builder and the comparison links use a route of its own', () => {
    const id = '2026.3';
    const used = [
      ...releasePages(id).map((p) => p.path),
      recoveryPage(id).path,
      systemPagePath(id, 'Alder'),
      systemPagePath(id, 'name with spaces'),
      objectLink(id, 'Alder', 'Alder-001'),
      figurePagePath(releaseFiguresFolder(id), 'ladder-diagram'),
      figurePagePath(siteFiguresFolder(), 'h0-history'),
      homePath(),
      releasesPath(),
      latestPath(),
      historyPath(),
    ];
    for (const p of used) expect(routeOf(p), p).not.toBeNull();
    // Each release page named in its navigation is the route of that name.
    expect(releasePages(id).map((p) => routeOf(p.path))).toEqual([
      'release',
      ...RUNG_PAGES.map(() => 'rung'),
      'globalFit',
      'errorBudget',
      'variants',
      'systems',
      'data',
      'compare',
      'figures',
    ]);
    expect(routeOf(recoveryPage(id).path)).toBe('recovery');
    // Files are not pages.
    expect(routeOf(figureFilePath(releaseFiguresFolder(id), 'ladder-diagram', 'svg'))).toBeNull();
    expect(routeOf(`${downloadsFolder(id)}results.json`)).toBeNull();
  });

  it('normalises a base path one way, and joins paths and origins with it', () => {
    expect([undefined, '', '/', '  /  ', '//'].map(normaliseBase)).toEqual(['/', '/', '/', '/', '/']);
    expect(['team/h0', '/team/h0', 'team/h0/', '//team/h0//', ' /team/h0/ '].map(normaliseBase)).toEqual(Array(5).fill('/team/h0/'));
    expect(withBase('/team/h0/', 'releases/2026.3/')).toBe('/team/h0/releases/2026.3/');
    expect(withBase('team/h0', '/releases/')).toBe('/team/h0/releases/');
    expect(withBase('/', '')).toBe('/');
    expect(absoluteUrl('https://ladder.example.org', 'team/h0', 'releases/2026.3/compare/')).toBe(
      'https://ladder.example.org/team/h0/releases/2026.3/compare/',
    );
    // The comparison's links are the report's routes under the same base.
    const links = buildLinks('https://ladder.example.org', 'team/h0', '2026.2', '2026.3', '2026.2');
    expect(links.page).toBe('https://ladder.example.org/team/h0/releases/2026.3/compare/');
    expect(links.figures['attribution']).toBe('https://ladder.example.org/team/h0/releases/2026.3/figures/compare-attribution.png');
  });
});

describe('routes and a built report', () => {
  let built: FixtureBuild;
  beforeAll(async () => {
    built = await buildFixture();
  }, BUILD_TIMEOUT_MS);
  afterAll(async () => {
    if (built) await rm(built.tmp, { recursive: true, force: true });
  });

  it('builds only pages the routes name, and a page for every route', () => {
    const pages = files(built.dist)
      .filter((f) => f.endsWith('index.html'))
      .map((f) => f.replace(/index\.html$/, ''));
    const unnamed = pages.filter((p) => routeOf(p) === null);
    expect(unnamed).toEqual([]);
    const builtRoutes = new Set(pages.map(routeOf));
    // The fixture releases have no recovery.json beside them, so no recovery page (tests/recover/page.test.ts builds one).
    const expected = (Object.keys(PAGE_ROUTES) as PageRoute[]).filter((r) => r !== 'recovery');
    expect([...builtRoutes].sort()).toEqual(expected.sort());
    // Every page in each release's navigation is built.
    for (const id of FIXTURE_IDS) for (const p of releasePages(id)) expect(pages, p.path).toContain(p.path);
  });

  /** Each generated JSON file the site loads, with the schema its collection loads it with (site/content.config.ts). */
  const generatedFiles = () => {
    const gen = join(built.workDir, 'gen');
    const schemaOf = (f: string) =>
      f === 'data/site.json'
        ? siteDataSchema
        : f.startsWith('data/releases/')
          ? releaseDataSchema
          : f.startsWith('data/systems/')
            ? systemPageFileSchema
            : f.startsWith('prose/')
              ? proseFileSchema
              : null;
    return files(gen)
      .filter((f) => f.endsWith('.json') && (f.startsWith('data/') || f.startsWith('prose/')))
      .map((f) => ({ file: f, schema: schemaOf(f), value: JSON.parse(readFileSync(join(gen, f), 'utf8')) as unknown }));
  };

  it('writes only page data that passes the strict schema the site loads it with', () => {
    const all = generatedFiles();
    // Every kind of file is there: the site's list, each release, its system pages and its prose.
    expect(
      all
        .filter((x) => x.file.startsWith('data/releases/'))
        .map((x) => x.file)
        .sort(),
    ).toEqual(FIXTURE_IDS.map((id) => `data/releases/${id}.json`).sort());
    expect(all.some((x) => x.file === 'data/site.json')).toBe(true);
    expect(all.filter((x) => x.file.startsWith('data/systems/')).length).toBeGreaterThan(0);
    expect(all.filter((x) => x.file.startsWith('prose/')).length).toBeGreaterThanOrEqual(FIXTURE_IDS.length);
    for (const x of all) {
      expect(x.schema, x.file).not.toBeNull();
      const checked = x.schema!.safeParse(x.value);
      expect(checked.success ? [] : checked.error.issues, x.file).toEqual([]);
    }
  });

  it('refuses a field the schema does not know, at the top and deep inside, and a missing one', () => {
    const release = generatedFiles().find((x) => x.file.startsWith('data/releases/'))!;
    const data = release.value as { rungs: { tables: object[] }[] } & Record<string, unknown>;
    const top = releaseDataSchema.safeParse({ ...data, colour: 'red' });
    expect(top.success).toBe(false);
    expect(JSON.stringify(top.error?.issues)).toContain('colour');
    const withTable = data.rungs.find((r) => r.tables.length > 0)!;
    const deepCopy = JSON.parse(JSON.stringify(data)) as typeof data;
    const rung = deepCopy.rungs[data.rungs.indexOf(withTable)]!;
    rung.tables[0] = { ...rung.tables[0], colspan: 2 };
    const deep = releaseDataSchema.safeParse(deepCopy);
    expect(deep.success).toBe(false);
    expect(deep.error?.issues[0]?.path.slice(0, 3)).toEqual(['rungs', data.rungs.indexOf(withTable), 'tables']);
    const { headline: _h, ...noHeadline } = data;
    expect(releaseDataSchema.safeParse(noHeadline).success).toBe(false);
  });

  it('stops the page builder before it writes a file the schema refuses, naming the file and the field', async () => {
    const tmp = await mkdtemp(join(tmpdir(), 'rungbook-contract-'));
    try {
      const layout = genLayout(tmp);
      const site = generatedFiles().find((x) => x.file === 'data/site.json')!.value as Record<string, unknown>;
      const { generated: _g, ...rest } = site;
      await expect(writePageData(layout, 'data/site.json', siteDataSchema, { ...rest, banner: 'x' })).rejects.toThrow(/data\/site\.json.*banner/);
      expect(() => statSync(join(tmp, 'data', 'site.json'))).toThrow();
      await writePageData(layout, 'data/site.json', siteDataSchema, rest);
      expect(readFileSync(join(tmp, 'data', 'site.json'), 'utf8').split('\n')[1]).toBe(`  "generated": ${JSON.stringify(GENERATED_MARK)},`);
    } finally {
      await rm(tmp, { recursive: true, force: true });
    }
  });
});

describe('one contract in site/', () => {
  const siteFiles = files(join(REPO_ROOT, 'site'))
    .map((f) => join(REPO_ROOT, 'site', f))
    .filter((f) => /\.(astro|ts)$/.test(f));

  it('loads the generated collections with the schemas of src/layout/pageSchema.ts, strict all the way down', async () => {
    // site/content.config.ts itself, with Astro's two helpers standing in (they only wrap their argument).
    // (Imported by a computed path: tsc checks site/ with its own configuration, `astro check`.)
    const configPath = '../../site/content.config.ts';
    const { collections } = (await import(/* @vite-ignore */ configPath)) as {
      collections: Record<'releases' | 'site' | 'prose' | 'systems', { schema: unknown }>;
    };
    expect(collections.releases.schema).toBe(releaseDataSchema);
    expect(collections.site.schema).toBe(siteDataSchema);
    expect(collections.prose.schema).toBe(proseFileSchema);
    expect(collections.systems.schema).toBe(systemPageFileSchema);
    // Every object inside them refuses unknown keys.
    const loose: string[] = [];
    const walk = (t: ZodTypeAny, at: string): void => {
      if (t instanceof ZodObject) {
        if (t._def.unknownKeys !== 'strict') loose.push(at);
        for (const [k, v] of Object.entries(t.shape as Record<string, ZodTypeAny>)) walk(v, `${at}.${k}`);
      } else if (t instanceof ZodOptional || t instanceof ZodNullable) walk(t.unwrap() as ZodTypeAny, at);
      else if (t instanceof ZodArray) walk(t.element as ZodTypeAny, `${at}[]`);
      else if (t instanceof ZodRecord) walk(t.valueSchema as ZodTypeAny, `${at}{}`);
    };
    for (const [name, schema] of Object.entries({ releaseDataSchema, siteDataSchema, proseFileSchema, systemPageFileSchema })) walk(schema, name);
    expect(loose).toEqual([]);
  });

  it('casts no page data and writes no route by hand', () => {
    const problems: string[] = [];
    for (const f of siteFiles) {
      const code = readFileSync(f, 'utf8')
        .replace(/\/\*[\s\S]*?\*\//g, '')
        .replace(/^\s*\/\/.*$/gm, '');
      for (const m of code.matchAll(/\bas\s+(?:unknown|[A-Z][A-Za-z]*(?:Data|View|Ref|Link|File)\b|\{)/g))
        problems.push(`${relative(REPO_ROOT, f)}: cast "${m[0]}"`);
      for (const m of code.matchAll(/['`](?:releases|latest|history|figures)\/[^'`]*['`]/g))
        problems.push(`${relative(REPO_ROOT, f)}: path written by hand ${m[0]}`);
    }
    expect(problems).toEqual([]);
  });
});

describe('build settings', () => {
  it('takes given values over the environment over the defaults, with the base path normalised', () => {
    const env = { RUNGBOOK_BASE: 'env/base', RUNGBOOK_SITE: 'https://env.example.org/', RUNGBOOK_METHODS_DIR: '/env/methods' };
    const fromEnv = buildSettings({ releasesDir: '/r', outDir: '/o' }, env);
    expect([fromEnv.base, fromEnv.site, fromEnv.methodsDir]).toEqual(['/env/base/', 'https://env.example.org/', '/env/methods']);
    const given = buildSettings({ releasesDir: '/r', outDir: '/o', base: '/given/', site: 'https://given.example.org/', methodsDir: '/given/methods' }, env);
    expect([given.base, given.site, given.methodsDir]).toEqual(['/given/', 'https://given.example.org/', '/given/methods']);
    const none = buildSettings({ releasesDir: '/r', outDir: '/o' });
    expect([none.base, none.site, none.methodsDir, none.workDir, none.genDir, none.cacheDir]).toEqual([
      '/',
      DEFAULT_SITE,
      join(REPO_ROOT, 'content', 'methods'),
      join(REPO_ROOT, '.build'),
      join(REPO_ROOT, '.build', 'gen'),
      join(REPO_ROOT, '.cache', 'results'),
    ]);
    expect(buildSettings({ releasesDir: '/r', outDir: '/o', cacheDir: null }).cacheDir).toBeNull();
  });

  it('hands the Astro process an environment that gives the same settings back', () => {
    const s = buildSettings({ releasesDir: '/r', outDir: '/site/out', workDir: '/w', methodsDir: '/m', base: 'team/h0', site: 'https://ladder.example.org/' });
    const again = buildSettings({}, settingsEnv(s));
    for (const k of ['outDir', 'genDir', 'astroCacheDir', 'methodsDir', 'base', 'site'] as const) expect(again[k], k).toBe(s[k]);
    expect([s.genDir, s.astroCacheDir]).toEqual(['/w/gen', '/w/astro-cache']);
  });
});
