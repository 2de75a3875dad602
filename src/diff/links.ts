/**
 * Absolute links of a comparison, for the message to paste: the comparison page of release b
 * and its figures, built from the site origin and base path the report is published under
 * (the same --site/--base, RUNGBOOK_SITE/RUNGBOOK_BASE as `rungbook build`). The paths are the
 * report's own (src/layout/routes.ts): its comparison page and its figures' PNG files.
 */
import { absoluteUrl, figureFilePath, releaseFiguresFolder, releasePagePath } from '../layout/routes.ts';
import type { DiffLinks, DiffReport } from './types.ts';

/** Figures of the comparison page; files releases/<b>/figures/compare-<id>.png. */
export const COMPARE_FIGURES = ['attribution', 'pl-relation', 'hubble-diagram', 'ladder-diagram'] as const;
export type CompareFigure = (typeof COMPARE_FIGURES)[number];

/** Figure id (file name without extension) of a comparison figure in the report. */
export function compareFigureId(figure: CompareFigure): string {
  return `compare-${figure}`;
}

export function buildLinks(site: string, base: string | undefined, a: string, b: string, previousOfB: string | null): DiffLinks {
  const at = (path: string) => absoluteUrl(site, base, path);
  return {
    page: at(releasePagePath(b, 'compare')),
    figures: Object.fromEntries(COMPARE_FIGURES.map((f) => [f, at(figureFilePath(releaseFiguresFolder(b), compareFigureId(f), 'png'))])),
    matches_report: previousOfB === a,
  };
}

/**
 * The comparison figures the report draws for this comparison: the attribution waterfall when
 * there is an attribution, an overlay when either side has a point in it. Links name only these.
 */
export function figuresDrawn(r: Pick<DiffReport, 'attribution' | 'overlays'>): CompareFigure[] {
  return COMPARE_FIGURES.filter((f) =>
    f === 'attribution' ? r.attribution.length > 0 : r.overlays.some((o) => o.id === f && (o.a.points.length > 0 || o.b.points.length > 0)),
  );
}

/** The links, keeping only the figures the report draws. */
export function linksFor(r: Pick<DiffReport, 'attribution' | 'overlays'>, links: DiffLinks): DiffLinks {
  const drawn = new Set<string>(figuresDrawn(r));
  return { ...links, figures: Object.fromEntries(Object.entries(links.figures).filter(([k]) => drawn.has(k))) };
}
