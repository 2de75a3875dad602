/**
 * The figures of a comparison page (ids from src/diff/links.ts, files
 * releases/<b>/figures/compare-<figure>.svg|png|csv): the attribution of the H0
 * shift as a waterfall, and the three overlays with both releases in one frame.
 *
 * Greyscale as every figure of the report: release a is grey and open, release b
 * black; a changed row is drawn with a larger, distinct symbol on each side
 * (a: grey cross, b: black triangle) so that it can be found without colour.
 */
import * as Plot from '@observablehq/plot';
import { compareFigureId, figuresDrawn, type CompareFigure } from '../../diff/links.ts';
import type { DiffReport, Overlay, OverlayPoint } from '../../diff/types.ts';
import { distanceTickText, fixed, int } from '../format.ts';
import { blindedStamp, clip, col, FIGURE_WIDTH, type FigureSpec, GREY, INK, legend, type LegendItem, LIGHT, r5, renderSvg, thin } from '../figures/plotting.ts';
import { GROUP_TITLE, signedText } from './words.ts';

/** All drawn figures of a comparison, in the page's order. */
export function comparisonFigures(r: DiffReport): FigureSpec[] {
  const out: FigureSpec[] = [];
  for (const f of figuresDrawn(r)) {
    const spec =
      f === 'attribution'
        ? waterfall(r)
        : overlayFigure(
            r,
            r.overlays.find((o) => o.id === f)!,
            f,
          );
    if (spec) out.push(spec);
  }
  return out;
}

// ---------------------------------------------------------------------------
// Waterfall of the attribution.

interface Step {
  label: string;
  start: number;
  end: number;
  delta: number;
  kind: 'group' | 'total';
}

/** The bars: each differing group from where the previous one ended, then the total from the origin. */
function waterfallSteps(r: DiffReport, origin: number, total: number): Step[] {
  const steps: Step[] = [];
  let at = origin;
  for (const e of r.attribution.filter((x) => x.differs)) {
    steps.push({ label: GROUP_TITLE[e.group], start: at, end: at + e.delta_h0, delta: e.delta_h0, kind: 'group' });
    at += e.delta_h0;
  }
  steps.push({ label: 'Total shift', start: origin, end: origin + total, delta: total, kind: 'total' });
  return steps;
}

type WaterfallRow = { y: string; x1: number; x2: number; up: boolean; total: boolean; text: string; tx: number };

/** Bars, value labels, the origin's line, the sigma bar under the total, the stamp and the legend. */
function waterfallMarks(
  rows: WaterfallRow[],
  origin: number,
  total: number,
  sigma: number | null,
  blinded: boolean,
): { marks: Plot.Markish[]; marginTop: number } {
  const items: LegendItem[] = [
    { label: 'raises H₀', kind: 'band', fill: INK },
    { label: 'lowers H₀', kind: 'band', fill: 'white' },
    { label: 'total shift', kind: 'band', fill: LIGHT },
  ];
  if (sigma !== null && sigma > 0) items.push({ label: '± σ of the difference', kind: 'line', width: 1.5 });
  const leg = legend(items, FIGURE_WIDTH, 170);
  const marks: Plot.Markish[] = [
    Plot.gridX({ stroke: GREY, strokeOpacity: 0.2 }),
    Plot.ruleX([origin], { stroke: INK, strokeDasharray: '4,3' }),
    Plot.barX(
      rows.filter((d) => !d.total),
      { y: 'y', x1: 'x1', x2: 'x2', fill: (d: WaterfallRow) => (d.up ? INK : 'white'), stroke: INK, strokeWidth: 1, insetTop: 6, insetBottom: 6 },
    ),
    Plot.barX(
      rows.filter((d) => d.total),
      { y: 'y', x1: 'x1', x2: 'x2', fill: LIGHT, stroke: INK, strokeWidth: 1, insetTop: 4, insetBottom: 4 },
    ),
    Plot.text(rows, { y: 'y', x: 'tx', text: 'text', dx: 6, textAnchor: 'start', fill: INK }),
  ];
  if (sigma !== null && sigma > 0) {
    const end = origin + total;
    marks.push(
      Plot.ruleY([{ y: 'Total shift', x1: r5(end - sigma), x2: r5(end + sigma) }], { y: 'y', x1: 'x1', x2: 'x2', stroke: INK, strokeWidth: 1.5, dy: 12 }),
    );
  }
  if (blinded) marks.push(blindedStamp());
  marks.push(...leg.marks);
  return { marks, marginTop: leg.marginTop };
}

