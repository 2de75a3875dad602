/**
 * The drill-down pages of a release: a page per system (what it is, which rung gives its
 * distance, its distance before and after the global fit, its objects with their input file and
 * line, its distance across releases, what leaving it out does to H0) and the systems index.
 * Pure: from results.json, the leave-one-out refits and the other releases' system distances.
 */
import type { Results, SystemResult } from '../types/results.ts';
import { assertUnique, objectAnchor, systemSegment } from '../layout/anchors.ts';
import { systemPagePath } from '../layout/routes.ts';
import { distanceMpcFromModulus } from '../ladder/distance.ts';
import { largestShift, shiftedEntries, type LeaveOneOut, type LeaveOneOutEntry } from './leaveOneOut.ts';
import { signedText } from './compare/words.ts';
import { distanceText, fixed, int, pm, sig } from './format.ts';
import { oldestFirst } from './history.ts';
import { type ColumnSpec, tableView } from './tables.ts';
import type { KeyValue, RowMark, SystemPageView, SystemsIndexView, TableView } from './types.ts';

/** One release's distance of a system, for the history across releases. */
export interface SystemHistoryPoint {
  release: string;
  date: string;
  method: SystemResult['method'];
  mu: number | null;
  mu_err: number | null;
  distance_mpc: number | null;
}

/** system id -> its distance in every release of the report, oldest first. */
export type SystemHistory = Record<string, SystemHistoryPoint[]>;

export function systemHistory(all: readonly Results[]): SystemHistory {
  const out: SystemHistory = {};
  for (const r of oldestFirst(all)) {
    for (const s of r.systems) {
      (out[s.id] ??= []).push({ release: r.release.id, date: r.release.date, method: s.method, mu: s.mu, mu_err: s.mu_err, distance_mpc: s.distance_mpc });
    }
  }
  return out;
}

const KIND_WORDS: Record<string, string> = { cluster: 'star cluster', galaxy: 'galaxy', field: 'group of field stars' };
const ROLE_WORDS: Record<string, string> = {
  anchor: 'geometric anchor (parallaxes)',
  main_sequence_target: 'main-sequence target',
  cepheid_system: 'Cepheid system',
  sn_host: 'supernova host',
  field_star: 'field stars with parallaxes',
};
const METHOD_WORDS: Record<SystemResult['method'], string> = {
  parallax: 'the parallax rung (mean parallax of its stars)',
  main_sequence: 'the main-sequence rung (its stars fitted to the anchors’ main sequence)',
  cepheid: 'the Cepheid rung (its Cepheids on the period–luminosity relation of the global fit)',
  none: 'no rung: the ladder gives it no distance',
};
/** Method notes whose cautions apply, by role. */
const ROLE_NOTES: Record<string, string> = {
  anchor: 'parallax',
  field_star: 'parallax',
  main_sequence_target: 'main-sequence',
  cepheid_system: 'cepheids',
  sn_host: 'supernovae',
};

const signed = signedText;

function fileOf(r: Results, table: string): string {
  return r.provenance.inputs.find((f) => f.table === table)?.file ?? table;
}

function muDistance(mu: number | null, err: number | null): string {
  return mu === null ? '—' : `${pm(mu, err)} mag (${distanceText(distanceMpcFromModulus(mu))})`;
}

/** Shift in words and numbers; blinded: relative only (the hidden factor cancels in a ratio). */
export function looShiftText(e: LeaveOneOutEntry, h0: number | null, blinded: boolean): string {
  if (e.error !== null || e.shift === null || e.shift_err === null || h0 === null) return e.error ?? 'not computed';
  const sigmas = e.shift_err > 0 ? `${signed(e.shift / e.shift_err, 1)} σ` : 'σ of the shift is 0';
  const rel = `${signed((100 * e.shift) / h0, 2)} %`;
  return blinded ? `${rel} of H0 (${sigmas})` : `${signed(e.shift, 2)} ± ${fixed(e.shift_err, 2)} km/s/Mpc (${rel}, ${sigmas})`;
}

