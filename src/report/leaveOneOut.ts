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

interface H0Fit {
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

/** One system left out: refit and compare with the baseline. */
export function leaveOneSystemOut(release: Release, system: string, base: H0Fit | null): LeaveOneOutEntry {
  const count = <T extends { system: string }>(rows: readonly T[]) => rows.reduce((n, r) => n + (r.system === system ? 1 : 0), 0);
  const removed = {
    parallax: count(release.parallax),
    main_sequence: count(release.mainSequence),
    cepheids: count(release.cepheids),
    sn_calibrators: count(release.snCalibrators),
  };
  const empty = { system, removed, h0: null, h0_stat: null, shift: null, shift_err: null, variance_reversed: false };
  let fit: H0Fit | null;
  try {
    fit = baselineH0(withoutSystem(release, system));
  } catch (e) {
    if (e instanceof AnalysisError) return { ...empty, error: e.message };
    throw e;
  }
  if (fit === null) return { ...empty, error: 'without this system the ladder does not reach the Hubble flow' };
  if (base === null) return { ...empty, h0: fit.h0, h0_stat: fit.stat, error: 'the release itself does not reach the Hubble flow' };
  const dv = fit.variance - base.variance;
  return { system, removed, h0: fit.h0, h0_stat: fit.stat, shift: fit.h0 - base.h0, shift_err: Math.sqrt(Math.abs(dv)), variance_reversed: dv < 0, error: null };
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

/** Leave-one-out of a release folder (read as `calibrate` reads it, blinding applied). */
export function leaveOneOutDir(dir: string): LeaveOneOut {
  return leaveOneOut(loadReleaseWithBlinding(dir).release);
}
