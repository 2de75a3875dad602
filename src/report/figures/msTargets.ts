/**
 * Figure "ms-targets": the main-sequence targets' stars, moved to absolute
 * magnitude and intrinsic colour with each target's fitted distance and
 * reddening, on top of the anchors' locus. A good fit puts them on the line.
 */
import * as Plot from '@observablehq/plot';
import type { Results } from '../../types/results.ts';
import { int, pm } from '../format.ts';
import { locusCurve } from './msLocus.ts';
import { clip, col, type FigureSpec, GREY, INK, legend, type LegendItem, listText, r5, renderSvg, thin } from './plotting.ts';

export const ID = 'ms-targets';

const SHAPES: { symbol: Plot.SymbolType; filled: boolean }[] = [
  { symbol: 'circle', filled: true },
  { symbol: 'square', filled: false },
  { symbol: 'triangle', filled: true },
  { symbol: 'diamond', filled: false },
  { symbol: 'star', filled: true },
  { symbol: 'cross', filled: true },
  { symbol: 'circle', filled: false },
  { symbol: 'triangle', filled: false },
];

export function msTargets(r: Results): FigureSpec | null {
  const ms = r.rungs.main_sequence;
  const stars = ms.stars.filter((s) => s.role === 'target');
  if (ms.targets.length === 0 || stars.length === 0) return null;
  const names = ms.targets.map((t) => t.system);
  const shapeOf = (sys: string) => SHAPES[Math.max(0, names.indexOf(sys)) % SHAPES.length]!;
  const t = thin(stars, (s) => !s.used);
  const rows = t.rows.map((s) => ({ c: r5(s.color0), m: r5(s.abs_mag), system: s.system, used: s.used }));
  const items: LegendItem[] = names.map((n) => ({ label: clip(n, 26), kind: 'dot' as const, ...shapeOf(n) }));
  if (ms.locus) items.push({ label: 'anchor locus', kind: 'line', width: 2 });
  const leg = legend(items);
  const marks: Plot.Markish[] = [Plot.gridY({ stroke: GREY, strokeOpacity: 0.2 })];
  if (ms.locus) marks.push(Plot.line(locusCurve(ms.locus), { x: 'c', y: 'm', stroke: INK, strokeWidth: 2 }));
  for (const n of names) {
    const sh = shapeOf(n);
    marks.push(
      Plot.dot(
        rows.filter((d) => d.system === n),
        { x: 'c', y: 'm', r: 3, symbol: sh.symbol, fill: sh.filled ? INK : 'white', stroke: INK, strokeWidth: 0.8, strokeOpacity: 1 },
      ),
    );
  }
  marks.push(...leg.marks);
  const out = renderSvg({
    id: ID,
    label: 'Main-sequence targets on the anchor locus',
    height: 440 + leg.marginTop,
    marginTop: leg.marginTop,
    x: { label: 'Intrinsic colour (B−V)₀ (mag)', nice: true },
    y: { label: 'Absolute magnitude M_V (mag)', reverse: true, nice: true },
    marks,
  });
  return {
    id: ID,
    title: 'Main-sequence targets',
    caption:
      'Stars of each main-sequence target, corrected with the target’s fitted distance modulus and reddening, against the locus from the anchors (solid line). One symbol per target.',
    alt: `${int(stars.length)} stars in ${ms.targets.length} targets. ${listText(
      ms.targets.map((x) => `${x.system}: μ = ${pm(x.mu, x.mu_err)} mag, E(B−V) = ${pm(x.ebv, x.ebv_err)} mag from ${x.n_used} of ${x.n_stars} stars`),
    )}.`,
    ...out,
    csv: {
      columns: [
        col('star', 'string'),
        col('system', 'string'),
        col('color0', 'float64', 'mag', 'intrinsic B-V with the fitted reddening'),
        col('abs_mag', 'float64', 'mag', 'absolute V with the fitted distance'),
        col('p_binary', 'float64'),
        col('used', 'bool'),
      ],
      rows: stars.map((s) => ({ star: s.star, system: s.system, color0: s.color0, abs_mag: s.abs_mag, p_binary: s.p_binary, used: s.used })),
    },
    thinned: t.note,
    blinded: false,
  };
}
