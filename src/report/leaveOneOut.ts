/**
 * What each system does to H0: the release is refitted without every row that names the system
 * (its systems row, parallax stars, main-sequence stars, Cepheids and calibrator supernovae), with
 * the same calibration entry point as the baseline (`runLadder` of src/ladder/calibrate.ts: the
 * rungs, intrinsic scatters, alpha/beta and outlier rejection all redone), and the H0 of that
 * refit is compared with the baseline's. A full refit, not a linear estimate from leverages.
 *
 * The error of the shift: the release without the system is a subset of the release, so the two
 * estimates are correlated; the variance of the difference of two nested estimates is the
 * difference of their variances (Gratton & Challinor 2020, MNRAS 499, 3410, "Understanding
 * parameter differences between analyses employing nested data subsets", section 2; from memory).
 * With intrinsic scatters refitted the difference can come out slightly negative; its absolute
 * value is used then, and the entry says so.
 *
 * Blinded releases: both fits carry the same hidden factor, so the ratio H0'/H0 (and the shift in
 * units of its error) is true, the shift in km/s/Mpc is not; the pages show the relative shift.
 */
import { loadReleaseWithBlinding } from '../blinding/apply.ts';
import { runLadder } from '../ladder/calibrate.ts';
import { defaultWorkers, mapOnWorkers } from '../parallel/pool.ts';
import type { Release } from '../types/release.ts';
import { AnalysisError } from '../types/issues.ts';

export const LOO_SCHEMA = 'rungbook.leave-one-out/1';

export interface LeaveOneOutEntry {
  system: string;
  /** Rows removed from each table. */
  removed: { parallax: number; main_sequence: number; cepheids: number; sn_calibrators: number };
  /** H0 of the refit without the system (blinded when the release is), or null when it failed. */
  h0: number | null;
  h0_stat: number | null;
  /** H0 without the system minus the baseline H0 (km/s/Mpc). */
  shift: number | null;
  /** Standard deviation of the shift: sqrt(|var without − var with|). */
  shift_err: number | null;
  /** true when var without < var with (refitted scatters): the absolute value was used. */
  variance_reversed: boolean;
  /** Why the refit could not be done (the ladder's own words), or null. */
  error: string | null;
}

export interface LeaveOneOut {
  schema: typeof LOO_SCHEMA;
  release: string;
  /** Baseline H0 and its statistical error, from the same entry point. */
  h0: number | null;
  h0_stat: number | null;
  entries: LeaveOneOutEntry[];
}

/** The release without every row naming `system` (rows keep their order and their lines). */
export function withoutSystem(release: Release, system: string): Release {
  const keep = <T extends { system: string }>(rows: readonly T[]) => rows.filter((r) => r.system !== system);
  return {
    ...release,
    systems: keep(release.systems),
    parallax: keep(release.parallax),
    mainSequence: keep(release.mainSequence),
    cepheids: keep(release.cepheids),
    snCalibrators: keep(release.snCalibrators),
  };
}

export interface H0Fit {
  h0: number;
  stat: number;
  /** Variance of H0 (km/s/Mpc)^2. */
  variance: number;
}

/** H0 of one baseline pass of the ladder (null when the Hubble flow is not reached). */
export function baselineH0(release: Release): H0Fit | null {
  const run = runLadder(release, release.analysis);
  if (!run.log10H0) return null;
  const h0 = 10 ** run.log10H0.value;
  const stat = h0 * Math.LN10 * Math.sqrt(run.log10H0.variance);
  return { h0, stat, variance: stat * stat };
}

/** Rows of each table that name the system. */
function removedRows(release: Release, system: string): LeaveOneOutEntry['removed'] {
  const count = <T extends { system: string }>(rows: readonly T[]) => rows.reduce((n, r) => n + (r.system === system ? 1 : 0), 0);
  return {
    parallax: count(release.parallax),
    main_sequence: count(release.mainSequence),
    cepheids: count(release.cepheids),
    sn_calibrators: count(release.snCalibrators),
  };
}

/** The refit without one system: its H0, or the ladder's reason for refusing it. */
export interface Refit {
  fit: H0Fit | null;
  error: string | null;
}

/** Refit the release without `system` (the expensive part: one full pass of the ladder). */
export function refitWithout(release: Release, system: string): Refit {
  try {
    const fit = baselineH0(withoutSystem(release, system));
    return fit === null ? { fit: null, error: 'without this system the ladder does not reach the Hubble flow' } : { fit, error: null };
  } catch (e) {
    if (e instanceof AnalysisError) return { fit: null, error: e.message };
    throw e;
  }
}

/** The entry of one system from its refit and the baseline. */
export function looEntry(release: Release, system: string, refit: Refit, base: H0Fit | null): LeaveOneOutEntry {
  const removed = removedRows(release, system);
  const empty = { system, removed, h0: null, h0_stat: null, shift: null, shift_err: null, variance_reversed: false };
  const fit = refit.fit;
  if (fit === null) return { ...empty, error: refit.error ?? 'the refit failed' };
  if (base === null) return { ...empty, h0: fit.h0, h0_stat: fit.stat, error: 'the release itself does not reach the Hubble flow' };
  const dv = fit.variance - base.variance;
  return {
    system,
    removed,
    h0: fit.h0,
    h0_stat: fit.stat,
    shift: fit.h0 - base.h0,
    shift_err: Math.sqrt(Math.abs(dv)),
    variance_reversed: dv < 0,
    error: null,
  };
}

