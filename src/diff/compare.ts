/**
 * The comparison of two releases: input changes, result changes with the uncertainty of each
 * difference, the attribution of the H0 shift to the input groups (Shapley values over hybrid
 * releases, recalibrated on worker threads), the rows that moved H0 most, and the data of the
 * overlay figures. Deterministic: the same two releases give the same report.
 */
import { InputError, AnalysisError, type InputIssue } from '../types/issues.ts';
import type { Release, TableName } from '../types/release.ts';
import { TABLE_NAMES } from '../types/release.ts';
import { TABLE_SPECS } from '../registry/tables.ts';
import type { Results } from '../types/results.ts';
import { codeVersion as currentCodeVersion } from '../version.ts';
import { compareBlinding, HIDDEN_WHEN_BLINDED } from './blinding.ts';
import { loadReleaseWithBlinding, type BlindingRecord } from '../blinding/index.ts';
import { differingGroups, maskOf } from './hybrid.ts';
import { estimateKey, INFLUENCE_METHOD, sideRowEstimates, type RowEstimate } from './influence.ts';
import { diffInputs, tableTouched } from './inputs.ts';
import { buildLinks, linksFor } from './links.ts';
import { noiseSharing, type NoiseSharing } from './noise.ts';
import { buildOverlays } from './overlays.ts';
import type { DiffJob, DiffJobResult } from './jobs.ts';
import { DEFAULT_WORKERS, startRunner, type JobRunner } from './pool.ts';
import { rowId, rowSystem, tableRows } from './rows.ts';
import { shapleyValues } from './shapley.ts';
import { pairSides, prepareSide, SIGMA_METHOD, sigmaByRule, sigmaOfDifference, type PreparedSide } from './sigma.ts';
import { log10H0Gradient, paramIndex, type FitSnapshot } from './snapshot.ts';
import {
  DIFF_SCHEMA,
  GROUP_NAMES,
  type Attribution,
  type AttributionEntry,
  type DiffReport,
  type H0Shift,
  type ObjectInfluence,
  type ParameterShift,
  type Shift,
  type SigmaRule,
  type SystemShift,
} from './types.ts';

/** A shift is flagged when |delta| exceeds this many sigma_diff (or is non-zero with sigma_diff = 0)... */
export const SHIFT_FLAG_SIGMA = 1;
/**
 * ...and is not negligible: at least this fraction of the quantity's own statistical error
 * (the smaller of the two releases'). A shift of a thousandth of an error is no news even when
 * it is certain (it comes from a correction at fixed noise elsewhere in the ladder).
 */
export const NEGLIGIBLE_SHIFT_OF_ERROR = 0.1;
/** Most main-sequence and systems rows estimated one by one by recalibration; above it, one recalibration per system. */
export const ROW_REFIT_CAP = 32;
/** Rows listed as having moved H0 most. */
export const TOP_OBJECTS = 10;

export const ATTRIBUTION_METHOD =
  'Shapley values over the input groups that differ (the tables and the analysis block of release.yaml): ' +
  'H0 is recalibrated (baseline, no variants) for release a with every subset of those groups taken from release b, ' +
  'and each group gets its change averaged over all orders of swapping, so the contributions add up exactly to the total and do not depend on any order. ' +
  'Hybrid releases take each table whole from one side; the systems table of a hybrid is its side\'s version plus the other side\'s rows for systems ' +
  'that the hybrid\'s other tables reference and that version lacks.';

/**
 * With `workers: 'auto'`, worker threads are used when the two releases hold at least this many
 * input rows together. Below it a recalibration takes a fraction of a second and the threads'
 * start (loading TypeScript, a cold JIT in each thread) costs more than the parallelism saves:
 * on the shared 2-core machine (load average 2-3) the demo pair 2026.2 -> 2026.3 (4,746 rows)
 * took 4.6 s in one thread and 7.0 s with two workers. At 16x (75,000 rows) one recalibration
 * takes about a minute, and running them two at a time is what bounds the wall time.
 */
export const AUTO_WORKERS_MIN_ROWS = 10_000;

