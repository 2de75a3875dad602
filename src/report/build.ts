/**
 * Building the whole report: calibrate every release (or reuse its cached
 * results.json), write the generated pages and figure files, run Astro, and
 * measure what came out.
 *
 * Reuse, in two layers, so that a rebuild with nothing changed spends its time
 * in Astro alone:
 * - results.json is cached under a key made of the release folder's contents
 *   and the calibration code's hash;
 * - a release's generated files are kept when its results, its notes and the
 *   report code are unchanged (a stamp file records what they were made from).
 *
 * Two builds that share a work folder (two `rungbook build` in one checkout) take
 * turns: the second waits for the first, saying so, then builds its own release set
 * into its own output. Cache entries are written atomically and named by what they
 * were made from, so builds with other work folders may share the cache folder.
 */
import { mkdir, readFile, readdir, rm, stat, writeFile } from 'node:fs/promises';
import { join } from 'node:path';
import { buildLinks, linksFor } from '../diff/links.ts';
import { DIFF_SCHEMA, type DiffReport } from '../diff/types.ts';
import { compareResults } from '../publish/drift.ts';
import { readPublishedRecord, verifyPublishedFolder } from '../publish/record.ts';
import { AnalysisError, InputError } from '../types/issues.ts';
import { RESULTS_SCHEMA, type Results } from '../types/results.ts';
import { buildSite } from './astroBuild.ts';
import { RELEASE_FIGURES } from './figures/index.ts';
import { generateRelease, generateSite, genLayout, generatedJson, type GenLayout, type ReleaseFigure, removeRelease } from './generate.ts';
import { calibrationCodeHash, comparisonCodeHash, hashTree, listFiles, reportCodeHash, sha256 } from './hashing.ts';
import { LOO_SCHEMA, type LeaveOneOut, type LooOutcome } from './leaveOneOut.ts';
import { z } from 'zod';
import { GENERATED_MARK, releaseSummarySchema } from '../layout/pageSchema.ts';
import { REQUIRED_NOTES } from './pageData.ts';
import { RELEASE_ID_PATTERN, releasePagePath } from '../layout/routes.ts';
import { buildSettings, REPO_ROOT, type BuildSettings, type BuildSettingsGiven } from '../layout/settings.ts';
import { systemHistory, type SystemHistory } from './systems.ts';
import { createProgress } from './progress.ts';
import { publishedView } from './published.ts';
import { parseRecoverySummary, RECOVERY_FILE, type RecoverySummary } from '../recover/summary.ts';
import type { PageLink, PublishedView, ReleaseSummary } from './types.ts';
import { acquireLock } from './lock.ts';
import { beginWork, type WorkState } from './workState.ts';
import { readMeasuredRecovery, type MeasuredRecovery } from './measured.ts';

export { REPO_ROOT };

/** The build's settings as given (src/layout/settings.ts; the environment is not read here), and its parts. */
export interface BuildReportOptions extends BuildSettingsGiven {
  releasesDir: string;
  outDir: string;
  progress?: boolean;
  calibrate: (releaseDir: string) => Promise<Results>;
  /**
   * The comparison of a release folder with the folder of its previous release (default: the
   * real one, src/diff compareReleaseDirs); null leaves the comparison pages without content
   * (tests whose releases have no data tables).
   */
  compare?: CompareDirs | null;
  /** Where progress lines go (default stderr). */
  progressStream?: { write(s: string): unknown };
  /** The figures of each release (default RELEASE_FIGURES; tests pass a list with a failing figure). */
  figures?: readonly ReleaseFigure[];
  /**
   * What leaving each system out does to H0, for a release folder (default: the real refits,
   * src/report/leaveOneOut.ts); null leaves it out of the pages (tests whose releases have no data).
   */
  leaveOneOut?: LeaveOneOutDirs | null;
}

/** Leave-one-out of several release folders at once (one outcome per folder, in order). */
export type LeaveOneOutDirs = (dirs: string[]) => Promise<LooOutcome[]>;

/** The real leave-one-out refits, loaded only when a build needs them. */
async function defaultLeaveOneOut(): Promise<LeaveOneOutDirs> {
  const { leaveOneOutDirs } = await import('./leaveOneOut.ts');
  return (dirs) => leaveOneOutDirs(dirs);
}

