/**
 * Figure "ms-locus": the anchors' main-sequence stars in the absolute
 * colour-magnitude plane with the fitted locus (at [Fe/H] = 0) and, dashed, the
 * same locus shifted by the offset of an equal-mass binary.
 */
import * as Plot from '@observablehq/plot';
import { EQUAL_MASS_BINARY_OFFSET_MAG } from '../../constants/index.ts';
import type { LocusResult, MainSequenceStarResult, Results } from '../../types/results.ts';
import { fixed, int, percent } from '../format.ts';
import { col, type FigureSpec, GREY, INK, legend, type LegendItem, r5, renderSvg, thin } from './plotting.ts';

export const ID = 'ms-locus';

/** Points of the reported locus polynomial P(c) = sum_k coeffs[k] (c - pivot)^k across its colour range (display only). */
export function locusCurve(locus: LocusResult, n = 80): { c: number; m: number }[] {
  const [c0, c1] = locus.color_range;
  const out: { c: number; m: number }[] = [];
  for (let i = 0; i <= n; i++) {
    const c = c0 + ((c1 - c0) * i) / n;
    let m = 0;
    for (let k = locus.coeffs.length - 1; k >= 0; k--) m = m * (c - locus.color_pivot) + locus.coeffs[k]!;
    out.push({ c: r5(c), m: r5(m) });
  }
  return out;
}

export const STAR_CLASSES = {
  used: { label: 'used in the fit', symbol: 'circle', filled: true },
  binary: { label: 'likely binary (p > 0.5)', symbol: 'triangle', filled: false },
  unused: { label: 'outside the fit', symbol: 'times', filled: false },
} as const;

export function starClass(s: MainSequenceStarResult): keyof typeof STAR_CLASSES {
  if (!s.used) return 'unused';
  return s.p_binary > 0.5 ? 'binary' : 'used';
}

export function starMarks(rows: { c: number; m: number; cls: keyof typeof STAR_CLASSES }[]): Plot.Markish[] {
  return (Object.keys(STAR_CLASSES) as (keyof typeof STAR_CLASSES)[]).map((k) =>
    Plot.dot(
      rows.filter((d) => d.cls === k),
      {
        x: 'c',
        y: 'm',
        r: k === 'used' ? 2.2 : 3,
        symbol: STAR_CLASSES[k].symbol,
        fill: STAR_CLASSES[k].filled ? INK : 'white',
        stroke: k === 'used' ? 'none' : INK,
        strokeWidth: 1,
      },
    ),
  );
}

export function msLocus(r: Results): FigureSpec | null {
  const locus = r.rungs.main_sequence.locus;
  const stars = r.rungs.main_sequence.stars.filter((s) => s.role === 'anchor');
  if (locus === null || stars.length === 0) return null;
  const t = thin(stars, (s) => starClass(s) !== 'used');
  const rows = t.rows.map((s) => ({ c: r5(s.color0), m: r5(s.abs_mag), cls: starClass(s) }));
  const curve = locusCurve(locus);
  const binary = curve.map((p) => ({ c: p.c, m: r5(p.m - EQUAL_MASS_BINARY_OFFSET_MAG) }));
  const items: LegendItem[] = [
    ...(Object.keys(STAR_CLASSES) as (keyof typeof STAR_CLASSES)[])
      .filter((k) => rows.some((d) => d.cls === k))
      .map((k) => ({ label: STAR_CLASSES[k].label, kind: 'dot' as const, symbol: STAR_CLASSES[k].symbol, filled: STAR_CLASSES[k].filled })),
    { label: 'locus', kind: 'line', width: 2 },
    { label: 'equal-mass binaries', kind: 'line', dash: '5,3' },
  ];
  const leg = legend(items);
  const out = renderSvg({
    id: ID,
    label: 'Main-sequence locus fitted on the anchors',
    height: 440 + leg.marginTop,
    marginTop: leg.marginTop,
    x: { label: 'Intrinsic colour (B−V)₀ (mag)', nice: true },
    y: { label: 'Absolute magnitude M_V (mag)', reverse: true, nice: true },
    marks: [
      Plot.gridY({ stroke: GREY, strokeOpacity: 0.2 }),
      ...starMarks(rows),
      Plot.line(curve, { x: 'c', y: 'm', stroke: INK, strokeWidth: 2 }),
      Plot.line(binary, { x: 'c', y: 'm', stroke: INK, strokeWidth: 1, strokeDasharray: '5,3' }),
      ...leg.marks,
    ],
  });
  const nUsed = stars.filter((s) => s.used).length;
  return {
    id: ID,
    title: 'Main-sequence locus',
    caption:
      'Main-sequence stars of the geometric anchors, corrected for each anchor’s distance and reddening, with the fitted locus at [Fe/H] = 0 (solid) and the locus of equal-mass binaries 0.75 mag brighter (dashed). ' +
      'Filled dots: stars in the fit; open triangles: likely binaries; crosses: outside the colour range of the fit.',
    alt:
      `${int(stars.length)} anchor stars, ${int(nUsed)} used. Locus of degree ${locus.degree} over (B−V)₀ from ${fixed(locus.color_range[0], 2)} to ${fixed(locus.color_range[1], 2)} mag, ` +
      `pivot ${fixed(locus.color_pivot, 2)}, coefficients ${locus.coeffs.map((c) => fixed(c, 3)).join(', ')}; scatter ${fixed(locus.scatter, 3)} mag; binary fraction ${percent(locus.binary_fraction)}.`,
    ...out,
    csv: {
      columns: [
        col('star', 'string'),
        col('system', 'string'),
        col('color0', 'float64', 'mag', 'intrinsic B-V'),
        col('abs_mag', 'float64', 'mag', 'absolute V'),
        col('p_binary', 'float64'),
        col('used', 'bool'),
      ],
      rows: stars.map((s) => ({ star: s.star, system: s.system, color0: s.color0, abs_mag: s.abs_mag, p_binary: s.p_binary, used: s.used })),
    },
    thinned: t.note,
    blinded: false,
  };
}
