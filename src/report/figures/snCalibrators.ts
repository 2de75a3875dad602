/**
 * Figure "sn-calibrators": for each calibrator supernova, the absolute
 * magnitude implied by its host's distance (standardised magnitude minus host
 * modulus), with the fitted M_B as a band.
 */
import * as Plot from '@observablehq/plot';
import type { Results } from '../../types/results.ts';
import { parameterBlinded } from '../blinding.ts';
import { objectLink } from '../../layout/routes.ts';
import { pm } from '../format.ts';
import { blindedStamp, clip, col, type FigureSpec, GREY, INK, legend, type LegendItem, listText, PALE, r5, renderSvg } from './plotting.ts';

export const ID = 'sn-calibrators';

export function snCalibrators(r: Results): FigureSpec | null {
  const cal = r.rungs.supernovae.calibrators;
  if (cal.length === 0) return null;
  const hostErr = new Map(r.systems.map((s) => [s.id, s.mu_err ?? 0]));
  const data = cal.map((c) => {
    const m = c.m_corr - c.mu;
    const err = Math.hypot(c.m_corr_err, c.system ? (hostErr.get(c.system) ?? 0) : 0);
    return { sn: c.sn, host: c.system ?? '', label: clip(`${c.sn} (${c.system ?? '?'})`, 30), m, err, rejected: c.rejected };
  });
  const kept = data.flatMap((d, i) => (d.rejected ? [] : [i]));
  const rejected = data.flatMap((d, i) => (d.rejected ? [i] : []));
  const rows = data.map((d) => ({ ...d, m: r5(d.m), lo: r5(d.m - d.err), hi: r5(d.m + d.err) }));
  const MB = r.parameters.M_B;
  const blinded = parameterBlinded(r, 'M_B');
  const items: LegendItem[] = [
    { label: 'calibrator', kind: 'dot', symbol: 'circle', filled: true },
    ...(rows.some((d) => d.rejected) ? [{ label: 'rejected', kind: 'dot' as const, symbol: 'times' as const, filled: false }] : []),
    ...(MB ? [{ label: 'fitted M_B ± 1σ', kind: 'band' as const, fill: PALE }] : []),
  ];
  const leg = legend(items, undefined, 200);
  const marks: Plot.Markish[] = [];
  if (MB) {
    marks.push(Plot.rectX([0], { x1: MB.value - MB.err, x2: MB.value + MB.err, fill: PALE }));
    marks.push(Plot.ruleX([MB.value], { stroke: GREY, strokeWidth: 1.5 }));
  }
  marks.push(
    Plot.ruleY(rows, { y: 'label', x1: 'lo', x2: 'hi', stroke: INK }),
    Plot.dot(
      rows.filter((d) => !d.rejected),
      { y: 'label', x: 'm', r: 4, fill: INK, className: 'hover-kept' },
    ),
    Plot.dot(
      rows.filter((d) => d.rejected),
      { y: 'label', x: 'm', r: 5, symbol: 'times', stroke: INK, strokeWidth: 1.5, className: 'hover-rejected' },
    ),
    ...leg.marks,
  );
  if (blinded) marks.push(blindedStamp());
  const out = renderSvg({
    id: ID,
    label: 'Absolute magnitude of each calibrator supernova',
    height: leg.marginTop + 50 + 30 * rows.length,
    marginTop: leg.marginTop,
    marginLeft: 200,
    x: { label: 'Standardised magnitude minus host modulus (mag)', nice: true, inset: 10 },
    y: { domain: rows.map((d) => d.label), label: null },
    marks,
    hover: [
      { className: 'hover-kept', rows: kept },
      { className: 'hover-rejected', rows: rejected },
    ],
  });
  return {
    id: ID,
    title: 'Supernova calibrators',
    caption:
      'Absolute magnitude implied by each calibrator: its standardised peak magnitude minus its host’s Cepheid distance modulus, with the two errors combined. The band is the fitted M_B ± 1σ. Crosses: rejected.' +
      (blinded ? ' M_B is shown while the release is blinded.' : ''),
    alt:
      `${cal.length} calibrators` +
      (MB ? `; fitted M_B = ${pm(MB.value, MB.err)} mag${blinded ? ' (BLINDED)' : ''}` : '') +
      `. ${listText(data.map((d) => `${d.sn} in ${d.host}: ${pm(d.m, d.err)} mag${d.rejected ? ' (rejected)' : ''}`))}.`,
    ...out,
    csv: calibratorCsv(r, data),
    thinned: null,
    blinded,
  };
}

/** The figure's table: each calibrator with its host modulus and the absolute magnitude it implies, linked to its row. */
function calibratorCsv(r: Results, data: readonly { m: number; err: number }[]): FigureSpec['csv'] {
  const cal = r.rungs.supernovae.calibrators;
  return {
    columns: [
      col('sn', 'string'),
      col('system', 'string'),
      col('m_corr', 'float64', 'mag', 'standardised peak magnitude'),
      col('m_corr_err', 'float64', 'mag'),
      col('host_mu', 'float64', 'mag'),
      col('abs_mag', 'float64', 'mag', 'm_corr - host_mu'),
      col('abs_mag_err', 'float64', 'mag', 'with the host distance error'),
      col('rejected', 'bool'),
      col('page', 'string', '', 'the supernova’s row on its host’s page (site-relative link)'),
    ],
    rows: cal.map((c, i) => ({
      sn: c.sn,
      system: c.system,
      m_corr: c.m_corr,
      m_corr_err: c.m_corr_err,
      host_mu: c.mu,
      abs_mag: data[i]!.m,
      abs_mag_err: data[i]!.err,
      rejected: c.rejected,
      page: c.system === null ? null : objectLink(r.release.id, c.system, c.sn),
    })),
  };
}
