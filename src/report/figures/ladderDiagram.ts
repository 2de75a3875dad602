/**
 * Figure "ladder-diagram": every system's distance against the rung that gave
 * it, with its error, on a log distance axis; the Hubble-flow supernovae form
 * the top rung. Systems within a rung are spread vertically so they do not hide
 * each other.
 */
import * as Plot from '@observablehq/plot';
import { distanceMpcFromModulus } from '../../ladder/distance.ts';
import type { Results } from '../../types/results.ts';
import { distanceText, distanceTickText, int, pm } from '../format.ts';
import { blindedStamp, col, type FigureSpec, GREY, INK, legend, listText, r5, renderSvg, thin } from './plotting.ts';

export const ID = 'ladder-diagram';

const RUNGS = ['Parallax', 'Main sequence', 'Cepheids', 'Hubble flow'] as const;
const METHOD_RUNG: Record<string, number> = { parallax: 0, main_sequence: 1, cepheid: 2 };

interface Point {
  name: string;
  kind: 'cluster' | 'galaxy' | 'field' | 'supernova';
  rung: number;
  y: number;
  mu: number;
  muErr: number;
  d: number;
  dLo: number;
  dHi: number;
}

const SYMBOLS: Record<Point['kind'], { symbol: Plot.SymbolType; filled: boolean; label: string }> = {
  cluster: { symbol: 'circle', filled: true, label: 'cluster' },
  field: { symbol: 'triangle', filled: false, label: 'field stars' },
  galaxy: { symbol: 'square', filled: true, label: 'galaxy' },
  supernova: { symbol: 'circle', filled: false, label: 'Hubble-flow supernova' },
};

/** Vertical spread inside a rung band: five lanes, assigned in distance order. */
function lane(k: number): number {
  return ((k % 5) - 2) * 0.13;
}

/** Every system with a distance at its rung, and the Hubble-flow supernovae in the sample at the top rung. */
function ladderPoints(r: Results): Point[] {
  const points: Point[] = [];
  for (const s of r.systems) {
    if (s.mu === null || s.mu_err === null) continue;
    const rung = METHOD_RUNG[s.method];
    if (rung === undefined) continue;
    points.push({
      name: s.id,
      kind: s.kind,
      rung,
      y: rung,
      mu: s.mu,
      muErr: s.mu_err,
      d: s.distance_mpc ?? distanceMpcFromModulus(s.mu),
      dLo: distanceMpcFromModulus(s.mu - s.mu_err),
      dHi: distanceMpcFromModulus(s.mu + s.mu_err),
    });
  }
  const flowAll = r.rungs.supernovae.hubble_flow.filter((sn) => sn.in_sample && !sn.rejected);
  for (const sn of flowAll) {
    points.push({
      name: sn.sn,
      kind: 'supernova',
      rung: 3,
      y: 3,
      mu: sn.mu,
      muErr: sn.m_corr_err,
      d: distanceMpcFromModulus(sn.mu),
      dLo: distanceMpcFromModulus(sn.mu - sn.m_corr_err),
      dHi: distanceMpcFromModulus(sn.mu + sn.m_corr_err),
    });
  }
  // Spread within each rung (by distance order, so neighbours sit in different lanes).
  for (let rung = 0; rung < RUNGS.length; rung++) {
    points
      .filter((p) => p.rung === rung)
      .sort((a, b) => a.d - b.d || a.name.localeCompare(b.name))
      .forEach((p, k) => {
        p.y = rung + lane(k);
      });
  }
  return points;
}

/** The marks: error bars, one symbol per kind of system, the legend, and the notes of a rung not reached or blinded. */
function ladderMarks(r: Results, drawn: Point[], kinds: readonly Point['kind'][], leg: ReturnType<typeof legend>, blinded: boolean): Plot.Markish[] {
  const marks: Plot.Markish[] = [
    Plot.gridX({ stroke: GREY, strokeOpacity: 0.25 }),
    Plot.link(drawn, { x1: 'dLo', x2: 'dHi', y1: 'y', y2: 'y', stroke: INK, strokeWidth: 1 }),
    ...kinds.map((k) =>
      Plot.dot(
        drawn.filter((p) => p.kind === k),
        { x: 'd', y: 'y', symbol: SYMBOLS[k].symbol, r: k === 'supernova' ? 2.5 : 4, stroke: INK, fill: SYMBOLS[k].filled ? INK : 'white', strokeWidth: 1 },
      ),
    ),
    ...leg.marks,
  ];
  if (r.rungs.supernovae.hubble_flow.length === 0) {
    marks.push(
      Plot.text(['not reached in this release'], {
        x: Math.sqrt(Math.min(...drawn.map((p) => p.d)) * Math.max(...drawn.map((p) => p.d))),
        y: 3,
        fill: GREY,
        fontStyle: 'italic',
      }),
    );
  }
  if (blinded) marks.push(blindedStamp());
  return marks;
}

