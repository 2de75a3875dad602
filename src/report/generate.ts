/**
 * Writing the generated files of the report into the build folder:
 *
 *   <gen>/public/releases/<id>/figures/<figure>.svg|png|csv   figure files (stable URLs)
 *   <gen>/public/releases/<id>/downloads/results.json, <table>.csv|ecsv
 *   <gen>/public/figures/h0-history.svg|png|csv                 report-wide figure
 *   <gen>/data/releases/<id>.json                               data of a release's pages
 *   <gen>/data/site.json                                        list of releases, parameter history
 *   <gen>/data/systems/<id>/<system>.json                       data of a release's system pages
 *   <gen>/prose/<id>/summary.json, notes.json                   generated prose: sanitised HTML as data (prose.ts)
 *
 * The public paths are the report's routes (src/layout/routes.ts); the JSON files the site
 * loads are checked against their schemas before they are written (writePageData).
 * Every text file starts with the generated mark (JSON: as its first key; CSV and
 * ECSV downloads excepted, where a comment line would break the format's readers).
 */
import { mkdir, rm, writeFile } from 'node:fs/promises';
import { dirname, join } from 'node:path';
import type { DiffReport } from '../diff/types.ts';
import { writeCsv, writeEcsv } from '../io/writeEcsv.ts';
import { comparisonFigures } from './compare/figures.ts';
import { comparisonView } from './compare/view.ts';
import { RESULTS_SCHEMA, type Results } from '../types/results.ts';
import { h0History, RELEASE_FIGURES, type FigureSpec } from './figures/index.ts';
import { leaveOneOutFigure } from './figures/leaveOneOut.ts';
import { systemCmd, systemPlResiduals, systemSnCalibrators } from './figures/systemFigures.ts';
import { parameterHistory } from './history.ts';
import { inputFormatTables } from './guide.ts';
import type { MeasuredRecovery } from './measured.ts';
import type { LeaveOneOut } from './leaveOneOut.ts';
import { type SystemHistory, systemPages, systemsIndex } from './systems.ts';
import { headline, releaseData } from './pageData.ts';
import { svgToPng } from './png.ts';
import { notesHtml, summaryHtml } from './prose.ts';
import { resultTables } from './resultTables.ts';
import { recoveryPage, recoveryView } from './recovery.ts';
import { recoveryPulls } from './figures/recoveryPulls.ts';
import type { RecoverySummary } from '../recover/summary.ts';
import type { ZodType } from 'zod';
import {
  downloadsFolder,
  figureFilePath,
  figurePagePath,
  releaseFiguresFolder,
  releasePagePath,
  releasePath,
  siteFiguresFolder,
  systemFigureLink,
  systemFiguresFolder,
} from '../layout/routes.ts';
import { proseFileSchema, releaseDataSchema, siteDataSchema, systemPageFileSchema } from '../layout/pageSchema.ts';
import {
  type ComparisonView,
  type DownloadLink,
  type FigureRef,
  GENERATED_MARK,
  type PageLink,
  type PublishedView,
  type ReleaseData,
  type ReleaseSummary,
  type SiteData,
  type SystemsIndexView,
} from './types.ts';

/** One figure of a release: its stable id and the function that draws it (null: its rung has no data). */
export type ReleaseFigure = (typeof RELEASE_FIGURES)[number];

/** Above this size a figure is loaded with <img> instead of being inlined (keeps pages light). */
export const INLINE_MAX_BYTES = 150_000;

export interface GenLayout {
  root: string;
  publicDir: string;
  dataDir: string;
  proseDir: string;
}

export function genLayout(genDir: string): GenLayout {
  return { root: genDir, publicDir: join(genDir, 'public'), dataDir: join(genDir, 'data'), proseDir: join(genDir, 'prose') };
}

async function put(path: string, content: string | Uint8Array): Promise<number> {
  await mkdir(dirname(path), { recursive: true });
  await writeFile(path, content);
  return typeof content === 'string' ? Buffer.byteLength(content) : content.byteLength;
}