/** The attribution as data (one row per input group, as in the comparison's JSON). */
function attributionCsv(r: DiffReport, unit: string): FigureSpec['csv'] {
  return {
    columns: [
      col('group', 'string', undefined, 'input group (table of the release, or analysis for the choices in release.yaml)'),
      col('differs', 'bool', undefined, 'the group differs between the releases'),
      col('delta_h0', 'float64', unit, 'Shapley contribution to the H0 shift'),
      col('fraction', 'float64', '', 'share of the total shift'),
      col('rows_sum', 'float64', unit, 'sum of the per-row estimates of this group'),
    ],
    rows: r.attribution.map((e) => ({ group: e.group, differs: e.differs, delta_h0: e.delta_h0, fraction: e.fraction, rows_sum: e.rows_sum })),
  };
}

function waterfall(r: DiffReport): FigureSpec | null {
  const detail = r.attribution_detail;
  if (!detail || r.attribution.length === 0) return null;
  const id = compareFigureId('attribution');
  // Start at H0 of release a when values may be shown; at 0 (a shift) when they are hidden.
  const h0a = r.h0 && r.h0.a !== null ? r.h0.a : null;
  const origin = h0a ?? 0;
  const steps = waterfallSteps(r, origin, detail.total);
  const labels = steps.map((s) => s.label);
  const sigma = r.h0?.sigma_diff ?? null;
  const blinded = r.blinding.a || r.blinding.b;
  const unit = 'km/s/Mpc';
  const xLabel = h0a !== null ? `H₀ (${unit})` : `Shift of H₀ from release ${r.a} (${unit}${blinded ? ', blinded scale' : ''})`;

  const rows: WaterfallRow[] = steps.map((s) => ({
    y: s.label,
    x1: r5(Math.min(s.start, s.end)),
    x2: r5(Math.max(s.start, s.end)),
    up: s.delta >= 0,
    total: s.kind === 'total',
    text: signedText(s.delta, 2),
    tx: r5(Math.max(s.start, s.end)),
  }));
  const { marks, marginTop } = waterfallMarks(rows, origin, detail.total, sigma, blinded);
  // Room on the right for the value labels.
  const xs = rows.flatMap((d) => [d.x1, d.x2]).concat(sigma ? [origin + detail.total - sigma, origin + detail.total + sigma] : []);
  const lo = Math.min(...xs);
  const hi = Math.max(...xs);
  const pad = Math.max((hi - lo) * 0.25, 0.05);
  const out = renderSvg({
    id,
    label: `Attribution of the H0 shift between releases ${r.a} and ${r.b}`,
    height: 60 + 40 * rows.length + marginTop,
    marginTop,
    marginLeft: 170,
    marginRight: 30,
    y: { label: null, domain: labels, tickFormat: (s: string) => clip(s, 26) },
    x: { label: xLabel, domain: [lo - pad * 0.3, hi + pad], nice: false },
    marks,
  });
  const totalText = `${signedText(detail.total, 2)} ${unit}`;
  return {
    id,
    title: 'Contributions to the H₀ shift by input group',
    caption:
      `Each input group's share of the change of H₀ from release ${r.a} to release ${r.b}, stacked from ${h0a !== null ? `H₀ of ${r.a} (dashed line)` : 'zero (dashed line)'}: ` +
      'filled bars raise H₀, open bars lower it; the grey bar is the total shift' +
      (sigma !== null && sigma > 0 ? ', with the uncertainty of the difference as a bar under it.' : '.') +
      ' The shares are Shapley values: they add up exactly to the total and do not depend on the order in which the groups are swapped.',
    alt:
      `Total shift ${totalText}${sigma !== null ? ` (σ of the difference ${fixed(sigma, 2)})` : ''}; ` +
      steps
        .filter((s) => s.kind === 'group')
        .map((s) => `${s.label} ${signedText(s.delta, 3)}`)
        .join('; ') +
      (blinded ? '. Blinded: shifts are in blinded km/s/Mpc (the true shifts times the common hidden factor).' : '.'),
    ...out,
    csv: attributionCsv(r, unit),
    thinned: null,
    blinded,
  };
}

// ---------------------------------------------------------------------------
// Overlays.

