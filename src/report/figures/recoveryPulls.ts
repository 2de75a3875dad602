/**
 * Figure "recovery-pulls": for each quantity a recovery followed, the distribution of its pulls
 * (estimate - truth) / error over the simulated releases, as a density histogram, against the
 * unit normal that honest, unbiased errors would give. Drawn from recovery.json (its histograms).
 */
import * as Plot from '@observablehq/plot';
import { describeQuantity } from '../../recover/quantities.ts';
import type { RecoverySummary } from '../../recover/summary.ts';
import { fixed } from '../format.ts';
import { clip, col, type FigureSpec, GREY, INK, LIGHT, listText, r5, renderSvg } from './plotting.ts';

export const ID = 'recovery-pulls';
const COLUMNS = 4;
const PANEL_HEIGHT = 96;

/** Unit normal density. */
function phi(x: number): number {
  return Math.exp(-0.5 * x * x) / Math.sqrt(2 * Math.PI);
}

export function recoveryPulls(s: RecoverySummary): FigureSpec | null {
  const qs = s.quantities.filter((q) => q.n > 0);
  if (qs.length === 0) return null;
  const label = (i: number) => `${clip(describeQuantity(qs[i]!.key), 30)}${qs[i]!.verdict === 'fail' ? ' (fails)' : ''}`;
  const bars = qs.flatMap((q, i) =>
    q.histogram.counts.map((c, b) => ({
      panel: i,
      fx: i % COLUMNS,
      fy: Math.floor(i / COLUMNS),
      x1: q.histogram.from + b * q.histogram.width,
      x2: q.histogram.from + (b + 1) * q.histogram.width,
      density: r5(c / (q.n * q.histogram.width)),
    })),
  );
  const curve = qs.flatMap((_q, i) =>
    Array.from({ length: 81 }, (_, k) => ({ fx: i % COLUMNS, fy: Math.floor(i / COLUMNS), x: -4 + k * 0.1, y: r5(phi(-4 + k * 0.1)) })),
  );
  const titles = qs.map((_q, i) => ({ fx: i % COLUMNS, fy: Math.floor(i / COLUMNS), text: label(i) }));
  const rows = Math.ceil(qs.length / COLUMNS);
  // The legend is one line above the panels (facet "super": drawn once, not in every panel).
  const legendTop = 26;
  const legendMarks: Plot.Markish[] = [
    Plot.text(['Bars: pulls of the simulated releases (density).   Curve: unit normal.   Dotted: zero.'], {
      frameAnchor: 'top-left',
      facet: 'super',
      dy: -legendTop + 6,
      textAnchor: 'start',
      lineAnchor: 'top',
      fontSize: 11,
    }),
  ];
  const ymax = Math.max(0.6, ...bars.map((b) => b.density));
  const out = renderSvg({
    id: ID,
    label: 'Distributions of the pulls of every recovered quantity against a unit normal',
    height: legendTop + 44 + rows * PANEL_HEIGHT,
    marginTop: legendTop,
    marginLeft: 40,
    x: { label: 'pull = (estimate − truth) / error', domain: [-5, 5] },
    y: { label: null, domain: [0, ymax], ticks: 0 },
    // The panel titles say which quantity: no facet axes.
    fx: { axis: null, padding: 0.08 },
    fy: { axis: null, padding: 0.12 },
    marks: [
      Plot.rectY(bars, { fx: 'fx', fy: 'fy', x1: 'x1', x2: 'x2', y: 'density', fill: LIGHT, stroke: GREY, strokeWidth: 0.4 }),
      Plot.line(curve, { fx: 'fx', fy: 'fy', x: 'x', y: 'y', stroke: INK, strokeWidth: 1.5 }),
      Plot.ruleX([0], { stroke: GREY, strokeDasharray: '2,3' }),
      Plot.text(titles, { fx: 'fx', fy: 'fy', text: 'text', frameAnchor: 'top-left', dx: 3, dy: 3, fontSize: 9, textAnchor: 'start', lineAnchor: 'top' }),
      Plot.frame({ stroke: GREY, strokeOpacity: 0.5 }),
      ...legendMarks,
    ],
  });
  return {
    id: ID,
    title: 'Pull distributions of the recovery',
    caption:
      `For each quantity, the histogram of its pulls over ${s.seeds.calibrated} simulated releases (as a density) against the unit normal (curve) that unbiased estimates with honest errors give. ` +
      'A histogram shifted from zero shows a bias; one wider than the curve, errors that are too small; one narrower, errors that are too large.',
    alt:
      `Pull distributions of ${qs.length} quantities over ${s.seeds.calibrated} simulated releases of release ${s.release.id}; verdict ${s.verdict}. ` +
      `${listText(
        qs.map((q) => `${describeQuantity(q.key)}: mean ${fixed(q.mean.value, 2)}, SD ${fixed(q.sd.value, 2)}`),
        60,
      )}.`,
    ...out,
    csv: {
      columns: [col('quantity', 'string'), col('bin_low', 'float64'), col('bin_high', 'float64'), col('count', 'int64'), col('density', 'float64')],
      rows: qs.flatMap((q) =>
        q.histogram.counts.map((c, b) => ({
          quantity: q.key,
          bin_low: q.histogram.from + b * q.histogram.width,
          bin_high: q.histogram.from + (b + 1) * q.histogram.width,
          count: c,
          density: c / (q.n * q.histogram.width),
        })),
      ),
    },
    thinned: null,
    blinded: false,
  };
}