export interface SystemPagesInput {
  results: Results;
  loo: LeaveOneOut | null;
  /** Why the leave-one-out is missing when it is (not computed in this build, failed, ...). */
  looMissing: string | null;
  history: SystemHistory;
  /** Releases of this report (their system pages exist). */
  releasesBuilt: ReadonlySet<string>;
}

/** One object table of a system page; every row anchored by the object's id (first occurrence on the page). */
function objectTable(
  id: string,
  title: string,
  caption: string,
  columns: ColumnSpec[],
  rows: { object: string; cells: string[]; mark: RowMark }[],
  taken: Set<string>,
): TableView | null {
  if (rows.length === 0) return null;
  const rowIds = rows.map((x) => {
    const a = objectAnchor(x.object);
    if (taken.has(a)) return null;
    taken.add(a);
    return a;
  });
  return tableView(
    id,
    title,
    columns,
    rows.map((x) => x.cells),
    { caption, marks: rows.map((x) => x.mark), rowIds, sortable: true },
  );
}

/** The input files of the object tables, named as the release names them. */
interface ObjectFiles {
  cepheids: string;
  supernovae: string;
  parallax: string;
  mainSequence: string;
}

/** A system's objects, from results.json. */
function objectsOf(r: Results, system: string) {
  return {
    ceph: r.rungs.cepheids.filter((c) => c.system === system),
    sn: r.rungs.supernovae.calibrators.filter((x) => x.system === system),
    plx: r.rungs.parallax.stars.filter((x) => x.system === system),
    ms: r.rungs.main_sequence.stars.filter((x) => x.system === system),
  };
}
type SystemObjects = ReturnType<typeof objectsOf>;

/** The Cepheid and supernova tables of a system page (null when a table has no rows). */
function extragalacticTables(o: SystemObjects, files: ObjectFiles, taken: Set<string>): (TableView | null)[] {
  return [
    objectTable(
      'system-cepheids',
      'Cepheids',
      `Wesenheit magnitude W and its residual from the global period–luminosity relation (observed minus model, with this system’s fitted distance); the line is the row’s line in ${files.cepheids}.`,
      [
        ['star', 'Cepheid', null, false],
        ['file', 'File', null, false],
        ['line', 'Line', null, true],
        ['logp', 'log₁₀ P', 'days', true],
        ['w', 'W', 'mag', true],
        ['oh', '[O/H]', 'dex', true],
        ['res', 'Residual', 'mag', true],
      ],
      o.ceph.map((c) => ({
        object: c.star,
        cells: [c.star, files.cepheids, String(c.line), fixed(c.log_period, 3), pm(c.w, c.w_err), fixed(c.oh, 2), fixed(c.residual, 3)],
        mark: c.rejected ? 'rejected' : null,
      })),
      taken,
    ),
    objectTable(
      'system-supernovae',
      'Supernovae',
      `Standardised peak magnitude m_B + α x1 − β c of each calibrator supernova in this host; the line is the row’s line in ${files.supernovae}.`,
      [
        ['sn', 'Supernova', null, false],
        ['file', 'File', null, false],
        ['line', 'Line', null, true],
        ['mb', 'm_B', 'mag', true],
        ['x1', 'x1', null, true],
        ['c', 'c', null, true],
        ['mcorr', 'Standardised m', 'mag', true],
        ['res', 'Residual', 'mag', true],
      ],
      o.sn.map((x) => ({
        object: x.sn,
        cells: [x.sn, files.supernovae, String(x.line), fixed(x.m_b, 3), fixed(x.x1, 2), fixed(x.c, 3), pm(x.m_corr, x.m_corr_err), fixed(x.residual, 3)],
        mark: x.rejected ? 'rejected' : null,
      })),
      taken,
    ),
  ];
}