interface Drawn {
  side: 'a' | 'b';
  p: OverlayPoint;
}

const AXIS: Record<Overlay['id'], { x: string; y: string }> = {
  'pl-relation': { x: 'log₁₀ period (days)', y: 'Absolute Wesenheit magnitude (mag)' },
  'hubble-diagram': { x: 'Redshift z (log scale)', y: 'Distance modulus μ (mag)' },
  'ladder-diagram': { x: 'Distance (log scale)', y: '' },
};

type OverlayRow = { x: number; y: number; side: 'a' | 'b'; changed: boolean; rejected: boolean };

/**
 * Points of both releases (a: open grey, b: black; a changed row a grey cross on a's side and an
 * open triangle on b's), each side's fit line, the stamp and the legend.
 */
function overlayMarks(r: DiffReport, o: Overlay, rows: OverlayRow[], ladder: boolean, marginLeft: number): { marks: Plot.Markish[]; marginTop: number } {
  const marks: Plot.Markish[] = [Plot.gridY({ stroke: GREY, strokeOpacity: 0.15 })];
  if (ladder) marks.push(Plot.gridX({ stroke: GREY, strokeOpacity: 0.15 }));
  const pick = (side: 'a' | 'b', changed: boolean) => rows.filter((d) => d.side === side && d.changed === changed);
  marks.push(
    Plot.dot(pick('a', false), { x: 'x', y: 'y', r: 2.6, fill: 'white', stroke: GREY, strokeWidth: 0.8 }),
    Plot.dot(pick('b', false), { x: 'x', y: 'y', r: 1.6, fill: INK, stroke: 'none' }),
    Plot.dot(pick('a', true), { x: 'x', y: 'y', r: 4, symbol: 'times', stroke: GREY, strokeWidth: 1.4 }),
    Plot.dot(pick('b', true), { x: 'x', y: 'y', r: 4, symbol: 'triangle', fill: 'white', stroke: INK, strokeWidth: 1.3 }),
  );
  const items: LegendItem[] = [
    { label: `release ${r.a}`, kind: 'dot', symbol: 'circle', filled: false },
    { label: `release ${r.b}`, kind: 'dot', symbol: 'circle', filled: true },
  ];
  if (pick('a', true).length) items.push({ label: `changed or removed (${r.a})`, kind: 'dot', symbol: 'times', filled: false });
  if (pick('b', true).length) items.push({ label: `changed or added (${r.b})`, kind: 'dot', symbol: 'triangle', filled: false });
  for (const [side, model] of [
    ['a', o.a.model],
    ['b', o.b.model],
  ] as const) {
    if (model.length < 2) continue;
    marks.push(
      Plot.line(
        model.map((m) => ({ x: r5(m.x), y: r5(m.y) })),
        { x: 'x', y: 'y', stroke: side === 'a' ? GREY : INK, strokeWidth: side === 'a' ? 2 : 1.5, strokeDasharray: side === 'a' ? '6,4' : undefined },
      ),
    );
    items.push({ label: `fit ${side === 'a' ? r.a : r.b}`, kind: 'line', width: side === 'a' ? 2 : 1.5, dash: side === 'a' ? '6,4' : undefined });
  }
  if (o.blinded) marks.push(blindedStamp());
  const leg = legend(items, FIGURE_WIDTH, marginLeft);
  marks.push(...leg.marks);
  return { marks, marginTop: leg.marginTop };
}

/** Every point of both releases as data (not thinned): the ladder by rung and distance, the others by x and y. */
function overlayCsv(r: DiffReport, o: Overlay, all: Drawn[], cats: string[]): FigureSpec['csv'] {
  if (o.id === 'ladder-diagram') {
    return {
      columns: [
        col('release', 'string'),
        col('id', 'string', undefined, 'system, or Hubble-flow supernova'),
        col('rung', 'string'),
        col('distance', 'float64', 'Mpc'),
        col('distance_err', 'float64', 'Mpc', 'first order from the error of the distance modulus'),
        col('status', 'string', undefined, 'same, or corrected when any input row of the system changed; added or removed for supernovae'),
      ],
      rows: all.map((d) => ({
        release: d.side === 'a' ? r.a : r.b,
        id: d.p.id,
        rung: cats[d.p.x] ?? String(d.p.x),
        distance: d.p.y,
        distance_err: d.p.y_err,
        status: d.p.status,
      })),
    };
  }
  return {
    columns: [
      col('release', 'string'),
      col('id', 'string', undefined, 'row id (star or supernova)'),
      col('system', 'string'),
      col(o.id === 'pl-relation' ? 'log_period' : 'z', 'float64', '', o.x_label),
      col(o.id === 'pl-relation' ? 'abs_w' : 'mu', 'float64', 'mag', o.y_label),
      col('err', 'float64', 'mag'),
      col('rejected', 'bool'),
      col('status', 'string', undefined, 'same, corrected, remeasured, added or removed between the releases'),
    ],
    rows: all.map((d) => ({
      release: d.side === 'a' ? r.a : r.b,
      id: d.p.id,
      system: d.p.system,
      [o.id === 'pl-relation' ? 'log_period' : 'z']: d.p.x,
      [o.id === 'pl-relation' ? 'abs_w' : 'mu']: d.p.y,
      err: d.p.y_err,
      rejected: d.p.rejected,
      status: d.p.status,
    })),
  };
}

