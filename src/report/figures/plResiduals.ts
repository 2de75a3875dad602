/**
 * Figure "pl-residuals": residuals of the period-luminosity fit against log
 * period, with the fitted intrinsic scatter as dashed lines.
 */
import * as Plot from '@observablehq/plot';
import type { Results } from '../../types/results.ts';
import { objectLink } from '../../layout/routes.ts';
import { fixed, int } from '../format.ts';
import { col, type FigureSpec, GREY, INK, legend, type LegendItem, r5, renderSvg, thin } from './plotting.ts';

export const ID = 'pl-residuals';

type Cepheid = Results['rungs']['cepheids'][number];
/** One drawn residual: log period, residual, rejected, and its row in the figure's CSV. */
export interface ResidualPoint {
  p: number;
  res: number;
  rejected: boolean;
  row: number;
}

/**
 * What every period–luminosity residual figure draws (this one and a system's own,
 * src/report/figures/systemFigures.ts): a zero line, ± the intrinsic scatter dashed, kept Cepheids
 * as open circles and rejected ones as crosses, both hoverable, and the legend for them.
 */
export function residualLayers(
  rows: readonly ResidualPoint[],
  scatter: number,
  o: { pointLabel: string; scatterLabel: string; dotR: number; dotStroke: number },
) {
  const leg = legend([
    { label: o.pointLabel, kind: 'dot', symbol: 'circle', filled: false },
    ...(rows.some((d) => d.rejected) ? [{ label: 'rejected', kind: 'dot' as const, symbol: 'times' as const, filled: false }] : []),
    { label: `± ${o.scatterLabel} (${fixed(scatter, 3)} mag)`, kind: 'line', dash: '5,3' },
  ] satisfies LegendItem[]);
  const kept = rows.filter((d) => !d.rejected);
  const rej = rows.filter((d) => d.rejected);
  return {
    leg,
    marks: [
      Plot.ruleY([0], { stroke: INK }),
      Plot.ruleY([-scatter, scatter], { stroke: GREY, strokeDasharray: '5,3' }),
      Plot.dot(kept, { x: 'p', y: 'res', r: o.dotR, fill: 'white', stroke: INK, strokeWidth: o.dotStroke, className: 'hover-kept' }),
      Plot.dot(rej, { x: 'p', y: 'res', r: 4, symbol: 'times', stroke: INK, strokeWidth: 1.5, className: 'hover-rejected' }),
      ...leg.marks,
    ],
    hover: [
      { className: 'hover-kept', rows: kept.map((d) => d.row) },
      { className: 'hover-rejected', rows: rej.map((d) => d.row) },
    ],
  };
}

/** The CSV of a residual figure: one row per Cepheid, with a link to its row on its system's page. */
export function residualCsv(release: string, ceph: readonly Cepheid[]): FigureSpec['csv'] {
  return {
    columns: [
      col('star', 'string'),
      col('system', 'string'),
      col('line', 'int64', '', 'line in the input file'),
      col('log_period', 'float64'),
      col('residual', 'float64', 'mag'),
      col('rejected', 'bool'),
      col('page', 'string', '', 'the Cepheid’s row on its system’s page (site-relative link)'),
    ],
    rows: ceph.map((c) => ({
      star: c.star,
      system: c.system,
      line: c.line,
      log_period: c.log_period,
      residual: c.residual,
      rejected: c.rejected,
      page: objectLink(release, c.system, c.star),
    })),
  };
}

export function plResiduals(r: Results): FigureSpec | null {
  const ceph = r.rungs.cepheids;
  if (ceph.length === 0) return null;
  const t = thin(ceph, (c) => c.rejected);
  const index = new Map(ceph.map((c, i) => [c, i]));
  const rows = t.rows.map((c) => ({ p: r5(c.log_period), res: r5(c.residual), rejected: c.rejected, row: index.get(c)! }));
  const s = r.fit.scatter.cepheids;
  const layers = residualLayers(rows, s, { pointLabel: 'Cepheid', scatterLabel: 'intrinsic scatter', dotR: 2.2, dotStroke: 0.7 });
  const out = renderSvg({
    id: ID,
    label: 'Residuals of the period-luminosity fit',
    height: 320 + layers.leg.marginTop,
    marginTop: layers.leg.marginTop,
    x: { label: 'log₁₀ period (days)', nice: true },
    y: { label: 'Residual (mag)', nice: true },
    marks: layers.marks,
    hover: layers.hover,
  });
  const kept = ceph.filter((c) => !c.rejected).map((c) => c.residual);
  const rms = kept.length ? Math.sqrt(kept.reduce((a, x) => a + x * x, 0) / kept.length) : NaN;
  const worst = ceph.reduce((m, c) => (Math.abs(c.residual) > Math.abs(m.residual) ? c : m), ceph[0]!);
  return {
    id: ID,
    title: 'Period–luminosity residuals',
    caption:
      'Residual of each Cepheid from the fitted relation (observed minus model) against log period. Dashed: ± the fitted intrinsic scatter. Crosses: rejected.',
    alt: `${int(ceph.length)} residuals; root mean square of the ${int(kept.length)} kept is ${fixed(rms, 3)} mag, fitted intrinsic scatter ${fixed(s, 3)} mag; the largest residual is ${fixed(worst.residual, 2)} mag (${worst.star}, line ${worst.line}).`,
    ...out,
    csv: residualCsv(r.release.id, ceph),
    thinned: t.note,
    blinded: false,
  };
}