export interface CompareOptions {
  /** Worker threads for the recalibrations: a number (0: everything in this thread), or 'auto' (default: see AUTO_WORKERS_MIN_ROWS). */
  workers?: number | 'auto';
  codeVersion?: string;
  /** Origin and base path of the report, for links (no links when site is undefined). */
  site?: string;
  base?: string;
  progress?: (line: string) => void;
  /** The releases' blinding.json records (compareReleaseDirs reads them; default none). */
  records?: { a: BlindingRecord | null; b: BlindingRecord | null };
}

/**
 * Load both folders (every problem of both reported at once) and compare them. A release
 * unblinded by `rungbook unblind` is read with its true magnitudes, as `rungbook calibrate`
 * reads it (src/blinding/apply.ts); one still blinded stays blinded.
 */
export async function compareReleaseDirs(dirA: string, dirB: string, options: CompareOptions = {}): Promise<DiffReport> {
  const wanted = options.workers ?? 'auto';
  // a fixed number of threads starts now, so that they load while the releases are read
  let runner: JobRunner | null = wanted === 'auto' ? null : startRunner(wanted);
  try {
    const issues: InputIssue[] = [];
    let omitted = 0;
    const load = (dir: string): { release: Release; record: BlindingRecord | null } | null => {
      try {
        return loadReleaseWithBlinding(dir);
      } catch (e) {
        if (!(e instanceof InputError)) throw e;
        issues.push(...e.issues);
        omitted += e.omitted;
        return null;
      }
    };
    options.progress?.('reading the releases');
    const a = load(dirA);
    const b = load(dirB);
    if (!a || !b) throw new InputError(issues, omitted);
    runner ??= startRunner(autoWorkers(a.release, b.release));
    return await compareWith(runner, a.release, b.release, { ...options, records: { a: a.record, b: b.record } });
  } finally {
    await runner?.close();
  }
}

/** Compare two releases already in memory. */
export async function compareReleases(a: Release, b: Release, options: CompareOptions = {}): Promise<DiffReport> {
  const wanted = options.workers ?? 'auto';
  const runner = startRunner(wanted === 'auto' ? autoWorkers(a, b) : wanted);
  try {
    return await compareWith(runner, a, b, options);
  } finally {
    await runner.close();
  }
}

/** Worker threads for 'auto': DEFAULT_WORKERS for large releases, none for small ones. */
export function autoWorkers(a: Release, b: Release): number {
  const rows = (r: Release) => TABLE_NAMES.reduce((n, t) => n + tableRows(r, t).length, 0);
  return rows(a) + rows(b) >= AUTO_WORKERS_MIN_ROWS ? DEFAULT_WORKERS : 0;
}

/** The smaller positive statistical error of the two releases, or null. */
function ownError(...errs: (number | null | undefined)[]): number | null {
  const pos = errs.filter((e): e is number => typeof e === 'number' && e > 0);
  return pos.length ? Math.min(...pos) : null;
}

function makeShift(
  a: number | null,
  b: number | null,
  sigma: number | null,
  rule: SigmaRule | null,
  hideValues: boolean,
  hideShift: boolean,
  ownErr: number | null,
): Shift {
  const delta = a !== null && b !== null ? b - a : null;
  let deltaSigma: number | null = null;
  let deterministic = false;
  if (delta !== null && sigma !== null) {
    if (sigma > 0) deltaSigma = delta / sigma;
    else if (delta === 0) deltaSigma = 0;
    else deterministic = true;
  }
  const notable = delta !== null && (ownErr === null || Math.abs(delta) >= NEGLIGIBLE_SHIFT_OF_ERROR * ownErr);
  const flagged = delta !== null && notable && (deterministic || (sigma !== null && Math.abs(delta) > SHIFT_FLAG_SIGMA * sigma));
  return {
    a: hideValues ? null : a,
    b: hideValues ? null : b,
    delta: hideShift ? null : delta,
    sigma_diff: sigma,
    delta_sigma: hideShift ? null : deltaSigma,
    deterministic: hideShift ? false : deterministic,
    flagged: hideShift ? false : flagged,
    sigma_rule: rule,
  };
}