type LooState = { loo: LeaveOneOut | null; missing: string | null };

/**
 * The leave-one-out of every calibrated release: read from the cache, or refitted, all missing
 * releases together on one pool of worker threads (src/report/leaveOneOut.ts), then cached.
 */
async function leaveOneOutCached(
  calibrated: readonly { dir: string; results: Results }[],
  looFn: LeaveOneOutDirs | null,
  cacheDir: string | null,
  codeHash: string,
  work: WorkState,
  step: (id: string) => void,
): Promise<Map<string, LooState>> {
  const loos = new Map<string, LooState>();
  const todo: { id: string; dir: string; path: string | null }[] = [];
  for (const c of calibrated) {
    const id = c.results.release.id;
    if (looFn === null) loos.set(id, { loo: null, missing: 'The leave-one-out refits were not computed in this build.' });
    else if (c.results.h0 === null) loos.set(id, { loo: null, missing: 'The release does not reach the Hubble flow, so there is no H0 to shift.' });
    else {
      const path =
        cacheDir === null
          ? null
          : join(cacheDir, `loo-${sha256('rungbook.loo-cache/1', codeHash, await reportCodeHash(REPO_ROOT), await hashTree(c.dir))}.json`);
      const hit = path === null ? null : await readCached<LeaveOneOut>(path, LOO_SCHEMA);
      if (hit !== null) loos.set(id, { loo: hit, missing: null });
      else todo.push({ id, dir: c.dir, path });
    }
  }
  if (looFn === null || todo.length === 0) return loos;
  for (const t of todo) step(t.id);
  const outcomes = await looFn(todo.map((t) => t.dir));
  todo.forEach((t, i) => {
    const o = outcomes[i]!;
    if (o.ok) {
      loos.set(t.id, { loo: o.value, missing: null });
      if (t.path !== null) work.later(t.path, `${JSON.stringify(o.value)}\n`);
      return;
    }
    // The release calibrated, so the refits can only meet what the ladder or the reader refuse
    // when the results came from elsewhere (a published record, a test's calibration): the
    // pages say so. Anything else is a defect of ours and stops the build.
    const e = o.error;
    if (!(e instanceof InputError) && !(e instanceof AnalysisError)) {
      throw new ReportBuildError(`leave-one-out refits of release ${t.id} failed: ${messageOf(e)}`, null, { cause: e });
    }
    loos.set(t.id, { loo: null, missing: `The leave-one-out refits could not be run on this release’s folder: ${messageOf(e).split('\n')[0]}` });
  });
  return loos;
}

export type CompareDirs = (dirA: string, dirB: string) => Promise<DiffReport>;

/** The real comparison, loaded only when a build needs it. */
async function defaultCompare(): Promise<CompareDirs> {
  const { compareReleaseDirs } = await import('../diff/compare.ts');
  return (a, b) => compareReleaseDirs(a, b);
}

export interface BuildSummary {
  outDir: string;
  releases: { id: string; dir: string; cached: boolean; regenerated: boolean }[];
  /** Comparisons with the previous release: computed now, or taken from the cache. */
  comparisons: { a: string; b: string; cached: boolean }[];
  pages: number;
  files: number;
  bytes: number;
  largestPage: { path: string; bytes: number } | null;
  timingsMs: { calibrate: number; compare: number; leaveOneOut: number; generate: number; site: number; total: number };
}

export class ReportBuildError extends Error {
  constructor(
    message: string,
    readonly hint: string | null = null,
    options?: { cause?: unknown },
  ) {
    super(hint ? `${message}\n  hint: ${hint}` : message, options);
    this.name = 'ReportBuildError';
  }
}

