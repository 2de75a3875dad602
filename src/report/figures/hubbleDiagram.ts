/**
 * Figure "hubble-diagram": distance modulus of the Hubble-flow supernovae
 * against redshift (log axis), with the fitted model (drawn through
 * mu - residual, so the figure re-computes nothing). Supernovae outside the
 * redshift range of the fit are open, rejected ones are crosses.
 */
import * as Plot from '@observablehq/plot';
import type { Results } from '../../types/results.ts';
import { fixed, int, pm } from '../format.ts';
import { blindedStamp, col, type FigureSpec, GREY, INK, legend, type LegendItem, r5, renderSvg, thin } from './plotting.ts';

export const ID = 'hubble-diagram';

type Cls = 'fit' | 'outside' | 'rejected';
export function snClass(s: { in_sample: boolean; rejected: boolean }): Cls {
  return s.rejected ? 'rejected' : s.in_sample ? 'fit' : 'outside';
}
export const SN_CLASSES: Record<Cls, { label: string; symbol: Plot.SymbolType; filled: boolean }> = {
  fit: { label: 'in the fit', symbol: 'circle', filled: true },
  outside: { label: 'outside the redshift range', symbol: 'circle', filled: false },
  rejected: { label: 'rejected', symbol: 'times', filled: false },
};
export function snMarks(rows: { x: number; y: number; cls: Cls }[]): Plot.Markish[] {
  return (['outside', 'fit', 'rejected'] as Cls[]).map((k) =>
    Plot.dot(
      rows.filter((d) => d.cls === k),
      {
        x: 'x',
        y: 'y',
        r: k === 'rejected' ? 4 : 2.2,
        symbol: SN_CLASSES[k].symbol,
        fill: SN_CLASSES[k].filled ? INK : 'white',
        stroke: k === 'fit' ? 'none' : INK,
        strokeWidth: k === 'rejected' ? 1.5 : 0.8,
      },
    ),
  );
}

export function hubbleDiagram(r: Results): FigureSpec | null {
  const flow = r.rungs.supernovae.hubble_flow.filter((s) => s.z !== null && s.z > 0);
  if (flow.length === 0) return null;
  const t = thin(flow, (s) => s.rejected);
  const rows = t.rows.map((s) => ({ x: r5(s.z!), y: r5(s.mu), cls: snClass(s) }));
  const model = flow
    .filter((s) => s.in_sample)
    .map((s) => ({ x: s.z!, y: s.mu - s.residual }))
    .sort((a, b) => a.x - b.x);
  const modelThin = thin(model, () => false, 120).rows.map((d) => ({ x: r5(d.x), y: r5(d.y) }));
  const blinded = r.blinded;
  const items: LegendItem[] = (['fit', 'outside', 'rejected'] as Cls[])
    .filter((k) => rows.some((d) => d.cls === k))
    .map((k) => ({ label: SN_CLASSES[k].label, kind: 'dot' as const, symbol: SN_CLASSES[k].symbol, filled: SN_CLASSES[k].filled }));
  items.push({ label: 'fitted model', kind: 'line', width: 1.5 });
  const leg = legend(items);
  const marks: Plot.Markish[] = [
    Plot.gridY({ stroke: GREY, strokeOpacity: 0.2 }),
    ...snMarks(rows),
    Plot.line(modelThin, { x: 'x', y: 'y', stroke: INK, strokeWidth: 1.5 }),
    ...leg.marks,
  ];
  if (blinded) marks.push(blindedStamp());
  const out = renderSvg({
    id: ID,
    label: 'Hubble diagram of the Hubble-flow supernovae',
    height: 420 + leg.marginTop,
    marginTop: leg.marginTop,
    x: {
      type: 'log',
      label: 'Redshift z (CMB frame)',
      tickFormat: (z: number) =>
        Math.abs(Math.log10(z) - Math.round(Math.log10(z))) < 1e-9 || [0.02, 0.05].some((v) => Math.abs(v - z) < 1e-12) ? String(z) : '',
    },
    y: { label: 'Distance modulus μ (mag)', nice: true },
    marks,
  });
  const nIn = flow.filter((s) => s.in_sample && !s.rejected).length;
  const zs = flow.map((s) => s.z!);
  const aB = r.parameters.a_B;
  return {
    id: ID,
    title: 'Hubble diagram',
    caption:
      'Distance modulus of each Hubble-flow supernova from its standardised magnitude and the fitted M_B, against redshift. Filled: in the fit; open: outside the redshift range; crosses: rejected. The line is the fitted model.' +
      (blinded ? ' The magnitudes carry the blinding offset.' : ''),
    alt:
      `${int(flow.length)} Hubble-flow supernovae with z from ${fixed(Math.min(...zs), 4)} to ${fixed(Math.max(...zs), 4)}; ${int(nIn)} in the fit, ` +
      `${int(flow.filter((s) => !s.in_sample).length)} outside the range ${r.analysis.z_min}–${r.analysis.z_max}, ${int(flow.filter((s) => s.rejected).length)} rejected.` +
      (aB ? ` Intercept a_B = ${pm(aB.value, aB.err)}${blinded ? ' (BLINDED)' : ''}.` : '') +
      (r.h0 ? ` H0 = ${pm(r.h0.value, r.h0.stat)} km/s/Mpc (statistical)${blinded ? ', BLINDED' : ''}.` : ''),
    ...out,
    csv: {
      columns: [
        col('sn', 'string'),
        col('z', 'float64'),
        col('mu', 'float64', 'mag'),
        col('mu_err', 'float64', 'mag'),
        col('model_mu', 'float64', 'mag', 'mu - residual'),
        col('in_sample', 'bool'),
        col('rejected', 'bool'),
      ],
      rows: flow.map((s) => ({ sn: s.sn, z: s.z, mu: s.mu, mu_err: s.m_corr_err, model_mu: s.mu - s.residual, in_sample: s.in_sample, rejected: s.rejected })),
    },
    thinned: t.note,
    blinded,
  };
}