/** Unit vector of a parameter in a snapshot's parameter space, or null when the fit lacks it. */
function unitVector(s: FitSnapshot | null, name: string): Float64Array | null {
  if (!s) return null;
  const i = paramIndex(s, name);
  if (i < 0) return null;
  const g = new Float64Array(s.paramNames.length);
  g[i] = 1;
  return g;
}

/** Fit parameter behind a results parameter (the zero point is carried as its offset zeta). */
const FIT_PARAMETER: Record<string, string> = {
  M_W: 'M_W',
  b_W: 'b_W',
  Z_W: 'Z_W',
  M_B: 'M_B',
  a_B: 'a_B',
  delta_M_host: 'delta_M_host',
  parallax_zero_point: 'zeta',
};

const SN_TABLES: TableName[] = ['sn_calibrators', 'sn_hubble_flow'];

/** Tables whose rows are estimated without recalibrating (influence.ts), and those estimated by recalibrating release a with the row swapped: each table's `rowShift` in the registry. */
const LINEAR_TABLES: TableName[] = TABLE_NAMES.filter((t) => TABLE_SPECS[t].rowShift === 'first-order');
// the systems table last: a system's priors are planned after the rows of its stars
const REFIT_TABLES: TableName[] = TABLE_NAMES.filter((t) => TABLE_SPECS[t].rowShift === 'refit').sort((x, y) => Number(x === 'systems') - Number(y === 'systems'));

interface SwapPlan {
  table: TableName;
  ids: string[];
  level: 'row' | 'system';
  id: string;
  system: string | null;
}

function planSwaps(a: Release, b: Release, sharing: NoiseSharing): SwapPlan[] {
  const rows: { table: TableName; id: string; system: string | null }[] = [];
  for (const table of REFIT_TABLES) {
    const seen = new Set<string>();
    for (const release of [a, b]) {
      for (const r of tableRows(release, table)) {
        const id = rowId(table, r);
        if (seen.has(id)) continue;
        seen.add(id);
        const s = sharing.status(table, id);
        if (s !== undefined && s !== 'same') rows.push({ table, id, system: rowSystem(table, r) });
      }
    }
  }
  if (rows.length <= ROW_REFIT_CAP) return rows.map((r) => ({ table: r.table, ids: [r.id], level: 'row', id: r.id, system: r.system }));
  // one recalibration per (table, system), the systems with most changed rows first
  const bySystem = new Map<string, { table: TableName; system: string; ids: string[] }>();
  for (const r of rows) {
    const key = `${r.table}\u0000${r.system ?? ''}`;
    const entry = bySystem.get(key) ?? { table: r.table, system: r.system ?? '', ids: [] };
    entry.ids.push(r.id);
    bySystem.set(key, entry);
  }
  return [...bySystem.values()]
    .sort((x, y) => y.ids.length - x.ids.length || (x.table < y.table ? -1 : x.table > y.table ? 1 : x.system < y.system ? -1 : x.system > y.system ? 1 : 0))
    .slice(0, ROW_REFIT_CAP)
    .map((e) => ({ table: e.table, ids: e.ids, level: e.ids.length > 1 ? 'system' : 'row', id: e.ids.length > 1 ? e.system : e.ids[0], system: e.system || null }));
}