/** Release folders: direct subfolders holding a release.yaml, sorted by name. */
export async function findReleaseDirs(releasesDir: string): Promise<string[]> {
  let entries;
  try {
    entries = await readdir(releasesDir, { withFileTypes: true });
  } catch {
    throw new ReportBuildError(`releases folder ${releasesDir} cannot be read`, 'pass --releases DIR with the folder that holds one subfolder per release');
  }
  const dirs: string[] = [];
  for (const e of entries) {
    if (!e.isDirectory()) continue;
    const dir = join(releasesDir, e.name);
    try {
      await stat(join(dir, 'release.yaml'));
      dirs.push(dir);
    } catch {
      // not a release folder
    }
  }
  dirs.sort();
  if (dirs.length === 0) throw new ReportBuildError(`no release found in ${releasesDir}`, 'each release is a subfolder with a release.yaml');
  return dirs;
}

async function readIfExists(path: string): Promise<string | null> {
  try {
    return await readFile(path, 'utf8');
  } catch {
    return null;
  }
}

async function checkMethodNotes(methodsDir: string): Promise<void> {
  const missing: string[] = [];
  for (const id of REQUIRED_NOTES) {
    try {
      await stat(join(methodsDir, `${id}.md`));
    } catch {
      missing.push(`${id}.md`);
    }
  }
  if (missing.length > 0) {
    throw new ReportBuildError(
      `method note${missing.length > 1 ? 's' : ''} missing in ${methodsDir}: ${missing.join(', ')}`,
      'every rung page shows its authored method note and cautions; add the note (frontmatter title, rung, sources, cautions) before building',
    );
  }
}

function checkResults(r: Results, dir: string): void {
  if (r === null || typeof r !== 'object' || r.schema !== RESULTS_SCHEMA) {
    throw new ReportBuildError(`results of ${dir} have schema ${JSON.stringify((r as { schema?: unknown })?.schema)}, expected ${RESULTS_SCHEMA}`);
  }
  if (!RELEASE_ID_PATTERN.test(r.release.id)) {
    throw new ReportBuildError(`release id ${JSON.stringify(r.release.id)} (in ${dir}) cannot be used in a URL`, 'use letters, digits, ".", "_" and "-" only');
  }
}

/**
 * A JSON result from the cache folder (file named by the hash of all it was made from) when it
 * is there and readable with the expected schema; else computed. A new entry is written only if
 * the whole build succeeds (a failed build leaves the cache as it was).
 */
/** A cache entry of the given schema, or null (missing, unreadable or of another schema: compute again). */
async function readCached<T extends { schema: string }>(path: string, schema: string): Promise<T | null> {
  const hit = await readIfExists(path);
  if (hit === null) return null;
  try {
    const value = JSON.parse(hit) as T;
    return value.schema === schema ? value : null;
  } catch {
    return null;
  }
}

async function cachedJson<T extends { schema: string }>(
  cacheDir: string | null,
  file: () => Promise<string>,
  schema: string,
  compute: () => Promise<T>,
  work: WorkState,
): Promise<{ value: T; cached: boolean }> {
  if (cacheDir === null) return { value: await compute(), cached: false };
  const path = join(cacheDir, await file());
  const hit = await readCached<T>(path, schema);
  if (hit !== null) return { value: hit, cached: true };
  const value = await compute();
  work.later(path, `${JSON.stringify(value)}\n`);
  return { value, cached: false };
}

async function calibrateCached(
  dir: string,
  calibrate: BuildReportOptions['calibrate'],
  cacheDir: string | null,
  codeHash: string,
  work: WorkState,
): Promise<{ results: Results; cached: boolean }> {
  const file = async () => `${sha256('rungbook.results-cache/1', codeHash, await hashTree(dir))}.json`;
  const { value, cached } = await cachedJson(cacheDir, file, RESULTS_SCHEMA, () => calibrate(dir), work);
  return { results: value, cached };
}

async function compareCached(
  dirA: string,
  dirB: string,
  compare: CompareDirs,
  cacheDir: string | null,
  codeHash: string,
  work: WorkState,
): Promise<{ report: DiffReport; cached: boolean }> {
  const file = async () => `compare-${sha256('rungbook.compare-cache/1', codeHash, await hashTree(dirA), await hashTree(dirB))}.json`;
  const { value, cached } = await cachedJson(cacheDir, file, DIFF_SCHEMA, () => compare(dirA, dirB), work);
  return { report: value, cached };
}

/** The stamp file of a release's generated files: what they were made from, and the release's entry for the home page. */
const STAMP_SCHEMA = z.object({ generated: z.literal(GENERATED_MARK), stamp: z.string(), summary: releaseSummarySchema }).strict();

