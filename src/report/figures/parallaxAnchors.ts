/**
 * Figure "parallax-anchors": the distance modulus of each geometric anchor with
 * two error bars, the thick one without and the thin one with the shared
 * parallax zero-point term.
 */
import * as Plot from '@observablehq/plot';
import type { Results } from '../../types/results.ts';
import { distanceText, fixed, pm } from '../format.ts';
import { distanceMpcFromModulus } from '../../ladder/distance.ts';
import { clip, col, type FigureSpec, GREY, INK, legend, listText, r5, renderSvg } from './plotting.ts';

export const ID = 'parallax-anchors';

export function parallaxAnchors(r: Results): FigureSpec | null {
  const anchors = r.rungs.parallax.anchors;
  if (anchors.length === 0) return null;
  const rows = anchors.map((a) => ({
    system: a.system,
    mu: r5(a.mu),
    statLo: r5(a.mu - a.mu_err_stat),
    statHi: r5(a.mu + a.mu_err_stat),
    totLo: r5(a.mu - a.mu_err),
    totHi: r5(a.mu + a.mu_err),
  }));
  const leg = legend(
    [
      { label: 'μ', kind: 'dot', symbol: 'circle', filled: false },
      { label: 'statistical error', kind: 'line', width: 4 },
      { label: 'with zero-point error', kind: 'line', width: 1 },
    ],
    undefined,
    150,
  );
  const out = renderSvg({
    id: ID,
    label: 'Distance modulus of each parallax anchor',
    height: leg.marginTop + 50 + 34 * rows.length,
    marginLeft: 150,
    marginTop: leg.marginTop,
    x: { label: 'Distance modulus μ (mag)', nice: true, inset: 10 },
    y: { domain: rows.map((d) => d.system), label: null, tickFormat: (s: string) => clip(s) },
    marks: [
      Plot.gridX({ stroke: GREY, strokeOpacity: 0.25 }),
      Plot.ruleY(rows, { y: 'system', x1: 'totLo', x2: 'totHi', stroke: INK, strokeWidth: 1 }),
      Plot.ruleY(rows, { y: 'system', x1: 'statLo', x2: 'statHi', stroke: INK, strokeWidth: 4 }),
      Plot.dot(rows, { y: 'system', x: 'mu', r: 4.5, fill: 'white', stroke: INK, strokeWidth: 1.5 }),
      ...leg.marks,
    ],
  });
  return {
    id: ID,
    title: 'Geometric anchors',
    caption:
      'Distance modulus of each anchor from its stars’ zero-point corrected parallaxes. Thick bar: statistical error (with the error scale and floor); thin bar: including the shared zero-point error.',
    alt: `Distance moduli of ${anchors.length} anchors: ${listText(
      anchors.map(
        (a) =>
          `${a.system}: μ = ${pm(a.mu, a.mu_err)} mag (statistical ${fixed(a.mu_err_stat, 4)}), ${distanceText(distanceMpcFromModulus(a.mu))}, from ${a.n_stars} stars`,
      ),
    )}.`,
    ...out,
    csv: {
      columns: [
        col('system', 'string'),
        col('n_stars', 'int64'),
        col('mean_parallax', 'float64', 'mas'),
        col('mean_parallax_err', 'float64', 'mas'),
        col('mu', 'float64', 'mag'),
        col('mu_err_stat', 'float64', 'mag', 'without the zero-point term'),
        col('mu_err', 'float64', 'mag', 'with the zero-point term'),
      ],
      rows: anchors.map((a) => ({
        system: a.system,
        n_stars: a.n_stars,
        mean_parallax: a.mean_parallax_mas,
        mean_parallax_err: a.mean_parallax_err_mas,
        mu: a.mu,
        mu_err_stat: a.mu_err_stat,
        mu_err: a.mu_err,
      })),
    },
    thinned: null,
    blinded: false,
  };
}
