/**
 * Figure "pl-residuals": residuals of the period-luminosity fit against log
 * period, with the fitted intrinsic scatter as dashed lines.
 */
import * as Plot from '@observablehq/plot';
import type { Results } from '../../types/results.ts';
import { objectLink } from '../../layout/anchors.ts';
import { fixed, int } from '../format.ts';
import { col, type FigureSpec, GREY, INK, legend, type LegendItem, r5, renderSvg, thin } from './plotting.ts';

export const ID = 'pl-residuals';

export function plResiduals(r: Results): FigureSpec | null {
  const ceph = r.rungs.cepheids;
  if (ceph.length === 0) return null;
  const t = thin(ceph, (c) => c.rejected);
  const index = new Map(ceph.map((c, i) => [c, i]));
  const rows = t.rows.map((c) => ({ p: r5(c.log_period), res: r5(c.residual), rejected: c.rejected, row: index.get(c)! }));
  const s = r.fit.scatter.cepheids;
  const items: LegendItem[] = [
    { label: 'Cepheid', kind: 'dot', symbol: 'circle', filled: false },
    ...(rows.some((d) => d.rejected) ? [{ label: 'rejected', kind: 'dot' as const, symbol: 'times' as const, filled: false }] : []),
    { label: `± intrinsic scatter (${fixed(s, 3)} mag)`, kind: 'line', dash: '5,3' },
  ];
  const leg = legend(items);
  const out = renderSvg({
    id: ID,
    label: 'Residuals of the period-luminosity fit',
    height: 320 + leg.marginTop,
    marginTop: leg.marginTop,
    x: { label: 'log₁₀ period (days)', nice: true },
    y: { label: 'Residual (mag)', nice: true },
    marks: [
      Plot.ruleY([0], { stroke: INK }),
      Plot.ruleY([-s, s], { stroke: GREY, strokeDasharray: '5,3' }),
      Plot.dot(rows.filter((d) => !d.rejected), { x: 'p', y: 'res', r: 2.2, fill: 'white', stroke: INK, strokeWidth: 0.7, className: 'hover-kept' }),
      Plot.dot(rows.filter((d) => d.rejected), { x: 'p', y: 'res', r: 4, symbol: 'times', stroke: INK, strokeWidth: 1.5, className: 'hover-rejected' }),
      ...leg.marks,
    ],
    hover: [
      { className: 'hover-kept', rows: rows.filter((d) => !d.rejected).map((d) => d.row) },
      { className: 'hover-rejected', rows: rows.filter((d) => d.rejected).map((d) => d.row) },
    ],
  });
  const kept = ceph.filter((c) => !c.rejected).map((c) => c.residual);
  const rms = kept.length ? Math.sqrt(kept.reduce((a, x) => a + x * x, 0) / kept.length) : NaN;
  const worst = ceph.reduce((m, c) => (Math.abs(c.residual) > Math.abs(m.residual) ? c : m), ceph[0]!);
  return {
    id: ID,
    title: 'Period–luminosity residuals',
    caption: 'Residual of each Cepheid from the fitted relation (observed minus model) against log period. Dashed: ± the fitted intrinsic scatter. Crosses: rejected.',
    alt: `${int(ceph.length)} residuals; root mean square of the ${int(kept.length)} kept is ${fixed(rms, 3)} mag, fitted intrinsic scatter ${fixed(s, 3)} mag; the largest residual is ${fixed(worst.residual, 2)} mag (${worst.star}, line ${worst.line}).`,
    ...out,
    csv: {
      columns: [col('star', 'string'), col('system', 'string'), col('line', 'int64', '', 'line in the input file'), col('log_period', 'float64'), col('residual', 'float64', 'mag'), col('rejected', 'bool'), col('page', 'string', '', 'the Cepheid’s row on its system’s page (site-relative link)')],
      rows: ceph.map((c) => ({ star: c.star, system: c.system, line: c.line, log_period: c.log_period, residual: c.residual, rejected: c.rejected, page: objectLink(r.release.id, c.system, c.star) })),
    },
    thinned: t.note,
    blinded: false,
  };
}