/** Keep a release's generated files when what they were made from is unchanged. */
async function generateReleaseCached(
  layout: GenLayout,
  results: Results,
  notes: string | null,
  previousBuilt: boolean,
  published: PublishedView | null,
  reportHash: string,
  figures: readonly ReleaseFigure[],
  comparison: DiffReport | null,
  next: PageLink[],
  drill: {
    leaveOneOut: LeaveOneOut | null;
    looMissing: string | null;
    systemHistory: SystemHistory;
    releasesBuilt: string[];
    measuredRecovery: MeasuredRecovery | null;
  },
  recovery: RecoverySummary | null = null,
): Promise<{ summary: ReleaseSummary; regenerated: boolean }> {
  const id = results.release.id;
  const stampFile = join(layout.root, 'stamps', `${id}.json`);
  const stamp = sha256(
    JSON.stringify(results),
    notes ?? '\0no notes',
    String(previousBuilt),
    reportHash,
    JSON.stringify(published),
    figures.map((f) => f.id).join(','),
    JSON.stringify(comparison),
    JSON.stringify(next),
    JSON.stringify(recovery),
    JSON.stringify(drill),
  );
  const old = await readIfExists(stampFile);
  if (old !== null) {
    try {
      // A stamp of another shape (older code, a damaged file) means: regenerate.
      const parsed = STAMP_SCHEMA.safeParse(JSON.parse(old));
      const dataFile = join(layout.dataDir, 'releases', `${id}.json`);
      if (parsed.success && parsed.data.stamp === stamp && (await readIfExists(dataFile)) !== null) return { summary: parsed.data.summary, regenerated: false };
    } catch {
      // regenerate
    }
  }
  await rm(stampFile, { force: true });
  const summary = await generateRelease(layout, { results, notes, previousBuilt, published, comparison, next, recovery, ...drill }, figures);
  await mkdir(join(layout.root, 'stamps'), { recursive: true });
  await writeFile(stampFile, generatedJson({ stamp, summary }));
  return { summary, regenerated: true };
}

/** Remove generated files of releases that are no longer in the report. */
async function pruneReleases(layout: GenLayout, keep: Set<string>): Promise<void> {
  const stampsDir = join(layout.root, 'stamps');
  let stamps: string[];
  try {
    stamps = await readdir(stampsDir);
  } catch {
    return;
  }
  for (const f of stamps) {
    const id = f.replace(/\.json$/, '');
    if (!keep.has(id)) {
      await removeRelease(layout, id);
      await rm(join(stampsDir, f), { force: true });
    }
  }
}

/**
 * Checks on a finished site before it is published. rehype-katex does not stop
 * the build on a formula it cannot typeset (it shows the source in red), so a
 * page holding such an error is rejected here, naming the page and the formula.
 */
export async function verifySite(dir: string): Promise<void> {
  const problems: string[] = [];
  for (const f of (await listFiles(dir)).filter((x) => x.endsWith('.html'))) {
    const text = await readFile(join(dir, f), 'utf8');
    const m = /class="katex-error"[^>]*title="([^"]*)"/.exec(text) ?? (text.includes('katex-error') ? ['', '(no message)'] : null);
    if (m)
      problems.push(
        `${f}: ${m[1]!
          .replace(/&#x27;|&#39;/g, "'")
          .replace(/&quot;/g, '"')
          .slice(0, 200)}`,
      );
  }
  if (problems.length > 0) {
    throw new ReportBuildError(
      `math that KaTeX cannot typeset on ${problems.length} page(s):\n  ${problems.slice(0, 10).join('\n  ')}`,
      'fix the formula in the method note (content/methods) named by the page',
    );
  }
}

/** Pages, files, total bytes and the largest page of a built site. */
export async function measureSite(outDir: string): Promise<Pick<BuildSummary, 'pages' | 'files' | 'bytes' | 'largestPage'>> {
  const files = await listFiles(outDir);
  let bytes = 0;
  let pages = 0;
  let largestPage: BuildSummary['largestPage'] = null;
  for (const f of files) {
    const size = (await stat(join(outDir, f))).size;
    bytes += size;
    if (f.endsWith('.html')) {
      pages += 1;
      if (largestPage === null || size > largestPage.bytes) largestPage = { path: f, bytes: size };
    }
  }
  return { pages, files: files.length, bytes, largestPage };
}