async function compareWith(runner: JobRunner, a: Release, b: Release, options: CompareOptions): Promise<DiffReport> {
  const progress = options.progress ?? (() => {});
  const inputChanges = diffInputs(a, b);
  const sharing = noiseSharing(a, b);
  const blinding = compareBlinding(
    { blinded: a.manifest.blinded, record: options.records?.a ?? null },
    { blinded: b.manifest.blinded, record: options.records?.b ?? null },
    { a: a.manifest.id, b: b.manifest.id },
  );
  const groups = differingGroups(a, b);
  const k = groups.length;
  if (k > GROUP_NAMES.length) throw new Error('more differing groups than groups');

  runner.init(a, b, options.codeVersion ?? currentCodeVersion());
  const run = (job: DiffJob) => runner.run(job);
  progress(`calibrating both releases${runner.mode === 'workers' ? ' (worker threads)' : ''}`);
  const sides = Promise.all([run({ kind: 'side', side: 'a' }), run({ kind: 'side', side: 'b' })]);
  const hybridJobs: Promise<DiffJobResult>[] = [];
  const swaps = blinding.shift_hidden ? [] : planSwaps(a, b, sharing);
  if (!blinding.shift_hidden) {
    for (let local = 1; local < (1 << k) - 1; local++) {
      const global = maskOf(groups.filter((_, i) => local & (1 << i)));
      hybridJobs.push(run({ kind: 'hybrid', mask: global }));
    }
  }
  const swapJobs = swaps.map((s) => run({ kind: 'swap', table: s.table, ids: s.ids }));
  const [sideA, sideB] = (await sides) as Extract<DiffJobResult, { kind: 'side' }>[];
  for (const s of [sideA, sideB]) {
    if (s.error !== null) throw new AnalysisError(`release ${(s.side === 'a' ? a : b).manifest.id}: ${s.error}`, s.hint ?? undefined);
  }
  if (hybridJobs.length) progress(`recalibrating ${hybridJobs.length} hybrid release${hybridJobs.length === 1 ? '' : 's'} for the attribution`);
  const hybrids = (await Promise.all(hybridJobs)) as Extract<DiffJobResult, { kind: 'hybrid' }>[];
  const swapResults = (await Promise.all(swapJobs)) as Extract<DiffJobResult, { kind: 'swap' }>[];
  progress('comparing');

  const resA = sideA.results!;
  const resB = sideB.results!;
  const snapA = sideA.snapshot;
  const snapB = sideB.snapshot;
  const prepA = snapA ? prepareSide(snapA) : null;
  const prepB = snapB ? prepareSide(snapB) : null;
  const hideValues = blinding.values_hidden;
  const hideShift = blinding.shift_hidden;
  const snNested = sharing.nested(SN_TABLES) && a.analysis.sn_alpha === b.analysis.sn_alpha && a.analysis.sn_beta === b.analysis.sn_beta;

  const pair = prepA && prepB ? pairSides(prepA, prepB, sharing) : null;
  const linear = (name: string, scaleA: number, scaleB: number): number | null => {
    if (!prepA || !prepB || !pair) return null;
    const ga = name === 'log10H0' ? log10H0Gradient(prepA.snap) : unitVector(prepA.snap, name);
    const gb = name === 'log10H0' ? log10H0Gradient(prepB.snap) : unitVector(prepB.snap, name);
    if (!ga || !gb) return null;
    return sigmaOfDifference(prepA, ga, scaleA, prepB, gb, scaleB, sharing, snNested, pair).sigma;
  };

  // ---- H0 ----
  let h0: H0Shift | null = null;
  if (resA.h0 && resB.h0) {
    const sigma = linear('log10H0', resA.h0.value * Math.LN10, resB.h0.value * Math.LN10);
    const shift = makeShift(resA.h0.value, resB.h0.value, sigma, sigma === null ? null : 'linear', hideValues, hideShift, ownError(resA.h0.stat, resB.h0.stat));
    h0 = {
      ...shift,
      unit: 'km/s/Mpc',
      stat_a: resA.h0.stat,
      stat_b: resB.h0.stat,
      sigma_naive: Math.hypot(resA.h0.stat, resB.h0.stat),
      ratio: hideShift ? null : resB.h0.value / resA.h0.value,
    };
  }

  // ---- parameters ----
  const parameters: ParameterShift[] = [];
  const names = [...Object.keys(resA.parameters), ...Object.keys(resB.parameters).filter((n) => !(n in resA.parameters))];
  const eitherBlinded = a.manifest.blinded || b.manifest.blinded;
  for (const name of names) {
    const pa = resA.parameters[name];
    const pb = resB.parameters[name];
    const blinded = eitherBlinded && (HIDDEN_WHEN_BLINDED.includes(name) || pa?.blinded === true || pb?.blinded === true);
    let sigma: number | null = null;
    let rule: SigmaRule | null = null;
    if (pa && pb) {
      if (pa.fixed && pb.fixed) {
        sigma = 0;
        rule = 'fixed';
      } else if (FIT_PARAMETER[name] && !pa.fixed && !pb.fixed) {
        sigma = linear(FIT_PARAMETER[name], 1, 1);
        rule = sigma === null ? null : 'linear';
      }
      if (sigma === null) {
        const nested =
          name === 'sigma_int_cepheid' ? sharing.nested(['cepheids']) : name === 'alpha' || name === 'beta' || name === 'sigma_int_sn' ? snNested : false;
        sigma = sigmaByRule(pa.err, pb.err, nested);
        rule = nested ? 'nested' : 'independent';
      }
    }
    parameters.push({
      name,
      unit: (pa ?? pb)!.unit,
      description: (pa ?? pb)!.description,
      blinded,
      fixed_a: pa?.fixed === true,
      fixed_b: pb?.fixed === true,
      ...makeShift(pa?.value ?? null, pb?.value ?? null, sigma, rule, blinded, blinded && hideShift, ownError(pa?.err, pb?.err)),
    });
  }

  // ---- systems ----
  const changedSystems = new Set<string>();
  for (const t of TABLE_NAMES) {
    for (const release of [a, b]) {
      for (const r of tableRows(release, t)) {
        const sys = rowSystem(t, r);
        if (sys === null) continue;
        const id = rowId(t, r);
        if ((sharing.status(t, id) ?? 'same') !== 'same') changedSystems.add(sys);
      }
    }
  }
  const systems: SystemShift[] = [];
  const sysIds = [...resA.systems.map((s) => s.id), ...resB.systems.map((s) => s.id).filter((id) => !resA.systems.some((s) => s.id === id))];
  for (const id of sysIds) {
    const sa = resA.systems.find((s) => s.id === id);
    const sb = resB.systems.find((s) => s.id === id);
    let sigma: number | null = null;
    let rule: SigmaRule | null = null;
    if (sa?.mu != null && sb?.mu != null) {
      sigma = linear(`mu:${id}`, 1, 1);
      rule = 'linear';
      if (sigma === null && sa.mu_err !== null && sb.mu_err !== null) {
        sigma = sigmaByRule(sa.mu_err, sb.mu_err, false);
        rule = 'independent';
      }
    }
    const shift = makeShift(sa?.mu ?? null, sb?.mu ?? null, sigma, sigma === null ? null : rule, false, false, ownError(sa?.mu_err, sb?.mu_err));
    systems.push({
      id,
      kind: (sb ?? sa)!.kind,
      method_a: sa?.method ?? null,
      method_b: sb?.method ?? null,
      distance_a: sa?.distance_mpc ?? null,
      distance_b: sb?.distance_mpc ?? null,
      delta_distance: sa?.distance_mpc != null && sb?.distance_mpc != null ? sb.distance_mpc - sa.distance_mpc : null,
      inputs_changed: changedSystems.has(id),
      ...shift,
    });
  }

  // ---- attribution ----
  let attribution: Attribution | null = null;
  let attributionNote: string | null = null;
  const lA = snapA?.log10H0 ?? null;
  const lB = snapB?.log10H0 ?? null;
  let blindingScale = 1;
  if (hideShift) attributionNote = blinding.note;
  else if (lA === null || lB === null) attributionNote = 'H0 is not measured in both releases: nothing to attribute';
  else {
    const totalTrue = 10 ** lB - 10 ** lA;
    if (eitherBlinded && resA.h0 && resB.h0 && totalTrue !== 0) blindingScale = (resB.h0.value - resA.h0.value) / totalTrue;
    const values = new Map<number, number>();
    values.set(0, 10 ** lA);
    values.set((1 << k) - 1, 10 ** lB);
    const failed = hybrids.find((h) => h.error !== null || h.log10H0 === null);
    const localOf = (global: number) => groups.reduce((m, g, i) => (global & maskOf([g]) ? m | (1 << i) : m), 0);
    for (const h of hybrids) if (h.log10H0 !== null) values.set(localOf(h.mask), 10 ** h.log10H0);
    if (failed) {
      const which = groups.filter((_, i) => localOf(failed.mask) & (1 << i));
      attributionNote = `the hybrid release with ${which.join(', ')} from ${b.manifest.id} could not be calibrated (${failed.error ?? 'H0 not reached'}): no attribution`;
    } else {
      const phi = shapleyValues(k, (m) => values.get(m)!);
      const sum = phi.reduce((s, x) => s + x, 0);
      const entries: AttributionEntry[] = GROUP_NAMES.map((group) => {
        const i = groups.indexOf(group);
        const d = i >= 0 ? phi[i] * blindingScale : 0;
        return { group, differs: i >= 0, delta_h0: d, fraction: totalTrue !== 0 ? (i >= 0 ? phi[i] / totalTrue : 0) : null, rows_sum: null };
      });
      attribution = {
        entries,
        total: totalTrue * blindingScale,
        sum_rel_error: totalTrue !== 0 ? Math.abs(sum - totalTrue) / Math.abs(totalTrue) : Math.abs(sum),
        hybrids: [...values.entries()]
          .sort(([x], [y]) => x - y)
          .map(([m, v]) => ({ groups: groups.filter((_, i) => m & (1 << i)), h0: hideValues ? null : v })),
        method: ATTRIBUTION_METHOD,
        blinding_scale: blindingScale,
      };
    }
  }

  // ---- objects that moved H0 most ----
  const objects: ObjectInfluence[] = [];
  let notEstimated = 0;
  if (!hideShift && lA !== null && lB !== null && prepA && prepB) {
    const cellsBy = new Map<string, string[]>();
    for (const c of inputChanges.cells) {
      const key = estimateKey(c.table, c.id);
      const list = cellsBy.get(key) ?? [];
      list.push(c.column);
      cellsBy.set(key, list);
    }
    const changedRows: { table: TableName; id: string; system: string | null }[] = [];
    for (const t of LINEAR_TABLES) {
      const seen = new Set<string>();
      for (const release of [a, b]) {
        for (const r of tableRows(release, t)) {
          const id = rowId(t, r);
          if (seen.has(id)) continue;
          seen.add(id);
          if ((sharing.status(t, id) ?? 'same') !== 'same') changedRows.push({ table: t, id, system: rowSystem(t, r) });
        }
      }
    }
    const est = combineEstimates(prepA, prepB, a, b, changedRows, lA, lB);
    for (const row of changedRows) {
      const e = est.get(estimateKey(row.table, row.id));
      if (!e) {
        notEstimated++;
        continue;
      }
      objects.push({
        table: row.table,
        id: row.id,
        system: row.system,
        status: sharing.status(row.table, row.id)!,
        columns: cellsBy.get(estimateKey(row.table, row.id)) ?? [],
        delta_h0: e.delta * blindingScale,
        estimate: e.kind,
        level: 'row',
        rows: 1,
      });
    }
    let swapRows = 0;
    swaps.forEach((s, i) => {
      const r = swapResults[i];
      swapRows += s.ids.length;
      if (r.log10H0 === null) {
        notEstimated += s.ids.length;
        return;
      }
      objects.push({
        table: s.table,
        id: s.id,
        system: s.system,
        status: s.level === 'row' ? sharing.status(s.table, s.id)! : 'corrected',
        columns: s.level === 'row' ? (cellsBy.get(estimateKey(s.table, s.id)) ?? []) : [],
        delta_h0: (10 ** r.log10H0 - 10 ** lA) * blindingScale,
        estimate: 'refit',
        level: s.level,
        rows: s.ids.length,
      });
    });
    // changed rows of the refit tables beyond the cap
    const refitChanged = countChanged(a, b, sharing, REFIT_TABLES);
    notEstimated += Math.max(0, refitChanged - swapRows);
    if (attribution) {
      for (const entry of attribution.entries) {
        if (entry.group === 'analysis') continue;
        const rowsOf = objects.filter((o) => o.table === entry.group);
        entry.rows_sum = rowsOf.length ? rowsOf.reduce((s, o) => s + o.delta_h0, 0) : entry.differs ? null : 0;
      }
    }
  }
  objects.sort((x, y) => Math.abs(y.delta_h0) - Math.abs(x.delta_h0) || (x.table < y.table ? -1 : x.table > y.table ? 1 : x.id < y.id ? -1 : x.id > y.id ? 1 : 0));

  const statusOf = (t: TableName, id: string) => sharing.status(t, id) ?? 'same';
  const identical =
    inputChanges.tables.every((t) => !tableTouched(t)) &&
    inputChanges.analysis.length === 0 &&
    inputChanges.variants.length === 0 &&
    !inputChanges.notes_changed &&
    a.manifest.blinded === b.manifest.blinded &&
    groups.length === 0;

  const fit = [
    { name: 'chi2_per_dof', a: resA.fit.dof > 0 ? resA.fit.chi2 / resA.fit.dof : 0, b: resB.fit.dof > 0 ? resB.fit.chi2 / resB.fit.dof : 0 },
    { name: 'n_data', a: resA.fit.n_data, b: resB.fit.n_data },
    { name: 'n_rejected', a: resA.fit.n_rejected, b: resB.fit.n_rejected },
    { name: 'scatter_cepheids', a: resA.fit.scatter.cepheids, b: resB.fit.scatter.cepheids },
    { name: 'scatter_supernovae', a: resA.fit.scatter.supernovae, b: resB.fit.scatter.supernovae },
  ];

  const overlays = buildOverlays(resA, resB, statusOf, (id) => changedSystems.has(id), hideShift);
  return {
    schema: DIFF_SCHEMA,
    a: a.manifest.id,
    b: b.manifest.id,
    releases: { a: releaseInfo(resA), b: releaseInfo(resB) },
    blinding,
    identical,
    h0,
    sigma_method: SIGMA_METHOD,
    flag_threshold_sigma: SHIFT_FLAG_SIGMA,
    flag_negligible_fraction: NEGLIGIBLE_SHIFT_OF_ERROR,
    attribution: attribution?.entries ?? [],
    attribution_detail: attribution,
    attribution_note: attributionNote,
    inputs: inputChanges.tables,
    input_changes: inputChanges,
    parameters,
    systems,
    fit,
    top_objects: objects.slice(0, TOP_OBJECTS),
    top_objects_method: INFLUENCE_METHOD,
    objects_not_estimated: notEstimated,
    overlays,
    links: options.site !== undefined ? linksFor({ attribution: attribution?.entries ?? [], overlays }, buildLinks(options.site, options.base, a.manifest.id, b.manifest.id, b.manifest.previous)) : null,
  };
}

