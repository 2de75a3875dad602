/**
 * Data of the overlay figures (both releases in one figure, changed points marked): the
 * period-luminosity relation, the Hubble diagram and the ladder diagram. Taken from the two
 * results (nothing is recomputed); `changed` marks a point whose input row was added, removed
 * or changed. The report draws them; here only the numbers are chosen.
 */
import { distanceMpcFromModulus } from '../ladder/distance.ts';
import type { TableName } from '../types/release.ts';
import type { Results } from '../types/results.ts';
import type { Overlay, OverlayPoint, OverlaySide, RowStatus } from './types.ts';

/** Most model points kept per line (the line is smooth; more adds bytes, not information). */
export const MODEL_POINTS_MAX = 200;

export type StatusOf = (table: TableName, id: string) => RowStatus;

/** Rungs of the ladder diagram, x = index. */
export const LADDER_RUNGS = ['Parallax', 'Main sequence', 'Cepheids', 'Hubble flow'] as const;
const METHOD_RUNG: Record<string, number> = { parallax: 0, main_sequence: 1, cepheid: 2 };

function thinModel(points: { x: number; y: number }[]): { x: number; y: number }[] {
  if (points.length <= MODEL_POINTS_MAX) return points;
  const step = (points.length - 1) / (MODEL_POINTS_MAX - 1);
  return Array.from({ length: MODEL_POINTS_MAX }, (_, i) => points[Math.round(i * step)]);
}

function point(id: string, system: string | null, x: number, y: number, yErr: number | null, rejected: boolean, status: RowStatus): OverlayPoint {
  return { id, system, x, y, y_err: yErr, rejected, changed: status !== 'same', status };
}

function plSide(r: Results, statusOf: StatusOf): OverlaySide {
  const ceph = r.rungs.cepheids;
  const points = ceph.map((c) => point(c.star, c.system, c.log_period, c.abs_w, c.w_err, c.rejected, statusOf('cepheids', c.star)));
  const MW = r.parameters.M_W;
  const bW = r.parameters.b_W;
  let model: { x: number; y: number }[] = [];
  if (MW && bW && ceph.length > 0) {
    const xs = ceph.map((c) => c.log_period);
    const pivot = r.analysis.pl_pivot_logp;
    model = [Math.min(...xs), Math.max(...xs)].map((x) => ({ x, y: MW.value + bW.value * (x - pivot) }));
  }
  return { points, model };
}

function hubbleSide(r: Results, statusOf: StatusOf): OverlaySide {
  const flow = r.rungs.supernovae.hubble_flow.filter((s) => s.z !== null && s.z > 0 && Number.isFinite(s.mu));
  const points = flow.map((s) => point(s.sn, null, s.z!, s.mu, s.m_corr_err, s.rejected, statusOf('sn_hubble_flow', s.sn)));
  const model = flow
    .filter((s) => s.in_sample && Number.isFinite(s.residual))
    .map((s) => ({ x: s.z!, y: s.mu - s.residual }))
    .sort((p, q) => p.x - q.x);
  return { points, model: thinModel(model) };
}

function ladderSide(r: Results, systemChanged: (id: string) => boolean, statusOf: StatusOf, withFlow: boolean): OverlaySide {
  const points: OverlayPoint[] = [];
  for (const s of r.systems) {
    const rung = METHOD_RUNG[s.method];
    if (rung === undefined || s.mu === null || s.distance_mpc === null) continue;
    // distance error from the modulus error, first order: d ln10 / 5 * sigma_mu
    const err = s.mu_err === null ? null : (s.distance_mpc * Math.LN10 * s.mu_err) / 5;
    points.push(point(s.id, s.id, rung, s.distance_mpc, err, false, systemChanged(s.id) ? 'corrected' : 'same'));
  }
  for (const sn of withFlow ? r.rungs.supernovae.hubble_flow : []) {
    if (!sn.in_sample || !Number.isFinite(sn.mu)) continue;
    const d = distanceMpcFromModulus(sn.mu);
    points.push(point(sn.sn, null, 3, d, (d * Math.LN10 * sn.m_corr_err) / 5, sn.rejected, statusOf('sn_hubble_flow', sn.sn)));
  }
  return { points, model: [] };
}

export const FLOW_WITHHELD =
  'Hubble-flow points are left out: the releases are not blinded alike, and the offset between the two samples about the unblinded model would measure the hidden blinding offset';

const EMPTY: OverlaySide = { points: [], model: [] };

/**
 * The three overlays. `statusOf` gives a row's status between the releases; `systemChanged`
 * whether any input row of a system changed (used for the ladder diagram, where a point is a system:
 * its status there is 'corrected' for any change). With `hideFlow` (the H0 shift is withheld by
 * blinding) the Hubble-flow supernovae are left out of every overlay.
 */
export function buildOverlays(a: Results, b: Results, statusOf: StatusOf, systemChanged: (id: string) => boolean, hideFlow = false): Overlay[] {
  const blinded = a.blinded || b.blinded;
  const withheld = hideFlow ? FLOW_WITHHELD : null;
  return [
    {
      id: 'pl-relation',
      title: 'Period–luminosity relation, both releases',
      x_label: 'log10 period (days)',
      y_label: 'absolute Wesenheit magnitude W - mu (mag)',
      x_log: false,
      y_log: false,
      x_categories: null,
      a: plSide(a, statusOf),
      b: plSide(b, statusOf),
      blinded: false,
      withheld: null,
    },
    {
      id: 'hubble-diagram',
      title: 'Hubble diagram, both releases',
      x_label: 'redshift z',
      y_label: 'distance modulus mu (mag)',
      x_log: true,
      y_log: false,
      x_categories: null,
      a: hideFlow ? EMPTY : hubbleSide(a, statusOf),
      b: hideFlow ? EMPTY : hubbleSide(b, statusOf),
      blinded,
      withheld,
    },
    {
      id: 'ladder-diagram',
      title: 'Distance ladder, both releases',
      x_label: 'rung',
      y_label: 'distance (Mpc)',
      x_log: false,
      y_log: true,
      x_categories: [...LADDER_RUNGS],
      a: ladderSide(a, systemChanged, statusOf, !hideFlow),
      b: ladderSide(b, systemChanged, statusOf, !hideFlow),
      blinded,
      withheld,
    },
  ];
}