/** JSON with the generated mark as its first key, two-space indented, newline at the end. */
export function generatedJson(value: object): string {
  return `${JSON.stringify({ generated: GENERATED_MARK, ...value }, null, 2)}\n`;
}

/** Write one figure's SVG, PNG and CSV under `folder` (site-relative) and return its reference. */
export async function writeFigure(layout: GenLayout, folder: string, spec: FigureSpec): Promise<FigureRef> {
  const file = (ext: 'svg' | 'png' | 'csv') => figureFilePath(folder, spec.id, ext);
  const svgText = `<!-- ${GENERATED_MARK} -->\n${spec.svg}\n`;
  await put(join(layout.publicDir, file('svg')), svgText);
  await put(join(layout.publicDir, file('png')), svgToPng(spec.svg));
  await put(join(layout.publicDir, file('csv')), writeCsv(spec.csv.columns, spec.csv.rows));
  return {
    id: spec.id,
    title: spec.title,
    caption: spec.caption,
    alt: spec.alt,
    width: spec.width,
    height: spec.height,
    svg: file('svg'),
    png: file('png'),
    csv: file('csv'),
    page: figurePagePath(folder, spec.id),
    inline: Buffer.byteLength(spec.svg) <= INLINE_MAX_BYTES,
    thinned: spec.thinned,
    blinded: spec.blinded,
  };
}

/**
 * Write a JSON file the site reads, after checking it against its schema (src/layout/pageSchema.ts):
 * what is checked is the text as written, read back, which is what the site's content collections
 * will load with the same schema. A field the schema does not know stops the build here, naming
 * the file and the field, instead of reaching a page unchecked.
 */
export async function writePageData(layout: GenLayout, file: string, schema: ZodType, value: object): Promise<void> {
  const text = generatedJson(value);
  const checked = schema.safeParse(JSON.parse(text));
  if (!checked.success) {
    const issues = checked.error.issues.slice(0, 5).map((i) => `${i.path.join('.') || '(top)'}: ${i.message}`);
    throw new Error(`page data ${file} does not match its schema (src/layout/pageSchema.ts): ${issues.join('; ')}`);
  }
  await put(join(layout.root, file), text);
}

export interface ReleaseGenInput {
  results: Results;
  /** Authored notes.md of the release, or null. */
  notes: string | null;
  previousBuilt: boolean;
  /** The publication record's notice, when the release is published (its results are then the published ones). */
  published?: PublishedView | null;
  /** The comparison with the previous release (links already set for this report), or null. */
  comparison?: DiffReport | null;
  /** Comparison pages of later releases that compare themselves with this one. */
  next?: PageLink[];
  /** recovery.json beside the release (rungbook recover), or null: then the release has a recovery page. */
  recovery?: RecoverySummary | null;
  /** What leaving each system out does to H0 (src/report/leaveOneOut.ts), or null. */
  leaveOneOut?: LeaveOneOut | null;
  /** Why the leave-one-out is missing, when it is. */
  looMissing?: string | null;
  /** Every system's distance in every release of the report. */
  systemHistory?: SystemHistory;
  /** Ids of the releases in this report. */
  releasesBuilt?: readonly string[];
  /** The recovery test's measured table (src/report/measured.ts), or null. */
  measuredRecovery?: MeasuredRecovery | null;
}

/**
 * The release's own figures, the leave-one-out figure, then the comparison's figures (which sit
 * beside the release's own), in this order; and the comparison page's content.
 */
async function releaseFigures(
  layout: GenLayout,
  input: ReleaseGenInput,
  figureList: readonly ReleaseFigure[],
): Promise<{ figures: Record<string, FigureRef>; comparison: ComparisonView | null }> {
  const r = input.results;
  const folder = releaseFiguresFolder(r.release.id);
  const figures: Record<string, FigureRef> = {};
  for (const f of figureList) {
    const spec = f.render(r);
    if (spec === null) continue;
    if (spec.id !== f.id) throw new Error(`figure ${f.id} returned id ${spec.id}`);
    figures[f.id] = await writeFigure(layout, folder, spec);
  }
  // What each system does to H0: the figure on the overview.
  const loo = input.leaveOneOut ?? null;
  if (loo) {
    const spec = leaveOneOutFigure(r, loo);
    if (spec) figures[spec.id] = await writeFigure(layout, folder, spec);
  }
  if (!input.comparison) return { figures, comparison: null };
  const ids: string[] = [];
  for (const spec of comparisonFigures(input.comparison)) {
    if (figures[spec.id]) throw new Error(`comparison figure ${spec.id} has the id of a release figure`);
    figures[spec.id] = await writeFigure(layout, folder, spec);
    ids.push(spec.id);
  }
  return { figures, comparison: comparisonView(input.comparison, ids) };
}

