/**
 * A system's own figures, on its page: its Cepheids' residuals from the global
 * period–luminosity relation, its supernovae among all calibrators, and its stars on the
 * anchors' main-sequence locus. Each point can be hovered (its CSV row) and opens its own row.
 * The ids are the same for every system and release ("system-pl-residuals", ...); the files sit
 * in the system page's folder, so a link to them is stable.
 */
import * as Plot from '@observablehq/plot';
import type { Results } from '../../types/results.ts';
import { objectLink } from '../../layout/routes.ts';
import { fixed, int } from '../format.ts';
import { locusCurve } from './msLocus.ts';
import { residualCsv, residualLayers } from './plResiduals.ts';
import { clip, col, type FigureSpec, GREY, INK, legend, PALE, r5, renderSvg } from './plotting.ts';

export const SYSTEM_FIGURE_IDS = ['system-pl-residuals', 'system-sn-calibrators', 'system-cmd'] as const;

/** Its Cepheids' residuals against log period, with ± the global intrinsic scatter. */
export function systemPlResiduals(r: Results, system: string): FigureSpec | null {
  const ceph = r.rungs.cepheids.filter((c) => c.system === system);
  if (ceph.length === 0) return null;
  const rows = ceph.map((c, i) => ({ p: r5(c.log_period), res: r5(c.residual), rejected: c.rejected, row: i }));
  const s = r.fit.scatter.cepheids;
  const layers = residualLayers(rows, s, { pointLabel: `Cepheid of ${clip(system, 24)}`, scatterLabel: 'global intrinsic scatter', dotR: 3, dotStroke: 1 });
  const out = renderSvg({
    id: 'system-pl-residuals',
    label: `Period–luminosity residuals of the Cepheids of ${clip(system, 40)}`,
    height: 260 + layers.leg.marginTop,
    marginTop: layers.leg.marginTop,
    x: { label: 'log₁₀ period (days)', nice: true },
    y: { label: 'Residual (mag)', nice: true },
    marks: layers.marks,
    hover: layers.hover,
  });
  const k = ceph.filter((c) => !c.rejected);
  const mean = k.length ? k.reduce((a, c) => a + c.residual, 0) / k.length : NaN;
  return {
    id: 'system-pl-residuals',
    title: 'Its Cepheids on the global relation',
    caption: `Residual of each Cepheid of ${system} from the global period–luminosity relation (observed minus model, with this system’s fitted distance), against log period. Dashed: ± the fitted intrinsic scatter of all Cepheids. Crosses: rejected.`,
    alt: `${int(ceph.length)} Cepheids of ${system}; mean residual of the ${int(k.length)} kept is ${fixed(mean, 3)} mag; intrinsic scatter ${fixed(s, 3)} mag.`,
    ...out,
    csv: residualCsv(r.release.id, ceph),
    thinned: null,
    blinded: false,
  };
}

/** Every calibrator's implied absolute magnitude; this host's filled, the others open. */
export function systemSnCalibrators(r: Results, system: string): FigureSpec | null {
  const cal = r.rungs.supernovae.calibrators;
  if (!cal.some((c) => c.system === system)) return null;
  const rows = cal.map((c, i) => ({ row: i, label: clip(`${c.sn} (${c.system ?? '?'})`, 30), m: r5(c.m_corr - c.mu), own: c.system === system }));
  const MB = r.parameters.M_B;
  const blinded = r.blinded;
  const leg = legend(
    [
      { label: `supernova of ${clip(system, 20)}`, kind: 'dot', symbol: 'circle', filled: true },
      { label: 'other calibrators', kind: 'dot', symbol: 'circle', filled: false },
      ...(MB ? [{ label: 'fitted M_B ± 1σ', kind: 'band' as const, fill: PALE }] : []),
    ],
    undefined,
    200,
  );
  const own = rows.filter((d) => d.own);
  const marks: Plot.Markish[] = [];
  if (MB) marks.push(Plot.rectX([0], { x1: MB.value - MB.err, x2: MB.value + MB.err, fill: PALE }), Plot.ruleX([MB.value], { stroke: GREY, strokeWidth: 1.5 }));
  marks.push(
    Plot.dot(
      rows.filter((d) => !d.own),
      { y: 'label', x: 'm', r: 3, fill: 'white', stroke: GREY },
    ),
    Plot.dot(own, { y: 'label', x: 'm', r: 5, fill: INK, className: 'hover-own' }),
    ...leg.marks,
  );
  const out = renderSvg({
    id: 'system-sn-calibrators',
    label: `Supernovae of ${clip(system, 40)} among the calibrators`,
    height: leg.marginTop + 50 + 18 * rows.length,
    marginTop: leg.marginTop,
    marginLeft: 200,
    x: { label: 'Standardised magnitude minus host modulus (mag)', nice: true, inset: 10 },
    y: { domain: rows.map((d) => d.label), label: null },
    marks,
    hover: [{ className: 'hover-own', rows: own.map((d) => d.row) }],
  });
  return {
    id: 'system-sn-calibrators',
    title: 'Its supernovae on the calibrator plot',
    caption: `Absolute magnitude implied by each calibrator supernova (standardised peak magnitude minus its host’s distance modulus); filled: the supernovae of ${system}. The band is the fitted M_B ± 1σ.${blinded ? ' M_B is shown while the release is blinded.' : ''}`,
    alt: `${own.length} supernova${own.length === 1 ? '' : 'e'} of ${system} among ${cal.length} calibrators: ${own.map((d) => `${cal[d.row]!.sn} at ${fixed(d.m, 3)} mag`).join('; ')}${MB ? `; fitted M_B ${fixed(MB.value, 3)} mag` : ''}.`,
    ...out,
    csv: {
      columns: [
        col('sn', 'string'),
        col('system', 'string'),
        col('line', 'int64'),
        col('abs_mag', 'float64', 'mag', 'm_corr - host_mu'),
        col('rejected', 'bool'),
        col('page', 'string'),
      ],
      rows: cal.map((c) => ({
        sn: c.sn,
        system: c.system,
        line: c.line,
        abs_mag: c.m_corr - c.mu,
        rejected: c.rejected,
        page: c.system === null ? null : objectLink(r.release.id, c.system, c.sn),
      })),
    },
    thinned: null,
    blinded,
  };
}