/** The parallax and main-sequence star tables of a system page (null when a table has no rows). */
function starTables(o: SystemObjects, files: ObjectFiles, taken: Set<string>): (TableView | null)[] {
  return [
    objectTable(
      'system-parallax',
      'Parallax stars',
      `Measured and zero-point corrected parallax of each star, and its distance from the exponentially decreasing space density prior (display only); the line is the row’s line in ${files.parallax}.`,
      [
        ['star', 'Star', null, false],
        ['file', 'File', null, false],
        ['line', 'Line', null, true],
        ['plx', 'Parallax', 'mas', true],
        ['corr', 'Corrected', 'mas', true],
        ['q', 'Distance 5 / 50 / 95 %', 'pc', true],
      ],
      o.plx.map((x) => ({
        object: x.star,
        cells: [
          x.star,
          files.parallax,
          String(x.line),
          pm(x.parallax_mas, x.parallax_err_mas),
          fixed(x.parallax_corr_mas, 4),
          `${sig(x.dist_q05_pc, 3)} / ${sig(x.dist_q50_pc, 3)} / ${sig(x.dist_q95_pc, 3)}`,
        ],
        mark: x.low_significance || x.bimodal ? 'flagged' : null,
      })),
      taken,
    ),
    objectTable(
      'system-main-sequence',
      'Main-sequence stars',
      `Dereddened colour and absolute magnitude of each star, and the probability that it is an unresolved binary (mixture model); the line is the row’s line in ${files.mainSequence}.`,
      [
        ['star', 'Star', null, false],
        ['file', 'File', null, false],
        ['line', 'Line', null, true],
        ['c0', '(B−V)₀', 'mag', true],
        ['mv', 'M_V', 'mag', true],
        ['pbin', 'P(binary)', null, true],
        ['used', 'Used', null, false],
      ],
      o.ms.map((x) => ({
        object: x.star,
        cells: [x.star, files.mainSequence, String(x.line), fixed(x.color0, 3), fixed(x.abs_mag, 3), fixed(x.p_binary, 2), x.used ? 'yes' : 'no'],
        mark: null,
      })),
      taken,
    ),
  ];
}

/** The object tables of a system page (only those with rows), every row anchored; anchors are unique across them (`taken`). */
function objectTables(o: SystemObjects, files: ObjectFiles): TableView[] {
  const taken = new Set<string>();
  return [...extragalacticTables(o, files, taken), ...starTables(o, files, taken)].filter((t): t is TableView => t !== null);
}

const kv = (label: string, value: string, blinded = false): KeyValue => ({ label, value, blinded });

/** What the system is, and its distances before and after the global fit. */
function identity(s: SystemResult): { what: string; keyValues: KeyValue[] } {
  const roles = s.roles.map((x) => ROLE_WORDS[x] ?? x);
  const rows = [
    s.rows.parallax ? `${int(s.rows.parallax)} parallax` : '',
    s.rows.main_sequence ? `${int(s.rows.main_sequence)} main-sequence` : '',
    s.rows.cepheids ? `${int(s.rows.cepheids)} Cepheid` : '',
    s.rows.sn_calibrators ? `${int(s.rows.sn_calibrators)} supernova` : '',
  ];
  return {
    what: `${s.id} is a ${KIND_WORDS[s.kind] ?? s.kind}${roles.length ? ` used as ${roles.join(' and ')}` : ''}. Its distance comes from ${METHOD_WORDS[s.method]}.`,
    keyValues: [
      kv('Distance modulus before the global fit (its own rung)', muDistance(s.mu_prior, s.mu_prior_err)),
      kv('Distance modulus after the global fit', muDistance(s.mu, s.mu_err)),
      kv('Rows', rows.filter(Boolean).join(', ') || 'none'),
      ...(s.feh !== null ? [kv('[Fe/H]', `${fixed(s.feh, 2)} dex`)] : []),
      ...(s.ebv !== null ? [kv('E(B−V)', `${pm(s.ebv, s.ebv_err)} mag`)] : []),
    ],
  };
}

