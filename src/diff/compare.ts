/**
 * The comparison of two releases: input changes, result changes with the uncertainty of each
 * difference (shifts.ts), the attribution of the H0 shift to the input groups (attribution.ts,
 * Shapley values over hybrid releases recalibrated on the shared worker pool, refitTask.ts),
 * the rows that moved H0 most (movers.ts), and the data of the overlay figures.
 * Deterministic: the same two releases give the same report, with any number of workers.
 */
import { InputError, AnalysisError, type InputIssue } from '../types/issues.ts';
import type { Release, TableName } from '../types/release.ts';
import { TABLE_NAMES } from '../types/release.ts';
import type { Results } from '../types/results.ts';
import { codeVersion as currentCodeVersion } from '../version.ts';
import { mapOnWorkers } from '../parallel/pool.ts';
import { compareBlinding } from './blinding.ts';
import { loadReleaseWithBlinding, type BlindingRecord } from '../blinding/index.ts';
import { attributeShift, type AttributionOutcome, type HybridOutcome } from './attribution.ts';
import { differingGroups, maskOf } from './hybrid.ts';
import { INFLUENCE_METHOD } from './influence.ts';
import { diffInputs, tableTouched } from './inputs.ts';
import type { DiffJob, DiffJobResult } from './jobs.ts';
import { buildLinks, linksFor } from './links.ts';
import { addRowSums, byEffect, planSwaps, rowsThatMovedH0, TOP_OBJECTS, type SwapOutcome, type SwapPlan } from './movers.ts';
import { noiseSharing, type NoiseSharing } from './noise.ts';
import { buildOverlays } from './overlays.ts';
import { REFIT_TASK, type RefitTaskData } from './refitTask.ts';
import { tableRows } from './rows.ts';
import { h0Shift, linearSigma, parameterShifts, SN_TABLES, systemShifts, systemsWithChangedInputs } from './shifts.ts';
import { prepareSide, SIGMA_METHOD, type PreparedSide } from './sigma.ts';
import {
  DIFF_SCHEMA,
  GROUP_NAMES,
  type BlindingComparison,
  type DiffReport,
  type GroupName,
  type H0Shift,
  type InputChanges,
  type ObjectInfluence,
  type ParameterShift,
  type SystemShift,
} from './types.ts';

export { ATTRIBUTION_METHOD } from './attribution.ts';
export { ROW_REFIT_CAP, TOP_OBJECTS } from './movers.ts';
import { NEGLIGIBLE_SHIFT_OF_ERROR, SHIFT_FLAG_SIGMA } from './shifts.ts';
export { NEGLIGIBLE_SHIFT_OF_ERROR, SHIFT_FLAG_SIGMA };

/**
 * With `workers: 'auto'`, worker threads are used when the two releases hold at least this many
 * input rows together. Below it a recalibration takes a fraction of a second and the threads'
 * start (loading TypeScript, a cold JIT in each thread) costs more than the parallelism saves:
 * on the shared 2-core machine (load average 2-3) the demo pair 2026.2 -> 2026.3 (4,746 rows)
 * took 4.6 s in one thread and 7.0 s with two workers. At 16x (75,000 rows) one recalibration
 * takes about a minute, and running them two at a time is what bounds the wall time.
 */
export const AUTO_WORKERS_MIN_ROWS = 10_000;
/** Worker threads of 'auto' for large releases (the recalibrations are independent). */
export const DEFAULT_WORKERS = 2;

export interface CompareOptions {
  /** Worker threads for the recalibrations: a number (0 or 1: everything in this thread), or 'auto' (default: see AUTO_WORKERS_MIN_ROWS). */
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
  return compareReleases(a.release, b.release, { ...options, records: { a: a.record, b: b.record } });
}

/** Compare two releases already in memory. */
export async function compareReleases(a: Release, b: Release, options: CompareOptions = {}): Promise<DiffReport> {
  const wanted = options.workers ?? 'auto';
  return compareWith(wanted === 'auto' ? autoWorkers(a, b) : wanted, a, b, options);
}

/** Worker threads for 'auto': DEFAULT_WORKERS for large releases, none for small ones. */
export function autoWorkers(a: Release, b: Release): number {
  const rows = (r: Release) => TABLE_NAMES.reduce((n, t) => n + tableRows(r, t).length, 0);
  return rows(a) + rows(b) >= AUTO_WORKERS_MIN_ROWS ? DEFAULT_WORKERS : 0;
}

type SideOutcome = Extract<DiffJobResult, { kind: 'side' }>;

/** The outcomes of every recalibration the comparison needs (jobs.ts). */
interface Refits {
  sideA: SideOutcome;
  sideB: SideOutcome;
  hybrids: HybridOutcome[];
  swaps: SwapOutcome[];
}

/**
 * Run both sides' calibrations, the hybrids of the attribution (every proper, non-empty subset
 * of the differing groups taken from b; none while the shift is withheld) and the row swaps
 * as one map on the shared worker pool; the outcomes come back in job order whatever the
 * number of workers. A side that cannot be calibrated refuses the comparison.
 */