/** Its main-sequence stars, at its fitted distance and reddening, on the anchors' locus. */
export function systemCmd(r: Results, system: string): FigureSpec | null {
  const locus = r.rungs.main_sequence.locus;
  const stars = r.rungs.main_sequence.stars.filter((s) => s.system === system);
  if (locus === null || stars.length === 0) return null;
  const rows = stars.map((s, i) => ({ c: r5(s.color0), m: r5(s.abs_mag), used: s.used, row: i }));
  const leg = legend([
    { label: 'star used in the fit', kind: 'dot', symbol: 'circle', filled: true },
    { label: 'not used', kind: 'dot', symbol: 'times', filled: false },
    { label: 'anchors’ locus ([Fe/H] = 0)', kind: 'line', width: 2 },
  ]);
  const used = rows.filter((d) => d.used);
  const unused = rows.filter((d) => !d.used);
  const out = renderSvg({
    id: 'system-cmd',
    label: `Colour–magnitude diagram of ${clip(system, 40)} with the main-sequence locus`,
    height: 340 + leg.marginTop,
    marginTop: leg.marginTop,
    x: { label: 'Intrinsic colour (B−V)₀ (mag)', nice: true },
    y: { label: 'Absolute magnitude M_V at [Fe/H] = 0 (mag)', reverse: true, nice: true },
    marks: [
      Plot.line(locusCurve(locus), { x: 'c', y: 'm', stroke: INK, strokeWidth: 2 }),
      Plot.dot(used, { x: 'c', y: 'm', r: 2.2, fill: INK, className: 'hover-used' }),
      Plot.dot(unused, { x: 'c', y: 'm', r: 3, symbol: 'times', stroke: GREY, className: 'hover-unused' }),
      ...leg.marks,
    ],
    hover: [
      { className: 'hover-used', rows: used.map((d) => d.row) },
      { className: 'hover-unused', rows: unused.map((d) => d.row) },
    ],
  });
  return {
    id: 'system-cmd',
    title: 'Its colour–magnitude fit',
    caption: `The stars of ${system} moved to absolute magnitude and intrinsic colour with its fitted distance and reddening (normalised to [Fe/H] = 0), on the locus fitted to the geometric anchors. A good fit puts the single stars on the line; unresolved binaries sit up to 0.75 mag above it.`,
    alt: `${int(stars.length)} stars of ${system}, ${int(used.length)} used in the fit, on the anchors’ locus of degree ${locus.degree}.`,
    ...out,
    csv: {
      columns: [
        col('star', 'string'),
        col('system', 'string'),
        col('line', 'int64'),
        col('color0', 'float64', 'mag'),
        col('abs_mag', 'float64', 'mag'),
        col('p_binary', 'float64'),
        col('used', 'bool'),
        col('page', 'string'),
      ],
      rows: stars.map((s) => ({
        star: s.star,
        system: s.system,
        line: s.line,
        color0: s.color0,
        abs_mag: s.abs_mag,
        p_binary: s.p_binary,
        used: s.used,
        page: objectLink(r.release.id, s.system, s.star),
      })),
    },
    thinned: null,
    blinded: false,
  };
}