function overlayFigure(r: DiffReport, o: Overlay, figure: CompareFigure): FigureSpec | null {
  const id = compareFigureId(figure);
  const all: Drawn[] = [...o.a.points.map((p) => ({ side: 'a' as const, p })), ...o.b.points.map((p) => ({ side: 'b' as const, p }))];
  if (all.length === 0) return null;
  // Thin each side on its own (changed points always kept), so both stay visible.
  const ta = thin(
    all.filter((d) => d.side === 'a'),
    (d) => d.p.changed,
  );
  const tb = thin(
    all.filter((d) => d.side === 'b'),
    (d) => d.p.changed,
  );
  const ladder = o.id === 'ladder-diagram';
  const cats = o.x_categories ?? [];
  // The ladder is drawn as the release pages draw it: rungs as rows, distance across; a above b in each row.
  const pos = (d: Drawn) => (ladder ? { x: r5(d.p.y), y: r5(d.p.x + (d.side === 'a' ? -0.17 : 0.17)) } : { x: r5(d.p.x), y: r5(d.p.y) });
  const rows: OverlayRow[] = [...ta.rows, ...tb.rows].map((d) => ({ ...pos(d), side: d.side, changed: d.p.changed, rejected: d.p.rejected }));
  const marginLeft = ladder ? 110 : 60;
  const { marks, marginTop } = overlayMarks(r, o, rows, ladder, marginLeft);
  const out = renderSvg({
    id,
    label: o.title,
    height: (ladder ? 300 : 420) + marginTop,
    marginTop,
    marginLeft,
    x: ladder
      ? { type: 'log', label: AXIS[o.id].x, tickFormat: distanceTickText }
      : o.x_log
        ? { type: 'log', label: AXIS[o.id].x }
        : { label: AXIS[o.id].x, nice: true },
    y: ladder
      ? { label: null, domain: [cats.length - 0.5, -0.5], ticks: cats.map((_, i) => i), tickFormat: (i: number) => cats[i] ?? '' }
      : { label: AXIS[o.id].y, reverse: o.id === 'pl-relation', nice: true },
    marks,
  });
  const count = (side: 'a' | 'b', changed?: boolean) => all.filter((d) => d.side === side && (changed === undefined || d.p.changed === changed)).length;
  const thinned = [ta.note && `release ${r.a}: ${ta.note}`, tb.note && `release ${r.b}: ${tb.note}`].filter(Boolean).join(' ') || null;
  return {
    id,
    title: o.title,
    caption:
      `Release ${r.a} in grey (open circles${o.a.model.length > 1 ? ', dashed fit' : ''}) and release ${r.b} in black (dots${o.b.model.length > 1 ? ', solid fit' : ''}). ` +
      `A row added, removed or changed between the releases is a grey cross (as it was in ${r.a}) and an open triangle (as it is in ${r.b}).` +
      (ladder ? ' In each rung, release a is the upper row and release b the lower.' : '') +
      (o.withheld ? ` ${o.withheld}.` : ''),
    alt:
      `${int(count('a'))} points of release ${r.a} (${int(count('a', true))} changed or removed) and ${int(count('b'))} of release ${r.b} (${int(count('b', true))} changed or added).` +
      (o.blinded ? ' Blinded: the Hubble-flow values carry the hidden offset.' : ''),
    ...out,
    csv: overlayCsv(r, o, all, cats),
    thinned,
    blinded: o.blinded,
  };
}
