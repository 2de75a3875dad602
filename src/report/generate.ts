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
import type { LeaveOneOut } from './leaveOneOut.ts';
import { type SystemHistory, systemPages, systemsIndex } from './systems.ts';
import { headline, releaseData, releasePath } from './pageData.ts';
import { svgToPng } from './png.ts';
import { notesHtml, summaryHtml } from './prose.ts';
import { resultTables } from './resultTables.ts';
import { recoveryPage, recoveryView } from './recovery.ts';
import { recoveryPulls } from './figures/recoveryPulls.ts';
import type { RecoverySummary } from '../recover/summary.ts';
import { type ComparisonView, type DownloadLink, type FigureRef, GENERATED_MARK, type PageLink, type PublishedView, type ReleaseSummary, type SiteData } from './types.ts';

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
  const base = `${folder}${spec.id}`;
  const svgText = `<!-- ${GENERATED_MARK} -->\n${spec.svg}\n`;
  await put(join(layout.publicDir, `${base}.svg`), svgText);
  await put(join(layout.publicDir, `${base}.png`), svgToPng(spec.svg));
  await put(join(layout.publicDir, `${base}.csv`), writeCsv(spec.csv.columns, spec.csv.rows));
  return {
    id: spec.id,
    title: spec.title,
    caption: spec.caption,
    alt: spec.alt,
    width: spec.width,
    height: spec.height,
    svg: `${base}.svg`,
    png: `${base}.png`,
    csv: `${base}.csv`,
    page: `${folder}${spec.id}/`,
    inline: Buffer.byteLength(spec.svg) <= INLINE_MAX_BYTES,
    thinned: spec.thinned,
    blinded: spec.blinded,
  };
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
}

/** Generate every file of one release; returns its entry for the home page. */
export async function generateRelease(layout: GenLayout, input: ReleaseGenInput, figureList: readonly ReleaseFigure[] = RELEASE_FIGURES): Promise<ReleaseSummary> {
  const r = input.results;
  const id = r.release.id;
  await removeRelease(layout, id);

  // Figures.
  const figures: Record<string, FigureRef> = {};
  for (const f of figureList) {
    const spec = f.render(r);
    if (spec === null) continue;
    if (spec.id !== f.id) throw new Error(`figure ${f.id} returned id ${spec.id}`);
    figures[f.id] = await writeFigure(layout, releasePath(id, 'figures/'), spec);
  }

  // What each system does to H0: the figure on the overview.
  const loo = input.leaveOneOut ?? null;
  if (loo) {
    const spec = leaveOneOutFigure(r, loo);
    if (spec) figures[spec.id] = await writeFigure(layout, releasePath(id, 'figures/'), spec);
  }

  // The comparison with the previous release: its figures sit beside the release's own.
  let comparison: ComparisonView | null = null;
  if (input.comparison) {
    const ids: string[] = [];
    for (const spec of comparisonFigures(input.comparison)) {
      if (figures[spec.id]) throw new Error(`comparison figure ${spec.id} has the id of a release figure`);
      figures[spec.id] = await writeFigure(layout, releasePath(id, 'figures/'), spec);
      ids.push(spec.id);
    }
    comparison = comparisonView(input.comparison, ids);
  }

  // Downloads: results.json and every result table as CSV and ECSV.
  const dl = releasePath(id, 'downloads/');
  const downloads: DownloadLink[] = [];
  const resultsJson = `${JSON.stringify(r, null, 2)}\n`;
  downloads.push({ label: 'results.json (everything on these pages)', path: `${dl}results.json`, format: 'JSON', bytes: await put(join(layout.publicDir, dl, 'results.json'), resultsJson) });
  const tableFiles = new Map<string, { csv: string; ecsv: string }>();
  for (const t of resultTables(r)) {
    const csvPath = `${dl}${t.name}.csv`;
    const ecsvPath = `${dl}${t.name}.ecsv`;
    const meta = { release: id, table: t.name, title: t.title, source: `${RESULTS_SCHEMA} of release ${id}`, note: GENERATED_MARK };
    downloads.push({ label: `${t.title} (${t.rows.length} rows)`, path: csvPath, format: 'CSV', bytes: await put(join(layout.publicDir, csvPath), writeCsv(t.columns, t.rows)) });
    downloads.push({ label: `${t.title} (${t.rows.length} rows)`, path: ecsvPath, format: 'ECSV', bytes: await put(join(layout.publicDir, ecsvPath), writeEcsv(t.columns, t.rows, meta)) });
    tableFiles.set(t.name, { csv: csvPath, ecsv: ecsvPath });
  }
  const tableDownload = (name: string) => {
    const f = tableFiles.get(name);
    if (!f) throw new Error(`no result table named ${name}`);
    return f;
  };

  // Prose: HTML from a sanitised tree, stored as data and inserted by the page as it is (never compiled).
  const summaryProse = `${id}/summary`;
  await put(join(layout.proseDir, id, 'summary.json'), generatedJson({ html: summaryHtml(r) }));
  let notesProse: string | null = null;
  const notes = input.notes === null ? null : notesHtml(input.notes);
  if (notes !== null) {
    notesProse = `${id}/notes`;
    await put(join(layout.proseDir, id, 'notes.json'), generatedJson({ html: notes }));
  }

  // A page per system.
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
      const ref = await writeFigure(layout, `${page.path}figures/`, spec);
      page.figures.push({ ...ref, page: `${page.path}#figure-${spec.id}` });
    }
    await put(join(layout.dataDir, 'systems', id, `${page.segment}.json`), generatedJson(page));
  }
  const systems = systemsIndex(sysInput, figures['leave-one-out'] ? 'leave-one-out' : null);

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
  });
  // The recovery page, when the release has a recovery summary beside it.
  if (input.recovery) {
    const spec = recoveryPulls(input.recovery);
    const ids: string[] = [];
    if (spec) {
      figures[spec.id] = await writeFigure(layout, releasePath(id, 'figures/'), spec);
      ids.push(spec.id);
    }
    data.recovery = recoveryView(input.recovery, r, ids);
    const figuresPage = data.pages.findIndex((p) => p.path === releasePath(id, 'figures/'));
    data.pages.splice(figuresPage < 0 ? data.pages.length : figuresPage, 0, recoveryPage(id));
  }
  const { generated: _mark, ...rest } = data;
  await put(join(layout.dataDir, 'releases', `${id}.json`), generatedJson(rest));
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
  const history = spec ? await writeFigure(layout, 'figures/', spec) : null;
  const releases = newestFirst(summaries);
  const site: SiteData = { generated: GENERATED_MARK, releases, latest: releases[0]?.id ?? null, history, parameterHistory: parameterHistory(all) };
  const { generated: _mark, ...rest } = site;
  await put(join(layout.dataDir, 'site.json'), generatedJson(rest));
  return site;
}