/** What leaving the system out does to H0, in words and key values. */
function leaveOneOutPart(p: SystemPagesInput, system: string, e: LeaveOneOutEntry | undefined): SystemPageView['leaveOneOut'] {
  if (!e) return { text: p.looMissing ?? 'The leave-one-out refit was not computed for this system.', keyValues: [] };
  if (e.error !== null) return { text: `Without ${system} the release cannot be calibrated: ${e.error}.`, keyValues: [] };
  const blinded = p.results.blinded;
  const shift = looShiftText(e, p.loo!.h0, blinded);
  const keyValues: KeyValue[] = [];
  if (!blinded && e.h0 !== null) keyValues.push(kv('H0 without this system', `${pm(e.h0, e.h0_stat)} km/s/Mpc`));
  keyValues.push(kv('Shift of H0', shift, blinded));
  let text = `H0 refitted without ${system} (every row naming it removed, the whole ladder redone) moves by ${shift}.`;
  if (e.variance_reversed)
    text +=
      ' The refit without it has a slightly smaller variance (its intrinsic scatter was refitted), so the σ of the shift is the square root of the absolute difference of the variances.';
  return { text, keyValues };
}

/** The system's distance in every release of the report, linked where that release is built. */
function historyTable(p: SystemPagesInput, system: string): TableView | null {
  const hist = p.history[system] ?? [];
  if (hist.length === 0) return null;
  return tableView(
    'system-history',
    'Distance across releases',
    [
      ['release', 'Release', null, false],
      ['date', 'Date', null, false],
      ['method', 'Rung', null, false],
      ['mu', 'μ', 'mag', true],
      ['d', 'Distance', null, true],
    ],
    hist.map((h) => [h.release, h.date, h.method.replace('_', ' '), h.mu === null ? '—' : pm(h.mu, h.mu_err), distanceText(h.distance_mpc)]),
    { links: hist.map((h) => [p.releasesBuilt.has(h.release) ? systemPagePath(h.release, system) : null, null, null, null, null]) },
  );
}

/** The kept object farthest from its relation (largest |residual|), or null. */
function farthest<T extends { residual: number; rejected: boolean }>(xs: readonly T[]): T | null {
  const kept = xs.filter((x) => !x.rejected);
  return kept.length === 0 ? null : kept.reduce((m, x) => (Math.abs(x.residual) > Math.abs(m.residual) ? x : m), kept[0]!);
}

/** The objects that pull its distance most: its Cepheid and its supernova farthest from the relation. */
function strongestPulls(o: SystemObjects, files: ObjectFiles): SystemPageView['pulls'] {
  const pulls: SystemPageView['pulls'] = [];
  const c = farthest(o.ceph);
  if (c)
    pulls.push({
      id: c.star,
      anchor: objectAnchor(c.star),
      text: `its Cepheid farthest from the period–luminosity relation (residual ${signed(c.residual, 3)} mag, line ${c.line} of ${files.cepheids})`,
    });
  const x = farthest(o.sn);
  if (x)
    pulls.push({
      id: x.sn,
      anchor: objectAnchor(x.sn),
      text: `its supernova farthest from the fitted M_B (residual ${signed(x.residual, 3)} mag, line ${x.line} of ${files.supernovae})`,
    });
  return pulls;
}

export function systemPages(p: SystemPagesInput): SystemPageView[] {
  const r = p.results;
  const rel = r.release.id;
  assertUnique(
    r.systems.map((s) => s.id),
    systemSegment,
    'systems',
    true,
  );
  const loo = new Map((p.loo?.entries ?? []).map((e) => [e.system, e]));
  const files: ObjectFiles = {
    cepheids: fileOf(r, 'cepheids'),
    supernovae: fileOf(r, 'sn_calibrators'),
    parallax: fileOf(r, 'parallax'),
    mainSequence: fileOf(r, 'main_sequence'),
  };
  return r.systems.map((s): SystemPageView => {
    const o = objectsOf(r, s.id);
    assertUnique(
      [...o.ceph.map((c) => c.star), ...o.sn.map((x) => x.sn), ...o.plx.map((x) => x.star), ...o.ms.map((x) => x.star)],
      objectAnchor,
      `objects of system ${JSON.stringify(s.id)}:`,
    );
    const notes = [...new Set(s.roles.map((x) => ROLE_NOTES[x]).filter((x): x is string => x !== undefined))];
    return {
      release: rel,
      system: s.id,
      segment: systemSegment(s.id),
      path: systemPagePath(rel, s.id),
      blinded: r.blinded,
      ...identity(s),
      leaveOneOut: leaveOneOutPart(p, s.id, loo.get(s.id)),
      pulls: strongestPulls(o, files),
      tables: objectTables(o, files),
      figures: [],
      history: historyTable(p, s.id),
      notes: [...(notes.length ? notes : ['global-fit']), 'leave-one-out'],
    };
  });
}

