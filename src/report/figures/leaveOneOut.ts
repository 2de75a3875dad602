/**
 * Figure "leave-one-out": the shift of H0 when each system is left out and the whole ladder is
 * refitted (src/report/leaveOneOut.ts), with its σ, one row per system, so a reader sees at once
 * whether one host drives the result. While the release is blinded the shifts are drawn relative
 * to H0 (the hidden factor cancels in the ratio).
 */
import * as Plot from '@observablehq/plot';
import type { Results } from '../../types/results.ts';
import { systemPagePath } from '../../layout/routes.ts';
import { fixed } from '../format.ts';
import { largestShift, type LeaveOneOut } from '../leaveOneOut.ts';
import { blindedStamp, clip, col, type FigureSpec, GREY, INK, legend, listText, r5, renderSvg } from './plotting.ts';

export const ID = 'leave-one-out';

export function leaveOneOutFigure(r: Results, loo: LeaveOneOut): FigureSpec | null {
  if (loo.h0 === null) return null;
  const h0 = loo.h0;
  const scale = r.blinded ? 100 / h0 : 1;
  const unit = r.blinded ? '% of H0' : 'km/s/Mpc';
  const ok = loo.entries.flatMap((e, i) => (e.shift !== null && e.shift_err !== null ? [{ i, e }] : []));
  if (ok.length === 0) return null;
  const rows = ok.map(({ i, e }) => ({
    row: i,
    label: clip(e.system, 26),
    x: r5(e.shift! * scale),
    lo: r5((e.shift! - e.shift_err!) * scale),
    hi: r5((e.shift! + e.shift_err!) * scale),
  }));
  const failed = loo.entries.filter((e) => e.shift === null);
  const leg = legend([{ label: 'H0 without the system − H0, ± σ of the difference', kind: 'dot', symbol: 'circle', filled: true }], undefined, 160);
  const xs = rows.flatMap((d) => [d.lo, d.hi]);
  const span = Math.max(...xs.map(Math.abs), 1e-6);
  const marks: Plot.Markish[] = [
    Plot.gridX({ stroke: GREY, strokeOpacity: 0.25 }),
    Plot.ruleX([0], { stroke: INK }),
    Plot.ruleY(rows, { y: 'label', x1: 'lo', x2: 'hi', stroke: INK }),
    Plot.dot(rows, { y: 'label', x: 'x', r: 4, fill: INK, className: 'hover-loo' }),
    ...leg.marks,
  ];
  if (r.blinded) marks.push(blindedStamp());
  const out = renderSvg({
    id: ID,
    label: 'Shift of H0 when each system is left out',
    height: leg.marginTop + 50 + 22 * rows.length,
    marginTop: leg.marginTop,
    marginLeft: 160,
    x: { label: `Shift of H0 (${unit})`, domain: [-1.1 * span, 1.1 * span] },
    y: { domain: rows.map((d) => d.label), label: null },
    marks,
    hover: [{ className: 'hover-loo', rows: rows.map((d) => d.row) }],
  });
  const worst = largestShift(loo.entries)!;
  const text = (e: (typeof ok)[number]['e']) => `${e.system}: ${fixed(e.shift! * scale, 2)} ± ${fixed(e.shift_err! * scale, 2)}`;
  return {
    id: ID,
    title: 'What each system does to H0',
    caption:
      'For each system, the change of H0 when every row naming it is removed and the whole ladder refitted (a full refit, not a linear estimate), with the σ of that change (the two fits share all other data, so σ² is the difference of their variances). A point far from zero in units of its bar means one system drives the result.' +
      (r.blinded ? ' While the release is blinded the shifts are shown relative to H0.' : ''),
    alt:
      `${ok.length} systems left out one at a time, shifts in ${unit}; the largest is ${text(worst)}. ${listText(
        ok.map((x) => text(x.e)),
        30,
      )}.` + (failed.length ? ` Cannot be left out: ${failed.map((e) => e.system).join(', ')}.` : ''),
    ...out,
    csv: {
      columns: [
        col('system', 'string'),
        col('h0_without', 'float64', 'km / (Mpc s)', r.blinded ? 'withheld while the release is blinded' : 'H0 refitted without the system'),
        col('shift', 'float64', 'km / (Mpc s)', r.blinded ? 'withheld while the release is blinded' : 'H0 without minus H0'),
        col('shift_err', 'float64', 'km / (Mpc s)', r.blinded ? 'withheld while the release is blinded' : 'sigma of the shift'),
        col('shift_percent', 'float64', '', 'shift relative to H0, per cent'),
        col('shift_err_percent', 'float64', ''),
        col('error', 'string', '', 'why the system cannot be left out'),
        col('page', 'string', '', 'the system’s page (site-relative link)'),
      ],
      rows: loo.entries.map((e) => ({
        system: e.system,
        h0_without: r.blinded ? null : e.h0,
        shift: r.blinded ? null : e.shift,
        shift_err: r.blinded ? null : e.shift_err,
        shift_percent: e.shift === null ? null : (100 * e.shift) / h0,
        shift_err_percent: e.shift_err === null ? null : (100 * e.shift_err) / h0,
        error: e.error,
        page: systemPagePath(r.release.id, e.system),
      })),
    },
    thinned: null,
    blinded: r.blinded,
  };
}