/** One system left out: refit and compare with the baseline. */
export function leaveOneSystemOut(release: Release, system: string, base: H0Fit | null): LeaveOneOutEntry {
  return looEntry(release, system, refitWithout(release, system), base);
}

/** Entries with a shift and its σ (the system could be left out). */
export function shiftedEntries(entries: readonly LeaveOneOutEntry[]): LeaveOneOutEntry[] {
  return entries.filter((e) => e.error === null && e.shift !== null && e.shift_err !== null);
}

/** The entry whose removal moves H0 most (largest |shift|), or null when none has a shift. */
export function largestShift(entries: readonly LeaveOneOutEntry[]): LeaveOneOutEntry | null {
  const ok = shiftedEntries(entries);
  return ok.length === 0 ? null : ok.reduce((m, e) => (Math.abs(e.shift!) > Math.abs(m.shift!) ? e : m), ok[0]!);
}

/** Systems to leave out: every row of the systems table, in its order. */
export function systemsToLeaveOut(release: Release): string[] {
  return release.systems.map((s) => s.system);
}

/** Leave-one-out for every system of a loaded release, in this thread. */
export function leaveOneOut(release: Release): LeaveOneOut {
  const base = baselineH0(release);
  return {
    schema: LOO_SCHEMA,
    release: release.manifest.id,
    h0: base?.h0 ?? null,
    h0_stat: base?.stat ?? null,
    entries: systemsToLeaveOut(release).map((s) => leaveOneSystemOut(release, s, base)),
  };
}

/** Leave-one-out of a release folder (read as `calibrate` reads it, blinding applied), in this thread. */
export function leaveOneOutDir(dir: string): LeaveOneOut {
  return leaveOneOut(loadReleaseWithBlinding(dir).release);
}

/** Data every refit worker shares (src/report/leaveOneOutTask.ts): the release folders. */
export interface LooTaskData {
  dirs: string[];
}

/** One refit: a system of one folder. */
export interface LooTask {
  /** Index into LooTaskData.dirs. */
  dir: number;
  system: string;
}

const LOO_TASK = new URL('./leaveOneOutTask.ts', import.meta.url);

/**
 * Below this much work (systems x input rows, summed over the releases) the refits run in this
 * thread: a worker thread first loads the ladder's modules (about 1 s of CPU, see
 * src/ladder/calibrateParallel.ts), more than the refits of a few small releases take. A demo
 * release (about 20 systems, 2,300 rows) is well above it.
 */
export const LOO_WORKERS_MIN_WORK = 20_000;

/** One release's outcome in leaveOneOutDirs: its leave-one-out, or why its folder could not be read. */
export type LooOutcome = { ok: true; value: LeaveOneOut } | { ok: false; error: unknown };

/**
 * Leave-one-out of several release folders at once: every (release, system) refit is one task
 * on a single pool of worker threads (src/parallel/pool.ts), while this thread fits the
 * baselines; the results are the same as leaveOneOutDir's for each folder, whatever the number
 * of workers. A folder that cannot be read gives its error, the others go on.
 */
export async function leaveOneOutDirs(dirs: readonly string[], workers?: number): Promise<LooOutcome[]> {
  const loaded = dirs.map((dir): { ok: true; release: Release } | { ok: false; error: unknown } => {
    try {
      return { ok: true, release: loadReleaseWithBlinding(dir).release };
    } catch (error) {
      return { ok: false, error };
    }
  });
  const tasks: LooTask[] = [];
  let work = 0;
  loaded.forEach((l, i) => {
    if (!l.ok) return;
    const rows = l.release.inputs.reduce((n, t) => n + t.rows, 0);
    for (const system of systemsToLeaveOut(l.release)) {
      tasks.push({ dir: i, system });
      work += rows;
    }
  });
  const n = workers ?? (work < LOO_WORKERS_MIN_WORK ? 1 : defaultWorkers());
  const refits = mapOnWorkers<LooTaskData, LooTask, Refit>(LOO_TASK, { dirs: [...dirs] }, tasks, n);
  // The baselines here meanwhile; a defect of ours in them waits for the workers before it stops the build.
  const bases = new Map<number, H0Fit | null | { error: unknown }>();
  loaded.forEach((l, i) => {
    if (!l.ok) return;
    try {
      bases.set(i, baselineH0(l.release));
    } catch (error) {
      bases.set(i, { error });
    }
  });
  const done = await refits;
  const byRelease = new Map<number, LeaveOneOutEntry[]>();
  tasks.forEach((t, k) => {
    const l = loaded[t.dir]!;
    const base = bases.get(t.dir);
    if (!l.ok || (base !== null && base !== undefined && 'error' in base)) return;
    const list = byRelease.get(t.dir) ?? [];
    list.push(looEntry(l.release, t.system, done[k]!, base ?? null));
    byRelease.set(t.dir, list);
  });
  return loaded.map((l, i): LooOutcome => {
    if (!l.ok) return { ok: false, error: l.error };
    const base = bases.get(i) ?? null;
    if (base !== null && 'error' in base) return { ok: false, error: base.error };
    return {
      ok: true,
      value: { schema: LOO_SCHEMA, release: l.release.manifest.id, h0: base?.h0 ?? null, h0_stat: base?.stat ?? null, entries: byRelease.get(i) ?? [] },
    };
  });
}
