/**
 * Figure "parallax-posteriors": for each star with a positive corrected
 * parallax, the naive 1/parallax distance against the median of its distance
 * posterior, with the 5–95 % interval; the diagonal marks agreement. Stars with
 * low-significance parallaxes (where the prior dominates) are drawn open.
 */
import * as Plot from '@observablehq/plot';
import type { Results } from '../../types/results.ts';
import { int, sig } from '../format.ts';
import { col, type FigureSpec, GREY, INK, legend, r5, renderSvg, thin } from './plotting.ts';

export const ID = 'parallax-posteriors';

type ParallaxStar = Results['rungs']['parallax']['stars'][number];

/** The figure in words: how many stars are drawn, flagged, and the median ratio of the two distances. */
function posteriorsInWords(stars: readonly ParallaxStar[], placed: readonly ParallaxStar[]): string {
  const nLow = stars.filter((s) => s.low_significance).length;
  const nBi = stars.filter((s) => s.bimodal).length;
  const nNonPos = stars.length - placed.length;
  const ratios = placed.map((s) => s.dist_q50_pc / s.dist_inverse_pc!).sort((a, b) => a - b);
  const median = ratios.length ? ratios[Math.floor(ratios.length / 2)]! : NaN;
  return (
    `${int(stars.length)} parallax stars; ${int(placed.length)} with a positive corrected parallax are drawn` +
    (nNonPos ? ` (${int(nNonPos)} with zero or negative parallax are only in the CSV)` : '') +
    `. ${int(nLow)} have parallax/error below 5 and ${int(nBi)} have a bimodal posterior. ` +
    (ratios.length ? `The median ratio of posterior median to naive distance is ${sig(median, 3)}.` : '')
  );
}

/** The figure's data as a table (every star, also those not drawn). */
function posteriorsCsv(stars: readonly ParallaxStar[]): NonNullable<FigureSpec['csv']> {
  return {
    columns: [
      col('star', 'string'),
      col('system', 'string'),
      col('parallax_corr', 'float64', 'mas', 'zero-point corrected parallax'),
      col('parallax_err', 'float64', 'mas'),
      col('dist_inverse', 'float64', 'pc', '1/parallax, empty when parallax <= 0'),
      col('dist_q05', 'float64', 'pc'),
      col('dist_q50', 'float64', 'pc'),
      col('dist_q95', 'float64', 'pc'),
      col('low_significance', 'bool'),
      col('bimodal', 'bool'),
    ],
    rows: stars.map((s) => ({
      star: s.star,
      system: s.system,
      parallax_corr: s.parallax_corr_mas,
      parallax_err: s.parallax_err_mas,
      dist_inverse: s.dist_inverse_pc,
      dist_q05: s.dist_q05_pc,
      dist_q50: s.dist_q50_pc,
      dist_q95: s.dist_q95_pc,
      low_significance: s.low_significance,
      bimodal: s.bimodal,
    })),
  };
}

export function parallaxPosteriors(r: Results): FigureSpec | null {
  const stars = r.rungs.parallax.stars;
  if (stars.length === 0) return null;
  const placed = stars.filter((s) => s.dist_inverse_pc !== null && s.dist_inverse_pc > 0);
  const flagged = (s: (typeof stars)[number]) => s.low_significance || s.bimodal;
  const t = thin(placed, flagged);
  const rows = t.rows.map((s) => ({
    inv: r5(s.dist_inverse_pc!),
    q50: r5(s.dist_q50_pc),
    q05: r5(s.dist_q05_pc),
    q95: r5(s.dist_q95_pc),
    cls: s.bimodal ? 'bimodal' : s.low_significance ? 'low' : 'ok',
  }));
  const all = rows.flatMap((d) => [d.inv, d.q05, d.q95]).filter((x) => x > 0);
  const lo = Math.min(...all) / 1.2;
  const hi = Math.max(...all) * 1.2;
  const leg = legend([
    { label: 'parallax/error ≥ 5', kind: 'dot', symbol: 'circle', filled: true },
    { label: 'parallax/error < 5', kind: 'dot', symbol: 'circle', filled: false },
    { label: 'bimodal posterior', kind: 'dot', symbol: 'triangle', filled: false },
    { label: '5–95 %', kind: 'line', width: 1 },
    { label: 'equal', kind: 'line', dash: '4,3' },
  ]);
  const out = renderSvg({
    id: ID,
    label: 'Naive against posterior distances of the parallax stars',
    height: 420 + leg.marginTop,
    marginTop: leg.marginTop,
    marginLeft: 64,
    x: { type: 'log', domain: [lo, hi], label: 'Distance 1/parallax (pc)', tickFormat: '~s' },
    y: { type: 'log', domain: [lo, hi], label: 'Posterior median distance (pc)', tickFormat: '~s' },
    marks: [
      Plot.link([{ a: lo, b: hi }], { x1: 'a', y1: 'a', x2: 'b', y2: 'b', stroke: GREY, strokeDasharray: '4,3' }),
      Plot.link(rows, { x1: 'inv', x2: 'inv', y1: 'q05', y2: 'q95', stroke: GREY, strokeWidth: 0.7 }),
      Plot.dot(
        rows.filter((d) => d.cls === 'ok'),
        { x: 'inv', y: 'q50', r: 2.5, fill: INK },
      ),
      Plot.dot(
        rows.filter((d) => d.cls === 'low'),
        { x: 'inv', y: 'q50', r: 3, fill: 'white', stroke: INK },
      ),
      Plot.dot(
        rows.filter((d) => d.cls === 'bimodal'),
        { x: 'inv', y: 'q50', r: 4, symbol: 'triangle', fill: 'white', stroke: INK },
      ),
      ...leg.marks,
    ],
  });
  return {
    id: ID,
    title: 'Parallax stars: naive and posterior distances',
    caption:
      'Each star’s naive distance 1/parallax against the median of its distance posterior (exponentially decreasing space density prior), with the 5–95 % interval. ' +
      'Open circles: parallax/error below 5, where the prior dominates; open triangles: two-peaked posteriors. Dashed: equal distances. Display only: these distances do not enter the fit.',
    alt: posteriorsInWords(stars, placed),
    ...out,
    csv: posteriorsCsv(stars),
    thinned: t.note,
    blinded: false,
  };
}