function releaseInfo(r: Results): DiffReport['releases']['a'] {
  return { id: r.release.id, title: r.release.title, date: r.release.date, previous: r.release.previous, blinded: r.blinded, reached: r.reached };
}

function countChanged(a: Release, b: Release, sharing: NoiseSharing, tables: TableName[]): number {
  let n = 0;
  for (const t of tables) {
    const seen = new Set<string>();
    for (const release of [a, b]) {
      for (const r of tableRows(release, t)) {
        const id = rowId(t, r);
        if (seen.has(id)) continue;
        seen.add(id);
        if ((sharing.status(t, id) ?? 'same') !== 'same') n++;
      }
    }
  }
  return n;
}

/**
 * Both sides' per-row estimates in km/s/Mpc: forward on a (10^(lA + d) - 10^lA), backward on b
 * (-(10^(lB + d) - 10^lB)), averaged when both exist.
 */
function combineEstimates(
  prepA: PreparedSide,
  prepB: PreparedSide,
  a: Release,
  b: Release,
  rows: { table: TableName; id: string }[],
  lA: number,
  lB: number,
): Map<string, { delta: number; kind: 'linear' | 'anchor' }> {
  const fwd = sideRowEstimates(prepA, a, b, prepB.snap, rows);
  const bwd = sideRowEstimates(prepB, b, a, prepA.snap, rows);
  const acc = new Map<string, { sum: number; n: number; kind: RowEstimate['kind'] }>();
  const add = (e: RowEstimate, delta: number) => {
    const key = estimateKey(e.table, e.id);
    const x = acc.get(key) ?? { sum: 0, n: 0, kind: e.kind };
    x.sum += delta;
    x.n++;
    acc.set(key, x);
  };
  for (const e of fwd) add(e, 10 ** (lA + e.dLog10) - 10 ** lA);
  for (const e of bwd) add(e, -(10 ** (lB + e.dLog10) - 10 ** lB));
  const out = new Map<string, { delta: number; kind: 'linear' | 'anchor' }>();
  for (const [key, x] of acc) out.set(key, { delta: x.sum / x.n, kind: x.kind });
  return out;
}
