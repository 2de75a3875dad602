/**
 * Figure "pl-relation": every Cepheid's Wesenheit magnitude, made absolute with
 * its host's fitted distance, against log period, with the fitted
 * period-luminosity relation at [O/H] = 0. Rejected Cepheids are crosses.
 */
import * as Plot from '@observablehq/plot';
import type { Results } from '../../types/results.ts';
import { fixed, int, pm } from '../format.ts';
import { col, type FigureSpec, GREY, INK, legend, type LegendItem, r5, renderSvg, thin } from './plotting.ts';

export const ID = 'pl-relation';

export function plRelation(r: Results): FigureSpec | null {
  const ceph = r.rungs.cepheids;
  if (ceph.length === 0) return null;
  const t = thin(ceph, (c) => c.rejected);
  const rows = t.rows.map((c) => ({ p: r5(c.log_period), w: r5(c.abs_w), rejected: c.rejected }));
  const MW = r.parameters.M_W;
  const bW = r.parameters.b_W;
  const pivot = r.analysis.pl_pivot_logp;
  const ps = ceph.map((c) => c.log_period);
  const pMin = Math.min(...ps);
  const pMax = Math.max(...ps);
  const items: LegendItem[] = [
    { label: 'Cepheid', kind: 'dot', symbol: 'circle', filled: false },
    ...(rows.some((d) => d.rejected) ? [{ label: 'rejected', kind: 'dot' as const, symbol: 'times' as const, filled: false }] : []),
  ];
  const marks: Plot.Markish[] = [
    Plot.gridY({ stroke: GREY, strokeOpacity: 0.2 }),
    Plot.dot(
      rows.filter((d) => !d.rejected),
      { x: 'p', y: 'w', r: 2.2, fill: 'white', stroke: INK, strokeWidth: 0.7 },
    ),
    Plot.dot(
      rows.filter((d) => d.rejected),
      { x: 'p', y: 'w', r: 4, symbol: 'times', stroke: INK, strokeWidth: 1.5 },
    ),
  ];
  if (MW && bW) {
    const line = [pMin, pMax].map((p) => ({ p: r5(p), w: r5(MW.value + bW.value * (p - pivot)) }));
    marks.push(Plot.line(line, { x: 'p', y: 'w', stroke: INK, strokeWidth: 2 }));
    items.push({ label: 'fitted relation, [O/H] = 0', kind: 'line', width: 2 });
  }
  const leg = legend(items);
  marks.push(...leg.marks);
  const out = renderSvg({
    id: ID,
    label: 'Cepheid period-luminosity relation',
    height: 420 + leg.marginTop,
    marginTop: leg.marginTop,
    x: { label: 'log₁₀ period (days)', nice: true },
    y: { label: 'Absolute Wesenheit magnitude (mag)', reverse: true, nice: true },
    marks,
  });
  const nRej = ceph.filter((c) => c.rejected).length;
  const hosts = new Set(ceph.map((c) => c.system)).size;
  return {
    id: ID,
    title: 'Period–luminosity relation',
    caption:
      'Wesenheit magnitude of each Cepheid minus its host’s fitted distance modulus, against the logarithm of the period; the line is the fitted relation at [O/H] = 0. Crosses: rejected by the outlier rule.',
    alt:
      `${int(ceph.length)} Cepheids in ${hosts} systems, log period from ${fixed(pMin, 2)} to ${fixed(pMax, 2)}; ${int(nRej)} rejected. ` +
      (MW && bW
        ? `Fitted M_W = ${pm(MW.value, MW.err)} mag at log P = ${fixed(pivot, 2)}, slope b_W = ${pm(bW.value, bW.err)} mag/dex`
        : 'No fitted relation') +
      (r.parameters.Z_W ? `, metallicity term Z_W = ${pm(r.parameters.Z_W.value, r.parameters.Z_W.err)} mag/dex` : '') +
      `; intrinsic scatter ${fixed(r.fit.scatter.cepheids, 3)} mag.`,
    ...out,
    csv: cepheidCsv(r),
    thinned: t.note,
    blinded: false,
  };
}

/** The figure's table: every Cepheid with its magnitudes and residual. */
function cepheidCsv(r: Results): FigureSpec['csv'] {
  const ceph = r.rungs.cepheids;
  return {
    columns: [
      col('star', 'string'),
      col('system', 'string'),
      col('log_period', 'float64', '', 'log10 of the period in days'),
      col('w', 'float64', 'mag', 'apparent Wesenheit magnitude'),
      col('w_err', 'float64', 'mag'),
      col('oh', 'float64', 'dex'),
      col('abs_w', 'float64', 'mag', 'W minus the host distance modulus'),
      col('residual', 'float64', 'mag'),
      col('rejected', 'bool'),
    ],
    rows: ceph.map((c) => ({
      star: c.star,
      system: c.system,
      log_period: c.log_period,
      w: c.w,
      w_err: c.w_err,
      oh: c.oh,
      abs_w: c.abs_w,
      residual: c.residual,
      rejected: c.rejected,
    })),
  };
}