/**
 * Astro 5 writes its content store (data-store.json in its cache folder) 500 ms after the
 * last change, on a timer that can fire after the build returned
 * (astro/dist/content/mutable-data-store.js, SAVE_DEBOUNCE_MS). Three times that is waited
 * for after a failed site build, before the cache folder is restored.
 */
const ASTRO_STORE_SETTLE_MS = 1500;

const messageOf = (e: unknown): string => (e instanceof Error ? e.message : String(e));

/**
 * A published release (src/publish): refuse it when its files changed since
 * publication; otherwise the pages show the published results, with a notice
 * listing what a recomputation with the current code moves.
 */
function publishedResults(dir: string, recomputed: Results): { results: Results; published: PublishedView | null } {
  const read = readPublishedRecord(dir);
  if (read === null) return { results: recomputed, published: null };
  if ('issue' in read) throw new ReportBuildError(`release ${dir}: ${read.issue.message}`, read.issue.hint ?? null, { cause: new InputError([read.issue]) });
  const record = read.record;
  checkResults(record.results, dir);
  if (record.results.release.id !== recomputed.release.id) {
    throw new ReportBuildError(
      `release ${dir}: published.json records release ${JSON.stringify(record.results.release.id)}, but the folder holds release ${JSON.stringify(recomputed.release.id)}`,
      'published.json belongs to the folder it was written in; restore it from version control',
    );
  }
  return { results: record.results, published: publishedView(record, compareResults(record.results, recomputed)) };
}

/** What every stage of a build shares. */
interface BuildContext {
  opts: BuildReportOptions;
  settings: BuildSettings;
  layout: GenLayout;
  progress: ReturnType<typeof createProgress>;
  work: WorkState;
  /** Hash of the calibration code (part of every cache key). */
  codeHash: string;
}

type Calibrated = { dir: string; results: Results; cached: boolean; published: PublishedView | null };

export async function buildReport(opts: BuildReportOptions): Promise<BuildSummary> {
  const t0 = performance.now();
  // The options are the settings as given (the command line has already read the environment).
  const settings = buildSettings(opts);
  const progress = createProgress(opts.progress === true, opts.progressStream);
  const layout = genLayout(settings.genDir);

  await checkMethodNotes(settings.methodsDir);
  const dirs = await findReleaseDirs(settings.releasesDir);

  // One build at a time in a work folder: the generated files and Astro's cache in it are this build's alone.
  const notice = opts.progressStream ?? process.stderr;
  const unlock = await acquireLock(join(settings.workDir, 'build.lock'), {
    onWait: (pid) =>
      notice.write(`rungbook build: another build${Number.isInteger(pid) ? ` (process ${pid})` : ''} is using ${settings.workDir}; waiting for it to finish\n`),
  });
  try {
    // Every cache moves forward only with a successful build (src/report/workState.ts).
    const work = await beginWork([layout.root, settings.astroCacheDir]);
    let astroStarted = false;
    try {
      const ctx: BuildContext = { opts, settings, layout, progress, work, codeHash: await calibrationCodeHash(REPO_ROOT) };
      const summary = await buildWithin(ctx, dirs, t0, () => (astroStarted = true));
      await work.commit();
      return summary;
    } catch (e) {
      // Astro saves its content store on a timer after it returns; let that write land before
      // the cache folder is put back, or it would overwrite the restored store.
      if (astroStarted) await new Promise((ok) => setTimeout(ok, ASTRO_STORE_SETTLE_MS));
      await work.rollback();
      throw e;
    }
  } finally {
    await unlock();
  }
}