/** The figure in words, rung by rung (its alternative text). */
function ladderInWords(systemsPts: readonly Point[], flowPts: readonly Point[]): string[] {
  return RUNGS.map((name, i) => {
    const ps = systemsPts.filter((p) => p.rung === i);
    if (i === 3) {
      if (flowPts.length === 0) return `${name}: not reached`;
      const ds = flowPts.map((p) => p.d);
      return `${name}: ${int(flowPts.length)} supernovae from ${distanceText(Math.min(...ds))} to ${distanceText(Math.max(...ds))}`;
    }
    if (ps.length === 0) return `${name}: none`;
    return `${name}: ${listText(
      ps.map((p) => `${p.name} ${distanceText(p.d)} (μ = ${pm(p.mu, p.muErr)} mag)`),
      8,
    )}`;
  });
}

/** The figure's data as a table (every point, not only those drawn). */
function ladderCsv(points: readonly Point[]): NonNullable<FigureSpec['csv']> {
  return {
    columns: [
      col('name', 'string', undefined, 'system or supernova'),
      col('kind', 'string'),
      col('rung', 'string'),
      col('mu', 'float64', 'mag', 'distance modulus'),
      col('mu_err', 'float64', 'mag'),
      col('distance', 'float64', 'Mpc'),
      col('distance_lo', 'float64', 'Mpc', 'distance at mu - mu_err'),
      col('distance_hi', 'float64', 'Mpc', 'distance at mu + mu_err'),
    ],
    rows: points.map((p) => ({
      name: p.name,
      kind: p.kind,
      rung: RUNGS[p.rung]!,
      mu: p.mu,
      mu_err: p.muErr,
      distance: p.d,
      distance_lo: p.dLo,
      distance_hi: p.dHi,
    })),
  };
}

export function ladderDiagram(r: Results): FigureSpec | null {
  const points = ladderPoints(r);
  if (points.length === 0) return null;

  const systemsPts = points.filter((p) => p.kind !== 'supernova');
  const flowPts = points.filter((p) => p.kind === 'supernova');
  const thinned = thin(flowPts, () => false, 300);
  const drawn = [...systemsPts, ...thinned.rows].map((p) => ({ ...p, d: r5(p.d), dLo: r5(p.dLo), dHi: r5(p.dHi), y: r5(p.y) }));

  const kinds = (['cluster', 'field', 'galaxy', 'supernova'] as const).filter((k) => drawn.some((p) => p.kind === k));
  const blinded = r.blinded && flowPts.length > 0;
  const leg = legend(
    [
      ...kinds.map((k) => ({ label: SYMBOLS[k].label, kind: 'dot' as const, symbol: SYMBOLS[k].symbol, filled: SYMBOLS[k].filled })),
      { label: '± 1σ', kind: 'line' as const, width: 1 },
    ],
    undefined,
    110,
  );

  const height = 330 + leg.marginTop;
  const out = renderSvg({
    id: ID,
    label: 'Ladder diagram: distance of every system against its rung',
    height,
    marginLeft: 110,
    marginTop: leg.marginTop,
    x: { type: 'log', label: 'Distance (Mpc)', tickFormat: distanceTickText },
    y: { domain: [-0.5, RUNGS.length - 0.5], ticks: [0, 1, 2, 3], tickFormat: (i: number) => RUNGS[i] ?? '', label: null, reverse: true },
    marks: ladderMarks(r, drawn, kinds, leg, blinded),
  });

  return {
    id: ID,
    title: 'The distance ladder',
    caption:
      'Each system at the distance its rung gave it, on a logarithmic axis; horizontal bars are ±1σ. ' +
      'Filled circles: clusters; open triangles: field stars; filled squares: galaxies; small open circles: Hubble-flow supernovae.' +
      (blinded ? ' Supernova distances carry the blinding offset.' : ''),
    alt: `Ladder diagram. ${ladderInWords(systemsPts, flowPts).join('. ')}.`,
    ...out,
    csv: ladderCsv(points),
    thinned: thinned.note,
    blinded,
  };
}
