/**
 * Shared pieces of every figure: the server-side document Plot draws into, the
 * figure's output record, a legend drawn inside the SVG (so the PNG carries it
 * too), the BLINDED stamp, and deterministic thinning of dense scatters.
 *
 * Figures are black and grey only; categories differ by symbol shape, fill
 * (solid / open) and dash pattern, so they survive greyscale printing.
 */
import * as Plot from '@observablehq/plot';
import { JSDOM } from 'jsdom';
import type { EcsvColumn, TableRow } from '../../io/writeEcsv.ts';
import { finishSvg, svgSize } from '../svg.ts';

export const FIGURE_WIDTH = 640;
/** Font size of tick labels and legends, px. */
export const FONT_SIZE = 11;
/** Above this many points a scatter is thinned for display (all points stay in the CSV). */
export const MAX_POINTS = 800;

export const INK = '#111';
export const GREY = '#777';
export const LIGHT = '#d6d6d6';
export const PALE = '#ececec';

let sharedDocument: Document | null = null;
/** One jsdom document per process: Plot only needs createElementNS and friends. */
export function serverDocument(): Document {
  if (sharedDocument === null) sharedDocument = new JSDOM('<!doctype html><html><body></body></html>').window.document;
  return sharedDocument;
}

/** What a figure function returns: the SVG text plus everything the pages and files need. */
export interface FigureSpec {
  id: string;
  title: string;
  caption: string;
  alt: string;
  svg: string;
  width: number;
  height: number;
  csv: { columns: EcsvColumn[]; rows: TableRow[] };
  thinned: string | null;
  blinded: boolean;
}

export interface RenderOptions {
  id: string;
  /** Short accessible name of the whole SVG. */
  label: string;
  height: number;
  marks: Plot.Markish[];
  x?: Plot.ScaleOptions;
  y?: Plot.ScaleOptions;
  /** Facet scales (small multiples), when the marks have fx / fy channels. */
  fx?: Plot.ScaleOptions;
  fy?: Plot.ScaleOptions;
  marginLeft?: number;
  marginRight?: number;
  marginTop?: number;
  marginBottom?: number;
  width?: number;
  /**
   * Points a reader can hover (src/report/hover.ts, site/components/Figure.astro): the marks with
   * this Plot `className`, and for each the row of the figure's CSV that each of its symbols
   * draws, in drawing order. Written as `data-row` on each symbol.
   */
  hover?: { className: string; rows: number[] }[];
}

/** Class of the hoverable marks' groups; the site's script looks for `data-row` inside them. */
export const HOVER_CLASS = 'hover-points';

/** Render marks with Plot into the server document and finish the SVG (ids, ARIA, font). */
export function renderSvg(o: RenderOptions): { svg: string; width: number; height: number } {
  const el = Plot.plot({
    document: serverDocument(),
    width: o.width ?? FIGURE_WIDTH,
    height: o.height,
    marginLeft: o.marginLeft ?? 60,
    marginRight: o.marginRight ?? 20,
    marginTop: o.marginTop ?? 20,
    marginBottom: o.marginBottom ?? 44,
    ariaLabel: o.label,
    x: { labelAnchor: 'center', labelArrow: 'none', ...o.x },
    y: { labelAnchor: 'center', labelArrow: 'none', ...o.y },
    ...(o.fx ? { fx: o.fx } : {}),
    ...(o.fy ? { fy: o.fy } : {}),
    marks: o.marks,
  }) as unknown as Element;
  if (el.tagName.toLowerCase() !== 'svg') {
    throw new Error(`figure ${o.id}: Plot returned <${el.tagName.toLowerCase()}>, expected <svg> (no title, caption or legend options)`);
  }
  for (const h of o.hover ?? []) {
    const groups = Array.from(el.querySelectorAll(`g.${h.className}`));
    const symbols = groups.flatMap((g) => Array.from(g.children));
    if (symbols.length !== h.rows.length) throw new Error(`figure ${o.id}: ${symbols.length} symbols drawn for ${h.rows.length} hover rows (${h.className})`);
    symbols.forEach((s, i) => s.setAttribute('data-row', String(h.rows[i])));
    for (const g of groups) g.setAttribute('class', HOVER_CLASS);
  }
  if (o.hover?.length) el.setAttribute('data-hover', 'rows');
  const svg = finishSvg(el as SVGSVGElement, { idPrefix: `fig-${o.id}`, label: o.label, fontSizePx: FONT_SIZE });
  return { svg, ...svgSize(svg) };
}

// ---------------------------------------------------------------------------
// Legend inside the top margin.

export type LegendItem =
  | { label: string; kind: 'dot'; symbol: Plot.SymbolType; filled: boolean }
  | { label: string; kind: 'line'; dash?: string; width?: number }
  | { label: string; kind: 'band'; fill: string };

/** A horizontal dash as a Plot symbol, so that a line style can sit in a legend. */
const DASH_SYMBOL = {
  draw(context: { moveTo(x: number, y: number): void; lineTo(x: number, y: number): void }, size: number) {
    const half = Math.max(9, Math.sqrt(size));
    context.moveTo(-half, 0);
    context.lineTo(half, 0);
  },
};
const BAND_SYMBOL = {
  draw(context: { moveTo(x: number, y: number): void; lineTo(x: number, y: number): void; closePath(): void }, _size: number) {
    context.moveTo(-9, -5);
    context.lineTo(9, -5);
    context.lineTo(9, 5);
    context.lineTo(-9, 5);
    context.closePath();
  },
};