async function runRefits(
  workers: number,
  a: Release,
  b: Release,
  groups: GroupName[],
  swaps: SwapPlan[],
  shiftHidden: boolean,
  codeVersion: string,
  progress: (line: string) => void,
): Promise<Refits> {
  const hybridJobs: DiffJob[] = [];
  if (!shiftHidden) {
    for (let local = 1; local < (1 << groups.length) - 1; local++) {
      hybridJobs.push({ kind: 'hybrid', mask: maskOf(groups.filter((_, i) => local & (1 << i))) });
    }
  }
  const sideJobs: DiffJob[] = [
    { kind: 'side', side: 'a' },
    { kind: 'side', side: 'b' },
  ];
  const jobs: DiffJob[] = [...sideJobs, ...hybridJobs, ...swaps.map((s): DiffJob => ({ kind: 'swap', table: s.table, ids: s.ids }))];
  // the pool runs in this thread for fewer than two workers
  progress(`calibrating both releases${Math.min(workers, jobs.length) > 1 ? ' (worker threads)' : ''}`);
  const sidesDone: SideOutcome[] = [];
  const onResult = (_: number, r: DiffJobResult) => {
    if (r.kind !== 'side') return;
    sidesDone.push(r);
    if (sidesDone.length === 2 && sidesDone.every((s) => s.error === null) && hybridJobs.length) {
      progress(`recalibrating ${hybridJobs.length} hybrid release${hybridJobs.length === 1 ? '' : 's'} for the attribution`);
    }
  };
  const data: RefitTaskData = { a, b, codeVersion };
  const out = await mapOnWorkers<RefitTaskData, DiffJob, DiffJobResult>(REFIT_TASK, data, jobs, workers, onResult);
  const [sideA, sideB] = out.slice(0, 2) as SideOutcome[];
  for (const s of [sideA, sideB]) {
    if (s.error !== null) throw new AnalysisError(`release ${(s.side === 'a' ? a : b).manifest.id}: ${s.error}`, s.hint ?? undefined);
  }
  const hybridEnd = 2 + hybridJobs.length;
  return { sideA, sideB, hybrids: out.slice(2, hybridEnd) as HybridOutcome[], swaps: out.slice(hybridEnd) as SwapOutcome[] };
}

/** The shifts of H0, the parameters and the systems' moduli, each with the sigma of its difference. */
interface ResultShifts {
  h0: H0Shift | null;
  parameters: ParameterShift[];
  systems: SystemShift[];
  /** Systems with a changed input row (for the overlays). */
  changedSystems: Set<string>;
  prepA: PreparedSide | null;
  prepB: PreparedSide | null;
}

function resultShifts(a: Release, b: Release, resA: Results, resB: Results, refits: Refits, sharing: NoiseSharing, blinding: BlindingComparison): ResultShifts {
  const prepA = refits.sideA.snapshot ? prepareSide(refits.sideA.snapshot) : null;
  const prepB = refits.sideB.snapshot ? prepareSide(refits.sideB.snapshot) : null;
  // the supernova parameters' samples are nested only when the standardisation is the same
  const snNested = sharing.nested(SN_TABLES) && a.analysis.sn_alpha === b.analysis.sn_alpha && a.analysis.sn_beta === b.analysis.sn_beta;
  const linear = linearSigma(prepA, prepB, sharing, snNested);
  const h0 = h0Shift(resA, resB, linear, { values: blinding.values_hidden, shift: blinding.shift_hidden });
  const parameters = parameterShifts(a, b, resA, resB, linear, sharing, snNested, blinding.shift_hidden);
  const changedSystems = systemsWithChangedInputs(a, b, sharing);
  const systems = systemShifts(resA, resB, linear, changedSystems);
  return { h0, parameters, systems, changedSystems, prepA, prepB };
}

/** Whether nothing differs: no table touched, no analysis choice, variant or note changed, the same blinding. */
function identicalInputs(a: Release, b: Release, inputChanges: InputChanges, groups: GroupName[]): boolean {
  return (
    inputChanges.tables.every((t) => !tableTouched(t)) &&
    inputChanges.analysis.length === 0 &&
    inputChanges.variants.length === 0 &&
    !inputChanges.notes_changed &&
    a.manifest.blinded === b.manifest.blinded &&
    groups.length === 0
  );
}

function fitChanges(resA: Results, resB: Results): DiffReport['fit'] {
  return [
    { name: 'chi2_per_dof', a: resA.fit.dof > 0 ? resA.fit.chi2 / resA.fit.dof : 0, b: resB.fit.dof > 0 ? resB.fit.chi2 / resB.fit.dof : 0 },
    { name: 'n_data', a: resA.fit.n_data, b: resB.fit.n_data },
    { name: 'n_rejected', a: resA.fit.n_rejected, b: resB.fit.n_rejected },
    { name: 'scatter_cepheids', a: resA.fit.scatter.cepheids, b: resB.fit.scatter.cepheids },
    { name: 'scatter_supernovae', a: resA.fit.scatter.supernovae, b: resB.fit.scatter.supernovae },
  ];
}

