/**
 * Every URL of the report, in one place: the page builder (src/report), the comparison's links
 * (src/diff/links.ts) and the pages' navigation (site/) all take their paths from here, and
 * tests/report/routes.test.ts proves that each route named here has its page under site/pages
 * and that each page there is named here.
 *
 * Paths are relative to the site root, without a leading slash; a folder (a page: the site is
 * built with trailingSlash 'always' and one index.html per folder) ends with "/". The base path
 * the report is served under is added by `withBase`, the one normalisation of a base path.
 * The names of systems and objects inside paths come from src/layout/anchors.ts.
 */
import { objectAnchor, systemSegment } from './anchors.ts';

/** A release id that can name a folder of the report (letters, digits, ".", "_", "-"). */
export const RELEASE_ID_PATTERN = /^[A-Za-z0-9][A-Za-z0-9._-]*$/;

/**
 * Every page of the report as a template in Astro's form: "[name]" is a parameter, and the page
 * file is site/pages/<template>index.astro. The route functions below fill these templates.
 */
export const PAGE_ROUTES = {
  home: '',
  releases: 'releases/',
  latest: 'latest/',
  history: 'history/',
  inputFormat: 'guide/input-format/',
  siteFigure: 'figures/[figure]/',
  release: 'releases/[id]/',
  rung: 'releases/[id]/[rung]/',
  globalFit: 'releases/[id]/global-fit/',
  errorBudget: 'releases/[id]/error-budget/',
  variants: 'releases/[id]/variants/',
  systems: 'releases/[id]/systems/',
  system: 'releases/[id]/systems/[system]/',
  data: 'releases/[id]/data/',
  compare: 'releases/[id]/compare/',
  recovery: 'releases/[id]/recovery/',
  figures: 'releases/[id]/figures/',
  figure: 'releases/[id]/figures/[figure]/',
} as const;
export type PageRoute = keyof typeof PAGE_ROUTES;

/** Pages of a release that take no parameter other than the release (a release's navigation). */
export type ReleasePage = 'globalFit' | 'errorBudget' | 'variants' | 'systems' | 'data' | 'compare' | 'recovery' | 'figures';

/**
 * Fill a template; every parameter must be given. Each value names one folder, so it is
 * percent-encoded (a no-op for the release ids the report accepts, RELEASE_ID_PATTERN, and for the
 * names of src/layout/anchors.ts; `rungbook diff` may meet other release ids).
 */
export function fillRoute(template: string, params: Readonly<Record<string, string>>): string {
  return template.replace(/\[([a-z]+)\]/g, (_, name: string) => {
    const v = params[name];
    if (v === undefined || v === '') throw new Error(`route ${template}: parameter ${name} is missing`);
    return encodeURIComponent(v);
  });
}

// --- pages of the whole report ----------------------------------------------------------------

export const homePath = (): string => PAGE_ROUTES.home;
export const releasesPath = (): string => PAGE_ROUTES.releases;
export const latestPath = (): string => PAGE_ROUTES.latest;
export const historyPath = (): string => PAGE_ROUTES.history;
export const inputFormatPath = (): string => PAGE_ROUTES.inputFormat;
/** Folder of the report-wide figures' files (figures/<figure>.svg|png|csv); each has its page figures/<figure>/. */
export const siteFiguresFolder = (): string => 'figures/';

// --- pages and files of a release -------------------------------------------------------------

/** A release's folder, or a path inside it (`rest`: a page folder or a file under it). */
export function releasePath(id: string, rest = ''): string {
  return `${fillRoute(PAGE_ROUTES.release, { id })}${rest}`;
}

/** A page of a release that takes no other parameter. */
export function releasePagePath(id: string, page: ReleasePage): string {
  return fillRoute(PAGE_ROUTES[page], { id });
}

/** A rung's page of a release (`slug`: its URL segment, e.g. "main-sequence"). */
export function rungPath(id: string, slug: string): string {
  return fillRoute(PAGE_ROUTES.rung, { id, rung: slug });
}

/** Folder of a release's figure files (<figure>.svg|png|csv); it is also the release's figures page. */
export const releaseFiguresFolder = (id: string): string => releasePagePath(id, 'figures');

/** Folder of a release's downloads (results.json, result tables as CSV and ECSV). */
export const downloadsFolder = (id: string): string => releasePath(id, 'downloads/');

/** The page of a figure whose files lie in `folder` (a figures folder above). */
export function figurePagePath(folder: string, figure: string): string {
  return `${folder}${figure}/`;
}

/** A figure's file in a figures folder (`ext`: svg, png or csv). */
export function figureFilePath(folder: string, figure: string, ext: 'svg' | 'png' | 'csv'): string {
  return `${folder}${figure}.${ext}`;
}

/** Site-relative path of a system's page. */
export function systemPagePath(release: string, system: string): string {
  return fillRoute(PAGE_ROUTES.system, { id: release, system: systemSegment(system) });
}

/** Folder of a system's own figure files (beside its page). */
export const systemFiguresFolder = (release: string, system: string): string => `${systemPagePath(release, system)}figures/`;

/** Site-relative link to an object's row on its system's page. */
export function objectLink(release: string, system: string, objectId: string): string {
  return `${systemPagePath(release, system)}#${objectAnchor(objectId)}`;
}

/** Where on its system's page a system figure is shown. */
export function systemFigureLink(systemPage: string, figure: string): string {
  return `${systemPage}#figure-${figure}`;
}

// --- the base path and absolute URLs ------------------------------------------------------------

/** "/a/b/" form of a base path, as Astro expects with trailingSlash 'always' ("/" for none). */
export function normaliseBase(base: string | undefined): string {
  const trimmed = (base ?? '/').trim().replace(/^\/+|\/+$/g, '');
  return trimmed === '' ? '/' : `/${trimmed}/`;
}

/** A site-relative path under the base path: what a page of the report links to. */
export function withBase(base: string | undefined, path: string): string {
  return `${normaliseBase(base)}${path.replace(/^\/+/, '')}`;
}

/** Absolute URL of a site-relative path, for the report published at `site` under `base`. */
export function absoluteUrl(site: string | URL, base: string | undefined, path: string): string {
  return new URL(withBase(base, path), site).href;
}