/** The stages of a build, in order, each timed. */
async function buildWithin(ctx: BuildContext, dirs: readonly string[], t0: number, astroStarts: () => void): Promise<BuildSummary> {
  const calibrated = await calibrateAll(ctx, dirs);
  const t1 = performance.now();
  const { comparisons, compared } = await compareAll(ctx, calibrated);
  const tc = performance.now();
  // What each system does to H0: the release refitted without it (cached like the results).
  const looFn = ctx.opts.leaveOneOut === null ? null : (ctx.opts.leaveOneOut ?? (await defaultLeaveOneOut()));
  const loos = await leaveOneOutCached(calibrated, looFn, ctx.settings.cacheDir, ctx.codeHash, ctx.work, (id) =>
    ctx.progress.step(`leaving each system of ${id} out`),
  );
  const tl = performance.now();
  const releases = await generatePages(ctx, calibrated, comparisons, loos);
  const t2 = performance.now();
  astroStarts();
  await siteWithAstro(ctx);
  const t3 = performance.now();
  const measured = await measureSite(ctx.settings.outDir);
  ctx.progress.step(`done: ${measured.pages} pages, ${(measured.bytes / 1e6).toFixed(1)} MB in ${ctx.settings.outDir}`);
  return {
    outDir: ctx.settings.outDir,
    releases,
    comparisons: compared,
    ...measured,
    timingsMs: { calibrate: t1 - t0, compare: tc - t1, leaveOneOut: tl - tc, generate: t2 - tl, site: t3 - t2, total: t3 - t0 },
  };
}

/** 1. Calibrate every release (or reuse its cached results); a published release shows its published results. */
async function calibrateAll(ctx: BuildContext, dirs: readonly string[]): Promise<Calibrated[]> {
  const calibrated: Calibrated[] = [];
  for (const [i, dir] of dirs.entries()) {
    ctx.progress.step(`calibrating ${i + 1}/${dirs.length}: ${dir}`);
    const frozen = verifyPublishedFolder(dir);
    if (frozen.length > 0) {
      throw new ReportBuildError(
        `release ${dir} is published and ${frozen.length === 1 ? 'a file has' : `${frozen.length} files have`} changed since: ${frozen.map((f) => f.file).join(', ')}`,
        'a published release is frozen: restore its files as published, or put new data in a new release folder',
        { cause: new InputError(frozen) },
      );
    }
    let out;
    try {
      out = await calibrateCached(dir, ctx.opts.calibrate, ctx.settings.cacheDir, ctx.codeHash, ctx.work);
    } catch (e) {
      throw new ReportBuildError(`calibration of ${dir} failed: ${messageOf(e)}`, null, { cause: e });
    }
    checkResults(out.results, dir);
    calibrated.push({ dir, cached: out.cached, ...publishedResults(dir, out.results) });
    ctx.progress.step(`  release ${out.results.release.id}${out.cached ? ' (cached results.json)' : ''}`);
  }
  const ids = calibrated.map((c) => c.results.release.id);
  const dup = ids.find((id, i) => ids.indexOf(id) !== i);
  if (dup !== undefined) throw new ReportBuildError(`release id ${dup} appears in more than one folder`, 'release ids must be unique; each id names its pages');
  return calibrated;
}

/** 2. Each release against its previous one, when both are in this report; the links point into this report. */
async function compareAll(
  ctx: BuildContext,
  calibrated: readonly Calibrated[],
): Promise<{ comparisons: Map<string, DiffReport>; compared: BuildSummary['comparisons'] }> {
  const comparisons = new Map<string, DiffReport>();
  const compared: BuildSummary['comparisons'] = [];
  const compare = ctx.opts.compare === null ? null : (ctx.opts.compare ?? (await defaultCompare()));
  if (compare === null) return { comparisons, compared };
  const dirOf = new Map(calibrated.map((c) => [c.results.release.id, c.dir]));
  const compareHash = sha256(ctx.codeHash, await comparisonCodeHash(REPO_ROOT));
  for (const c of calibrated) {
    const b = c.results.release.id;
    const a = c.results.release.previous;
    const dirA = a === null ? undefined : dirOf.get(a);
    if (a === null || dirA === undefined) continue;
    ctx.progress.step(`comparing ${b} with ${a}`);
    let out;
    try {
      out = await compareCached(dirA, c.dir, compare, ctx.settings.cacheDir, compareHash, ctx.work);
    } catch (e) {
      throw new ReportBuildError(`comparison of release ${b} with ${a} failed: ${messageOf(e)}`, null, { cause: e });
    }
    // Links for this report's address (the cached comparison carries none).
    comparisons.set(b, { ...out.report, links: linksFor(out.report, buildLinks(ctx.settings.site, ctx.settings.base, a, b, a)) });
    compared.push({ a, b, cached: out.cached });
    if (out.cached) ctx.progress.step('  (cached comparison)');
  }
  return { comparisons, compared };
}