/** The systems index: every system, sortable, with its leave-one-out shift. */
export function systemsIndex(p: SystemPagesInput, looFigure: string | null): SystemsIndexView {
  const r = p.results;
  const loo = new Map((p.loo?.entries ?? []).map((e) => [e.system, e]));
  const rows = r.systems.map((s) => {
    const e = loo.get(s.id);
    return [
      s.id,
      KIND_WORDS[s.kind] ?? s.kind,
      s.method.replace('_', ' '),
      s.mu_prior === null ? '—' : pm(s.mu_prior, s.mu_prior_err),
      s.mu === null ? '—' : pm(s.mu, s.mu_err),
      distanceText(s.distance_mpc),
      e ? looShiftText(e, p.loo!.h0, r.blinded) : '—',
    ];
  });
  const table =
    rows.length === 0
      ? null
      : tableView(
          'systems-index',
          'Systems',
          [
            ['system', 'System', null, false],
            ['kind', 'Kind', null, false],
            ['method', 'Distance from', null, false],
            ['prior', 'μ before the fit', 'mag', true],
            ['mu', 'μ after the fit', 'mag', true],
            ['d', 'Distance', null, true],
            ['loo', 'H0 shift when left out', r.blinded ? '% of H0' : 'km/s/Mpc', true],
          ],
          rows,
          {
            caption:
              'Every system of the release. The last column is the change of H0 when the system is left out and the whole ladder refitted, with its σ (the σ of the difference of the two fits, which share all other data).',
            links: r.systems.map((s) => [systemPagePath(r.release.id, s.id), null, null, null, null, null, null]),
            marks: r.systems.map((s): RowMark => (r.blinded && loo.has(s.id) ? 'blinded' : null)),
            sortable: true,
          },
        );
  const top = largestShift(p.loo?.entries ?? []);
  return {
    table,
    looSummary: looSummary(p),
    looMissing: p.loo ? null : p.looMissing,
    looFigure,
    looTop: top ? { path: systemPagePath(r.release.id, top.system), title: top.system } : null,
  };
}

/** One or two sentences for the overview: the system whose removal moves H0 most. */
export function looSummary(p: SystemPagesInput): string | null {
  const l = p.loo;
  if (!l || l.h0 === null) return null;
  const ok = shiftedEntries(l.entries);
  const worst = largestShift(ok);
  if (worst === null) return null;
  const worstSig = ok.reduce((m, e) => (Math.abs(e.shift! / (e.shift_err || Infinity)) > Math.abs(m.shift! / (m.shift_err || Infinity)) ? e : m), ok[0]!);
  const failed = l.entries.length - ok.length;
  const parts = [`Leaving out ${worst.system} moves H0 most: ${looShiftText(worst, l.h0, p.results.blinded)}.`];
  if (worstSig !== worst) parts.push(`The largest shift in units of its σ is for ${worstSig.system}: ${looShiftText(worstSig, l.h0, p.results.blinded)}.`);
  if (failed > 0) parts.push(`${failed} system${failed === 1 ? '' : 's'} cannot be left out (the ladder needs ${failed === 1 ? 'it' : 'them'}).`);
  return parts.join(' ');
}