/** Downloads: results.json and every result table as CSV and ECSV; and where each table's files are. */
async function writeDownloads(
  layout: GenLayout,
  r: Results,
): Promise<{ downloads: DownloadLink[]; tableDownload: (name: string) => { csv: string; ecsv: string } }> {
  const id = r.release.id;
  const dl = downloadsFolder(id);
  const downloads: DownloadLink[] = [];
  const resultsJson = `${JSON.stringify(r, null, 2)}\n`;
  downloads.push({
    label: 'results.json (everything on these pages)',
    path: `${dl}results.json`,
    format: 'JSON',
    bytes: await put(join(layout.publicDir, dl, 'results.json'), resultsJson),
  });
  const tableFiles = new Map<string, { csv: string; ecsv: string }>();
  for (const t of resultTables(r)) {
    const csvPath = `${dl}${t.name}.csv`;
    const ecsvPath = `${dl}${t.name}.ecsv`;
    const meta = { release: id, table: t.name, title: t.title, source: `${RESULTS_SCHEMA} of release ${id}`, note: GENERATED_MARK };
    downloads.push({
      label: `${t.title} (${t.rows.length} rows)`,
      path: csvPath,
      format: 'CSV',
      bytes: await put(join(layout.publicDir, csvPath), writeCsv(t.columns, t.rows)),
    });
    downloads.push({
      label: `${t.title} (${t.rows.length} rows)`,
      path: ecsvPath,
      format: 'ECSV',
      bytes: await put(join(layout.publicDir, ecsvPath), writeEcsv(t.columns, t.rows, meta)),
    });
    tableFiles.set(t.name, { csv: csvPath, ecsv: ecsvPath });
  }
  const tableDownload = (name: string) => {
    const f = tableFiles.get(name);
    if (!f) throw new Error(`no result table named ${name}`);
    return f;
  };
  return { downloads, tableDownload };
}

/** Prose: HTML from a sanitised tree, stored as data and inserted by the page as it is (never compiled). Returns the prose ids. */
async function writeProse(layout: GenLayout, r: Results, notesMd: string | null): Promise<{ summaryProse: string; notesProse: string | null }> {
  const id = r.release.id;
  const summaryProse = `${id}/summary`;
  await writePageData(layout, join('prose', id, 'summary.json'), proseFileSchema, { html: summaryHtml(r) });
  const notes = notesMd === null ? null : notesHtml(notesMd);
  if (notes === null) return { summaryProse, notesProse: null };
  await writePageData(layout, join('prose', id, 'notes.json'), proseFileSchema, { html: notes });
  return { summaryProse, notesProse: `${id}/notes` };
}

/** A page per system, with its own figures beside it; returns the systems index. */
async function writeSystemPages(layout: GenLayout, input: ReleaseGenInput, looFigure: string | null): Promise<SystemsIndexView> {
  const r = input.results;
  const id = r.release.id;
  const loo = input.leaveOneOut ?? null;
  const sysInput = {
    results: r,
    loo,
    looMissing: input.looMissing ?? (loo ? null : 'The leave-one-out refits were not computed in this build.'),
    history: input.systemHistory ?? {},
    releasesBuilt: new Set(input.releasesBuilt ?? [id]),
  };
  for (const page of systemPages(sysInput)) {
    // Its own figures, beside its page (stable files; the figure's "page" is its place on the system page).
    for (const draw of [systemPlResiduals, systemSnCalibrators, systemCmd]) {
      const spec = draw(r, page.system);
      if (spec === null) continue;
      const ref = await writeFigure(layout, systemFiguresFolder(id, page.system), spec);
      page.figures.push({ ...ref, page: systemFigureLink(page.path, spec.id) });
    }
    await writePageData(layout, join('data', 'systems', id, `${page.segment}.json`), systemPageFileSchema, page);
  }
  return systemsIndex(sysInput, looFigure);
}