/** Approximate advance of DejaVu Sans at FONT_SIZE px: 0.58 em per character (slightly generous, to avoid overlap). */
function textWidth(s: string): number {
  return s.length * FONT_SIZE * 0.58;
}

const LEGEND_ROW = 16;

/**
 * Legend items laid out left to right in rows above the frame. Returns the marks and
 * the top margin needed to hold them.
 */
export function legend(items: LegendItem[], width = FIGURE_WIDTH, marginLeft = 60): { marks: Plot.Markish[]; marginTop: number } {
  const marks: Plot.Markish[] = [];
  const usable = width - marginLeft - 20;
  let x = 0;
  let row = 0;
  const placed: { item: LegendItem; x: number; row: number }[] = [];
  for (const item of items) {
    const w = 24 + textWidth(item.label) + 12;
    if (x > 0 && x + w > usable) {
      row += 1;
      x = 0;
    }
    placed.push({ item, x, row });
    x += w;
  }
  const rows = items.length === 0 ? 0 : row + 1;
  const marginTop = 14 + rows * LEGEND_ROW;
  for (const p of placed) {
    const dy = -marginTop + 10 + p.row * LEGEND_ROW;
    const at = { frameAnchor: 'top-left' as const, dx: p.x + 10, dy };
    if (p.item.kind === 'dot') {
      marks.push(
        Plot.dot([0], {
          ...at,
          symbol: p.item.symbol,
          r: 4,
          stroke: INK,
          fill: p.item.filled ? INK : 'white',
          strokeWidth: 1.2,
        }),
      );
    } else if (p.item.kind === 'line') {
      marks.push(
        Plot.dot([0], {
          ...at,
          symbol: DASH_SYMBOL as unknown as Plot.SymbolType,
          r: 4,
          stroke: INK,
          fill: 'none',
          strokeWidth: p.item.width ?? 1.5,
          strokeDasharray: p.item.dash,
        }),
      );
    } else {
      marks.push(Plot.dot([0], { ...at, symbol: BAND_SYMBOL as unknown as Plot.SymbolType, r: 4, fill: p.item.fill, stroke: GREY, strokeWidth: 0.5 }));
    }
    marks.push(Plot.text([p.item.label], { frameAnchor: 'top-left', dx: p.x + 24, dy: dy - 6, textAnchor: 'start', lineAnchor: 'top', fontSize: FONT_SIZE }));
  }
  return { marks, marginTop };
}

/** A visible "BLINDED" stamp in the top-right corner of the frame. */
export function blindedStamp(): Plot.Markish {
  return Plot.text(['BLINDED'], {
    frameAnchor: 'top-right',
    dx: -6,
    dy: 6,
    lineAnchor: 'top',
    textAnchor: 'end',
    fontSize: 14,
    fontWeight: 'bold',
    fill: INK,
    stroke: 'white',
    strokeWidth: 4,
    paintOrder: 'stroke',
  });
}

/**
 * Keep every flagged row and a regular subsample of the others, so that at most
 * `max` points are drawn. Deterministic (every k-th row in input order).
 * Cost: O(n).
 */
export function thin<T>(rows: readonly T[], flagged: (r: T) => boolean, max = MAX_POINTS): { rows: T[]; note: string | null } {
  if (rows.length <= max) return { rows: [...rows], note: null };
  const keep = rows.filter(flagged);
  const rest = rows.filter((r) => !flagged(r));
  const room = Math.max(0, max - keep.length);
  const step = rest.length / Math.max(1, room);
  const picked: T[] = [];
  for (let i = 0; i < room && Math.floor(i * step) < rest.length; i++) picked.push(rest[Math.floor(i * step)]!);
  const shown = keep.length + picked.length;
  return {
    rows: [...keep, ...picked],
    note: `${shown} of ${rows.length} points drawn (every flagged point and a regular subsample of the rest); all points are in the CSV.`,
  };
}

/** Round a number for drawing (data coordinates keep 5 significant digits). */
export function r5(x: number): number {
  if (!Number.isFinite(x) || x === 0) return x;
  return Number(x.toPrecision(5));
}

/** A column of a figure CSV. */
export function col(name: string, datatype: EcsvColumn['datatype'], unit?: string, description?: string): EcsvColumn {
  return { name, datatype, ...(unit ? { unit } : {}), ...(description ? { description } : {}) };
}

/** Limit a list in a text alternative: "a, b, c and 4 more". */
export function listText(items: string[], max = 12): string {
  if (items.length <= max) return items.join('; ');
  return `${items.slice(0, max).join('; ')}; and ${items.length - max} more (see the CSV)`;
}

/** Long names are shortened on an axis (the caption, tables and CSV keep them whole). */
export function clip(s: string, max = 22): string {
  return s.length <= max ? s : `${s.slice(0, max - 1)}…`;
}
