/**
 * Figure "variants": H0 of every systematic variant with its statistical error,
 * against the baseline: a dark band for the baseline's statistical error and a
 * light one for its total error, so the spread of the variants is seen at once.
 */
import * as Plot from '@observablehq/plot';
import type { Results } from '../../types/results.ts';
import { fixed, pm } from '../format.ts';
import { blindedStamp, clip, col, type FigureSpec, GREY, INK, legend, listText, LIGHT, PALE, r5, renderSvg } from './plotting.ts';

export const ID = 'variants';

export function variants(r: Results): FigureSpec | null {
  if (r.variants.length === 0 || r.h0 === null) return null;
  const h0 = r.h0;
  const rows = r.variants.map((v) => ({
    label: clip(v.name, 30),
    h0: v.h0 === null ? null : r5(v.h0),
    lo: v.h0 === null || v.h0_stat === null ? null : r5(v.h0 - v.h0_stat),
    hi: v.h0 === null || v.h0_stat === null ? null : r5(v.h0 + v.h0_stat),
  }));
  const ok = rows.filter((d) => d.h0 !== null);
  const failed = rows.filter((d) => d.h0 === null);
  const leg = legend(
    [
      { label: 'variant ± stat', kind: 'dot', symbol: 'diamond', filled: true },
      { label: 'baseline ± stat', kind: 'band', fill: LIGHT },
      { label: '± total', kind: 'band', fill: PALE },
    ],
    undefined,
    200,
  );
  const xs = [h0.value - h0.total, h0.value + h0.total, ...ok.flatMap((d) => [d.lo ?? d.h0!, d.hi ?? d.h0!])];
  const marks: Plot.Markish[] = [
    Plot.rectX([0], { x1: h0.value - h0.total, x2: h0.value + h0.total, fill: PALE }),
    Plot.rectX([0], { x1: h0.value - h0.stat, x2: h0.value + h0.stat, fill: LIGHT }),
    Plot.ruleX([h0.value], { stroke: INK, strokeWidth: 1.5 }),
    Plot.ruleY(ok, { y: 'label', x1: 'lo', x2: 'hi', stroke: INK }),
    Plot.dot(ok, { y: 'label', x: 'h0', r: 5, symbol: 'diamond', fill: INK }),
    Plot.text(failed, { y: 'label', x: h0.value, text: () => 'failed (see the table)', fill: GREY, fontStyle: 'italic' }),
    ...leg.marks,
  ];
  if (r.blinded) marks.push(blindedStamp());
  const out = renderSvg({
    id: ID,
    label: 'H0 of each systematic variant against the baseline',
    height: leg.marginTop + 50 + 30 * rows.length,
    marginTop: leg.marginTop,
    marginLeft: 200,
    x: { label: 'H0 (km/s/Mpc)', domain: [Math.min(...xs) - 0.3, Math.max(...xs) + 0.3] },
    y: { domain: rows.map((d) => d.label), label: null },
    marks: [Plot.gridX({ stroke: GREY, strokeOpacity: 0.25 }), ...marks],
  });
  const bl = r.blinded ? ' (BLINDED: every value is scaled by the same hidden factor)' : '';
  return {
    id: ID,
    title: 'Systematic variants',
    caption:
      'H0 of each variant of the analysis (diamond, with its statistical error) against the baseline: the vertical line is the baseline H0, the darker band its statistical error and the lighter band its total error.' +
      (r.blinded ? ' While the release is blinded, every value is scaled by the same hidden factor: read the ratios to the baseline, not the values.' : ''),
    alt:
      `Baseline H0 = ${pm(h0.value, h0.stat)} km/s/Mpc (statistical), total error ${fixed(h0.total, 2)}${bl}. ` +
      `${listText(
        r.variants.map((v) =>
          v.h0 === null ? `${v.name}: failed` : `${v.name}: ${pm(v.h0, v.h0_stat)}, shift ${v.delta_h0 === null ? '—' : fixed(v.delta_h0, 2)}`,
        ),
        20,
      )}.`,
    ...out,
    csv: {
      columns: [
        col('name', 'string'),
        col('h0', 'float64', 'km / (Mpc s)'),
        col('h0_stat', 'float64', 'km / (Mpc s)'),
        col('delta_h0', 'float64', 'km / (Mpc s)'),
        col('error', 'string'),
      ],
      rows: [
        { name: 'baseline', h0: h0.value, h0_stat: h0.stat, delta_h0: 0, error: null },
        ...r.variants.map((v) => ({ name: v.name, h0: v.h0, h0_stat: v.h0_stat, delta_h0: v.delta_h0, error: v.error })),
      ],
    },
    thinned: null,
    blinded: r.blinded,
  };
}