/** The recovery page, when the release has a recovery summary beside it: its figure, its content, its place in the navigation. */
async function addRecovery(layout: GenLayout, data: ReleaseData, recovery: RecoverySummary, r: Results): Promise<void> {
  const id = r.release.id;
  const spec = recoveryPulls(recovery);
  const ids: string[] = [];
  if (spec) {
    data.figures[spec.id] = await writeFigure(layout, releaseFiguresFolder(id), spec);
    ids.push(spec.id);
  }
  data.recovery = recoveryView(recovery, r, ids);
  const figuresPage = data.pages.findIndex((p) => p.path === releasePagePath(id, 'figures'));
  data.pages.splice(figuresPage < 0 ? data.pages.length : figuresPage, 0, recoveryPage(id));
}

/** Generate every file of one release; returns its entry for the home page. */
export async function generateRelease(
  layout: GenLayout,
  input: ReleaseGenInput,
  figureList: readonly ReleaseFigure[] = RELEASE_FIGURES,
): Promise<ReleaseSummary> {
  const r = input.results;
  const id = r.release.id;
  await removeRelease(layout, id);
  const { figures, comparison } = await releaseFigures(layout, input, figureList);
  const { downloads, tableDownload } = await writeDownloads(layout, r);
  const { summaryProse, notesProse } = await writeProse(layout, r, input.notes);
  const systems = await writeSystemPages(layout, input, figures['leave-one-out'] ? 'leave-one-out' : null);
  const data = releaseData({
    systems,
    results: r,
    figures,
    downloads,
    tableDownload,
    summaryProse,
    notesProse,
    previousBuilt: input.previousBuilt,
    published: input.published ?? null,
    comparison,
    next: input.next ?? [],
    measuredRecovery: input.measuredRecovery ?? null,
  });
  if (input.recovery) await addRecovery(layout, data, input.recovery, r);
  const { generated: _mark, ...rest } = data;
  await writePageData(layout, join('data', 'releases', `${id}.json`), releaseDataSchema, rest);
  return { id, title: r.release.title, date: r.release.date, blinded: r.blinded, reached: r.reached, headline: headline(r), path: releasePath(id) };
}

/** Remove every generated file of a release (before regenerating it, or when it left the report). */
export async function removeRelease(layout: GenLayout, id: string): Promise<void> {
  await rm(join(layout.publicDir, 'releases', id), { recursive: true, force: true });
  await rm(join(layout.proseDir, id), { recursive: true, force: true });
  await rm(join(layout.dataDir, 'releases', `${id}.json`), { force: true });
  await rm(join(layout.dataDir, 'systems', id), { recursive: true, force: true });
}

/** Newest first: by date, then by id (descending), so the order never depends on file-system order. */
export function newestFirst<T extends { date: string; id: string }>(xs: readonly T[]): T[] {
  return [...xs].sort((a, b) => b.date.localeCompare(a.date) || b.id.localeCompare(a.id));
}

/** Home-page data and the report-wide H0 history figure. */
export async function generateSite(layout: GenLayout, all: readonly Results[], summaries: readonly ReleaseSummary[]): Promise<SiteData> {
  await rm(join(layout.publicDir, 'figures'), { recursive: true, force: true });
  const spec = h0History(all);
  const history = spec ? await writeFigure(layout, siteFiguresFolder(), spec) : null;
  const releases = newestFirst(summaries);
  const site: SiteData = {
    generated: GENERATED_MARK,
    releases,
    latest: releases[0]?.id ?? null,
    history,
    parameterHistory: parameterHistory(all),
    inputFormat: inputFormatTables(),
  };
  const { generated: _mark, ...rest } = site;
  await writePageData(layout, join('data', 'site.json'), siteDataSchema, rest);
  return site;
}
