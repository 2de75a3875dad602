/**
 * Figure "error-budget": each source's contribution to sigma(H0), as bars in
 * km/s/Mpc with its share of the variance written at the end. Statistical
 * sources are grey, systematic ones white with a black outline.
 */
import * as Plot from '@observablehq/plot';
import type { Results } from '../../types/results.ts';
import { fixed, percent } from '../format.ts';
import { blindedStamp, clip, col, type FigureSpec, GREY, INK, legend, listText, LIGHT, r5, renderSvg } from './plotting.ts';

export const ID = 'error-budget';

export function errorBudget(r: Results): FigureSpec | null {
  if (r.budget.length === 0 || r.h0 === null) return null;
  const rows = r.budget.map((b) => ({ label: clip(b.label, 34), sigma: r5(b.sigma_h0), kind: b.kind, share: percent(b.fraction) }));
  const leg = legend(
    [
      { label: 'statistical', kind: 'band', fill: LIGHT },
      { label: 'systematic', kind: 'band', fill: 'white' },
    ],
    undefined,
    230,
  );
  const max = Math.max(...rows.map((d) => d.sigma), r.h0.total);
  const marks: Plot.Markish[] = [
    Plot.barX(rows, {
      y: 'label',
      x: 'sigma',
      fill: (d: (typeof rows)[number]) => (d.kind === 'statistical' ? LIGHT : 'white'),
      stroke: INK,
      strokeWidth: 1,
      insetTop: 3,
      insetBottom: 3,
    }),
    Plot.text(rows, { y: 'label', x: 'sigma', text: 'share', textAnchor: 'start', dx: 6, fill: INK }),
    Plot.ruleX([0], { stroke: INK }),
    ...leg.marks,
  ];
  if (r.blinded) marks.push(blindedStamp());
  const out = renderSvg({
    id: ID,
    label: 'Error budget of H0 by source',
    height: leg.marginTop + 50 + 26 * rows.length,
    marginTop: leg.marginTop,
    marginLeft: 230,
    marginRight: 60,
    x: { label: 'Contribution to σ(H0) (km/s/Mpc)', domain: [0, max * 1.05] },
    y: { domain: rows.map((d) => d.label), label: null },
    marks: [Plot.gridX({ stroke: GREY, strokeOpacity: 0.25 }), ...marks],
  });
  return {
    id: ID,
    title: 'Error budget of H0',
    caption:
      'Contribution of each source to the uncertainty of H0, in km/s/Mpc, with its share of the total variance (shares add up to 100 %; the bars themselves add in quadrature). Grey: statistical; white: systematic (from the variants).',
    alt:
      `Total uncertainty ${fixed(r.h0.total, 2)} km/s/Mpc (statistical ${fixed(r.h0.stat, 2)}, systematic ${fixed(r.h0.sys, 2)}). ` +
      `${listText(
        r.budget.map((b) => `${b.label}: ${fixed(b.sigma_h0, 2)} km/s/Mpc, ${percent(b.fraction)} of the variance (${b.kind})`),
        20,
      )}.`,
    ...out,
    csv: {
      columns: [
        col('source', 'string'),
        col('label', 'string'),
        col('kind', 'string'),
        col('sigma_h0', 'float64', 'km / (Mpc s)'),
        col('fraction', 'float64', '', 'share of the variance of H0'),
      ],
      rows: r.budget.map((b) => ({ source: b.source, label: b.label, kind: b.kind, sigma_h0: b.sigma_h0, fraction: b.fraction })),
    },
    thinned: null,
    blinded: r.blinded,
  };
}
