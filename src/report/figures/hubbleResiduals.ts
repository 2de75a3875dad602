/**
 * Figure "hubble-residuals": Hubble-diagram residuals against redshift, with
 * the redshift range of the fit shaded and the fitted scatter dashed.
 */
import * as Plot from '@observablehq/plot';
import type { Results } from '../../types/results.ts';
import { fixed, int } from '../format.ts';
import { snClass, snMarks, SN_CLASSES } from './hubbleDiagram.ts';
import { blindedStamp, col, type FigureSpec, GREY, INK, legend, type LegendItem, PALE, r5, renderSvg, thin } from './plotting.ts';

export const ID = 'hubble-residuals';

export function hubbleResiduals(r: Results): FigureSpec | null {
  const flow = r.rungs.supernovae.hubble_flow.filter((s) => s.z !== null && s.z > 0);
  if (flow.length === 0) return null;
  const t = thin(flow, (s) => s.rejected);
  const rows = t.rows.map((s) => ({ x: r5(s.z!), y: r5(s.residual), cls: snClass(s) }));
  const s = r.fit.scatter.supernovae;
  const items: LegendItem[] = (['fit', 'outside', 'rejected'] as const)
    .filter((k) => rows.some((d) => d.cls === k))
    .map((k) => ({ label: SN_CLASSES[k].label, kind: 'dot' as const, symbol: SN_CLASSES[k].symbol, filled: SN_CLASSES[k].filled }));
  items.push({ label: 'range of the fit', kind: 'band', fill: PALE }, { label: '± scatter', kind: 'line', dash: '5,3' });
  const leg = legend(items);
  const marks: Plot.Markish[] = [
    Plot.rectX([0], { x1: r.analysis.z_min, x2: r.analysis.z_max, fill: PALE }),
    Plot.ruleY([0], { stroke: INK }),
    Plot.ruleY([-s, s], { stroke: GREY, strokeDasharray: '5,3' }),
    ...snMarks(rows),
    ...leg.marks,
  ];
  if (r.blinded) marks.push(blindedStamp());
  const out = renderSvg({
    id: ID,
    label: 'Hubble-diagram residuals against redshift',
    height: 320 + leg.marginTop,
    marginTop: leg.marginTop,
    x: {
      type: 'log',
      label: 'Redshift z (CMB frame)',
      tickFormat: (z: number) =>
        Math.abs(Math.log10(z) - Math.round(Math.log10(z))) < 1e-9 || [0.02, 0.05].some((v) => Math.abs(v - z) < 1e-12) ? String(z) : '',
    },
    y: { label: 'Residual (mag)', nice: true },
    marks,
  });
  const kept = flow.filter((x) => x.in_sample && !x.rejected).map((x) => x.residual);
  const rms = kept.length ? Math.sqrt(kept.reduce((a, x) => a + x * x, 0) / kept.length) : NaN;
  return {
    id: ID,
    title: 'Hubble-diagram residuals',
    caption: `Residual of each Hubble-flow supernova from the fitted model against redshift. Shaded: the redshift range of the fit (${r.analysis.z_min} to ${r.analysis.z_max}); dashed: ± the fitted scatter.`,
    alt: `${int(flow.length)} residuals; root mean square of the ${int(kept.length)} in the fit is ${fixed(rms, 3)} mag; fitted scatter ${fixed(s, 3)} mag; ${int(flow.filter((x) => x.rejected).length)} rejected.`,
    ...out,
    csv: {
      columns: [
        col('sn', 'string'),
        col('line', 'int64'),
        col('z', 'float64'),
        col('residual', 'float64', 'mag'),
        col('in_sample', 'bool'),
        col('rejected', 'bool'),
      ],
      rows: flow.map((x) => ({ sn: x.sn, line: x.line, z: x.z, residual: x.residual, in_sample: x.in_sample, rejected: x.rejected })),
    },
    thinned: t.note,
    blinded: r.blinded,
  };
}
