/**
 * Absolute links of a comparison, for the message to paste: the comparison page of release b
 * and its figures, built from the site origin and base path the report is published under
 * (the same --site/--base, RUNGBOOK_SITE/RUNGBOOK_BASE as `rungbook build`). Page paths follow
 * the report's layout: releases/<id>/compare/ and releases/<id>/figures/<figure>.png.
 */
import type { DiffLinks, DiffReport } from './types.ts';

/** Figures of the comparison page; files releases/<b>/figures/compare-<id>.png. */
export const COMPARE_FIGURES = ['attribution', 'pl-relation', 'hubble-diagram', 'ladder-diagram'] as const;
export type CompareFigure = (typeof COMPARE_FIGURES)[number];

/** Figure id (file name without extension) of a comparison figure in the report. */
export function compareFigureId(figure: CompareFigure): string {
  return `compare-${figure}`;
}

/** "/a/b/" form of a base path (as the report's build normalises it). */
export function normaliseBasePath(base: string | undefined): string {
  const trimmed = (base ?? '/').trim().replace(/^\/+|\/+$/g, '');
  return trimmed === '' ? '/' : `/${trimmed}/`;
}

export function buildLinks(site: string, base: string | undefined, a: string, b: string, previousOfB: string | null): DiffLinks {
  const root = normaliseBasePath(base);
  const at = (path: string) => new URL(`${root}${path}`, site).href;
  const rel = `releases/${encodeURIComponent(b)}/`;
  return {
    page: at(`${rel}compare/`),
    figures: Object.fromEntries(COMPARE_FIGURES.map((f) => [f, at(`${rel}figures/${compareFigureId(f)}.png`)])),
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
