/**
 * Figure "h0-history": H0 of every release in date order, with statistical
 * (thick) and total (thin) errors. A blinded release shows no value, only the
 * word BLINDED: next to unblinded releases its number would hint at the offset.
 */
import * as Plot from '@observablehq/plot';
import type { Results } from '../../types/results.ts';
import { pm } from '../format.ts';
import { clip, col, type FigureSpec, GREY, INK, legend, listText, r5, renderSvg } from './plotting.ts';
import { oldestFirst } from '../history.ts';

export const ID = 'h0-history';

export function h0History(all: readonly Results[]): FigureSpec | null {
  if (all.length === 0) return null;
  const ordered = oldestFirst(all);
  const labels = ordered.map((r) => clip(r.release.id, 20));
  const shown = ordered.filter((r) => r.h0 !== null && !r.blinded);
  const rows = shown.map((r) => ({
    label: clip(r.release.id, 20),
    v: r5(r.h0!.value),
    sLo: r5(r.h0!.value - r.h0!.stat),
    sHi: r5(r.h0!.value + r.h0!.stat),
    tLo: r5(r.h0!.value - r.h0!.total),
    tHi: r5(r.h0!.value + r.h0!.total),
  }));
  const notes = ordered
    .filter((r) => r.h0 === null || r.blinded)
    .map((r) => ({ label: clip(r.release.id, 20), text: r.blinded && r.h0 !== null ? 'BLINDED' : 'no H0 (ladder stops earlier)' }));
  const leg = legend(
    [
      { label: 'H0', kind: 'dot', symbol: 'circle', filled: true },
      { label: 'statistical', kind: 'line', width: 4 },
      { label: 'total', kind: 'line', width: 1 },
    ],
    undefined,
    90,
  );
  const xs = rows.flatMap((d) => [d.tLo, d.tHi]);
  const domain: [number, number] = xs.length ? [Math.min(...xs) - 0.5, Math.max(...xs) + 0.5] : [60, 80];
  const mid = (domain[0] + domain[1]) / 2;
  const out = renderSvg({
    id: ID,
    label: 'H0 across releases',
    height: leg.marginTop + 50 + 32 * labels.length,
    marginTop: leg.marginTop,
    marginLeft: 90,
    x: { label: 'H0 (km/s/Mpc)', domain },
    y: { domain: labels, label: null },
    marks: [
      Plot.gridX({ stroke: GREY, strokeOpacity: 0.25 }),
      Plot.ruleY(rows, { y: 'label', x1: 'tLo', x2: 'tHi', stroke: INK, strokeWidth: 1 }),
      Plot.ruleY(rows, { y: 'label', x1: 'sLo', x2: 'sHi', stroke: INK, strokeWidth: 4 }),
      Plot.dot(rows, { y: 'label', x: 'v', r: 4.5, fill: INK, stroke: 'white' }),
      Plot.text(notes, { y: 'label', x: mid, text: 'text', fill: INK, fontWeight: 'bold' }),
      ...leg.marks,
    ],
  });
  return {
    id: ID,
    title: 'H0 across releases',
    caption: 'H0 of each release, oldest at the top, with its statistical error (thick bar) and total error (thin bar). Blinded releases show no value.',
    alt: `H0 of ${ordered.length} releases: ${listText(
      ordered.map(
        (r) =>
          `${r.release.id}: ${r.h0 === null ? 'no H0' : r.blinded ? 'blinded' : `${pm(r.h0.value, r.h0.stat)} (stat) ± ${pm(r.h0.sys, null)} (sys) km/s/Mpc`}`,
      ),
      20,
    )}.`,
    ...out,
    csv: historyCsv(ordered),
    thinned: null,
    blinded: false,
  };
}

/** The figure's table: each release's H0 and errors, the value left empty when blinded or not measured. */
function historyCsv(ordered: readonly Results[]): FigureSpec['csv'] {
  return {
    columns: [
      col('release', 'string'),
      col('date', 'string'),
      col('blinded', 'bool'),
      col('h0', 'float64', 'km / (Mpc s)', 'empty when blinded or not measured'),
      col('h0_stat', 'float64', 'km / (Mpc s)'),
      col('h0_sys', 'float64', 'km / (Mpc s)'),
      col('h0_total', 'float64', 'km / (Mpc s)'),
    ],
    rows: ordered.map((r) => {
      const hide = r.h0 === null || r.blinded;
      return {
        release: r.release.id,
        date: r.release.date,
        blinded: r.blinded,
        h0: hide ? null : r.h0!.value,
        h0_stat: r.h0?.stat ?? null,
        h0_sys: r.h0?.sys ?? null,
        h0_total: r.h0?.total ?? null,
      };
    }),
  };
}