async function compareWith(workers: number, a: Release, b: Release, options: CompareOptions): Promise<DiffReport> {
  const progress = options.progress ?? (() => {});
  const inputChanges = diffInputs(a, b);
  const sharing = noiseSharing(a, b);
  const blinding = compareBlinding(
    { blinded: a.manifest.blinded, record: options.records?.a ?? null },
    { blinded: b.manifest.blinded, record: options.records?.b ?? null },
    { a: a.manifest.id, b: b.manifest.id },
  );
  const groups = differingGroups(a, b);
  if (groups.length > GROUP_NAMES.length) throw new Error('more differing groups than groups');
  const swaps = blinding.shift_hidden ? [] : planSwaps(a, b, sharing);
  const refits = await runRefits(workers, a, b, groups, swaps, blinding.shift_hidden, options.codeVersion ?? currentCodeVersion(), progress);
  progress('comparing');

  const resA = refits.sideA.results!;
  const resB = refits.sideB.results!;
  const shifts = resultShifts(a, b, resA, resB, refits, sharing, blinding);
  // the fits' log10 H0 are true values even while blinded (attribution.ts scales them)
  const lA = refits.sideA.snapshot?.log10H0 ?? null;
  const lB = refits.sideB.snapshot?.log10H0 ?? null;
  const attributed = attributeShift({
    groups,
    hybrids: refits.hybrids,
    lA,
    lB,
    resA,
    resB,
    eitherBlinded: a.manifest.blinded || b.manifest.blinded,
    hideShift: blinding.shift_hidden,
    hideValues: blinding.values_hidden,
    blindingNote: blinding.note,
    idB: b.manifest.id,
  });
  let objects: ObjectInfluence[] = [];
  let notEstimated = 0;
  if (!blinding.shift_hidden && lA !== null && lB !== null && shifts.prepA && shifts.prepB) {
    const { prepA, prepB } = shifts;
    ({ objects, notEstimated } = rowsThatMovedH0({
      a,
      b,
      sharing,
      cells: inputChanges.cells,
      prepA,
      prepB,
      lA,
      lB,
      swaps,
      swapResults: refits.swaps,
      blindingScale: attributed.blindingScale,
    }));
    if (attributed.attribution) addRowSums(attributed.attribution, objects);
  }
  objects.sort(byEffect);
  const statusOf = (t: TableName, id: string) => sharing.status(t, id) ?? 'same';
  const overlays = buildOverlays(resA, resB, statusOf, (id) => shifts.changedSystems.has(id), blinding.shift_hidden);
  return diffReport({
    a,
    b,
    resA,
    resB,
    blinding,
    identical: identicalInputs(a, b, inputChanges, groups),
    shifts,
    attributed,
    inputChanges,
    objects,
    notEstimated,
    overlays,
    options,
  });
}

interface ReportParts {
  a: Release;
  b: Release;
  resA: Results;
  resB: Results;
  blinding: BlindingComparison;
  identical: boolean;
  shifts: ResultShifts;
  attributed: AttributionOutcome;
  inputChanges: InputChanges;
  objects: ObjectInfluence[];
  notEstimated: number;
  overlays: DiffReport['overlays'];
  options: CompareOptions;
}

/** The report (schema rungbook.diff/1), its fields in their fixed order. */
function diffReport(p: ReportParts): DiffReport {
  const { a, b, resA, resB, attributed, options } = p;
  const attribution = attributed.attribution;
  return {
    schema: DIFF_SCHEMA,
    a: a.manifest.id,
    b: b.manifest.id,
    releases: { a: releaseInfo(resA), b: releaseInfo(resB) },
    blinding: p.blinding,
    identical: p.identical,
    h0: p.shifts.h0,
    sigma_method: SIGMA_METHOD,
    flag_threshold_sigma: SHIFT_FLAG_SIGMA,
    flag_negligible_fraction: NEGLIGIBLE_SHIFT_OF_ERROR,
    attribution: attribution?.entries ?? [],
    attribution_detail: attribution,
    attribution_note: attributed.note,
    inputs: p.inputChanges.tables,
    input_changes: p.inputChanges,
    parameters: p.shifts.parameters,
    systems: p.shifts.systems,
    fit: fitChanges(resA, resB),
    top_objects: p.objects.slice(0, TOP_OBJECTS),
    top_objects_method: INFLUENCE_METHOD,
    objects_not_estimated: p.notEstimated,
    overlays: p.overlays,
    links:
      options.site !== undefined
        ? linksFor(
            { attribution: attribution?.entries ?? [], overlays: p.overlays },
            buildLinks(options.site, options.base, a.manifest.id, b.manifest.id, b.manifest.previous),
          )
        : null,
  };
}

function releaseInfo(r: Results): DiffReport['releases']['a'] {
  return { id: r.release.id, title: r.release.title, date: r.release.date, previous: r.release.previous, blinded: r.blinded, reached: r.reached };
}
