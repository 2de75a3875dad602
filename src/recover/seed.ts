/**
 * One seed of a recovery: simulate, calibrate, compare with the truth. Pure given its context
 * (the release, its own fit and the options): the line of a seed is the same whoever runs it,
 * in which worker and in which shard.
 */
import { calibrateRelease } from '../ladder/calibrate.ts';
import { AnalysisError } from '../types/issues.ts';
import type { Release } from '../types/release.ts';
import type { Results } from '../types/results.ts';
import { publishedQuantities, type QuantityMap } from './quantities.ts';
import { simulateRelease, type SimulateOptions } from './simulate.ts';
import { truthFromResults, truthQuantities, type RecoveryTruth } from './truth.ts';

/** One quantity of one seed: the simulated fit's estimate and error, the truth, and the pull. */
export interface SeedQuantity {
  estimate: number;
  error: number;
  truth: number;
  /** (estimate - truth) / error. */
  pull: number;
}

/** One line of the seeds file (JSON Lines): a calibrated seed, or one whose calibration refused the simulated data. */
export type SeedLine = { seed: number; quantities: Record<string, SeedQuantity | null> } | { seed: number; failed: string };

export interface SeedContext {
  release: Release;
  /** The release's own baseline fit (the truth). */
  truthResults: Results;
  truth: RecoveryTruth;
  truthQuantities: QuantityMap;
  codeVersion: string;
  options: SimulateOptions;
}

export function seedContext(release: Release, truthResults: Results, codeVersion: string, options: SimulateOptions = {}): SeedContext {
  const truth = truthFromResults(release, truthResults);
  return {
    release,
    truthResults,
    truth,
    truthQuantities: truthQuantities(truth, publishedQuantities(truthResults)),
    codeVersion,
    options,
  };
}

/** Calibrate one simulated release and compare every followed quantity with the truth. */
export function runSeed(ctx: SeedContext, seed: number): SeedLine {
  const sim = simulateRelease(ctx.release, ctx.truth, seed, ctx.options);
  let fitted: Results;
  try {
    fitted = calibrateRelease(sim, { codeVersion: ctx.codeVersion });
  } catch (e) {
    // A simulated release that the ladder refuses is a finding, recorded as such (never skipped).
    if (e instanceof AnalysisError) return { seed, failed: e.message };
    throw e;
  }
  const est = publishedQuantities(fitted);
  const quantities: Record<string, SeedQuantity | null> = {};
  for (const [key, t] of ctx.truthQuantities) {
    const q = est.get(key);
    quantities[key] = q ? { estimate: q.value, error: q.err, truth: t.value, pull: (q.value - t.value) / q.err } : null;
  }
  return { seed, quantities };
}