/** 3. Generated pages, figures and downloads of every release (kept when unchanged), then the home page's. */
async function generatePages(
  ctx: BuildContext,
  calibrated: readonly Calibrated[],
  comparisons: ReadonlyMap<string, DiffReport>,
  loos: ReadonlyMap<string, LooState>,
): Promise<BuildSummary['releases']> {
  const { layout, progress } = ctx;
  const ids = calibrated.map((c) => c.results.release.id);
  const history = systemHistory(calibrated.map((c) => c.results));
  const reportHash = await reportCodeHash(REPO_ROOT);
  const idSet = new Set(ids);
  const nextOf = (id: string): PageLink[] =>
    calibrated
      .filter((c) => c.results.release.previous === id && comparisons.has(c.results.release.id))
      .map((c) => ({ path: releasePagePath(c.results.release.id, 'compare'), title: `Release ${c.results.release.id} compared with ${id}` }));
  const releases: BuildSummary['releases'] = [];
  const summaries: ReleaseSummary[] = [];
  let current = 'the list of releases';
  try {
    await pruneReleases(layout, idSet);
    // the recovery test's measured table, shown with the global-fit note of every release
    const measuredRecovery = await readMeasuredRecovery(ctx.settings.methodsDir);
    for (const c of calibrated) {
      const r = c.results;
      current = `release ${r.release.id}`;
      progress.step(`figures and pages of release ${r.release.id}`);
      const notes = await readIfExists(join(c.dir, 'notes.md'));
      const previousBuilt = r.release.previous !== null && idSet.has(r.release.previous);
      // A recovery summary beside the release (rungbook recover) gives it a recovery page.
      const recoveryFile = join(c.dir, RECOVERY_FILE);
      const recoveryText = await readIfExists(recoveryFile);
      const recovery = recoveryText === null ? null : parseRecoverySummary(recoveryFile, recoveryText);
      const l = loos.get(r.release.id)!;
      // Only the history of this release's systems enters its pages (and its stamp).
      const own = Object.fromEntries(r.systems.map((s) => [s.id, history[s.id] ?? []]));
      const drill = { leaveOneOut: l.loo, looMissing: l.missing, systemHistory: own, releasesBuilt: ids, measuredRecovery };
      const g = await generateReleaseCached(
        layout,
        r,
        notes,
        previousBuilt,
        c.published,
        reportHash,
        ctx.opts.figures ?? RELEASE_FIGURES,
        comparisons.get(r.release.id) ?? null,
        nextOf(r.release.id),
        drill,
        recovery,
      );
      if (!g.regenerated) progress.step('  unchanged, kept');
      summaries.push(g.summary);
      releases.push({ id: r.release.id, dir: c.dir, cached: c.cached, regenerated: g.regenerated });
    }
    current = 'the home page';
    await generateSite(
      layout,
      calibrated.map((c) => c.results),
      summaries,
    );
  } catch (e) {
    throw new ReportBuildError(`figures and pages of ${current} failed: ${messageOf(e)}`, null, { cause: e });
  }
  return releases;
}

/** 4. The static site, built by Astro from the generated files and checked before it replaces the previous one. */
async function siteWithAstro(ctx: BuildContext): Promise<void> {
  ctx.progress.step('building the site with Astro');
  try {
    await buildSite(ctx.settings, async (dir) => {
      try {
        await verifySite(dir);
      } catch (e) {
        throw e instanceof ReportBuildError ? new ReportBuildError(`site check failed: ${e.message}`, null, { cause: e }) : e;
      }
    });
  } catch (e) {
    if (e instanceof ReportBuildError) throw e;
    throw new ReportBuildError(`site build (Astro) failed: ${messageOf(e)}`, null, { cause: e });
  }
}
