/**
 * The full calibration with the systematic variants on worker threads (src/parallel/pool.ts).
 * Each variant is an independent pass of the ladder. This thread computes the baseline's early
 * rungs (parallax, main sequence) first and sends them with the release, so that variants that
 * leave those choices alone do not redo them (the rung cache only memoises pure results); the
 * workers then run the variants while this thread fits the baseline, and the outcomes are
 * assembled in the release's order exactly as calibrateRelease does: the results are the same
 * with any number of workers.
 */
import type { Release } from '../types/release.ts';
import type { Results } from '../types/results.ts';
import { mapOnWorkers, defaultWorkers } from '../parallel/pool.ts';
import type { VariantTaskData } from './variantTask.ts';
import {
  calibrateRelease,
  earlyRungs,
  finishCalibration,
  newRungCache,
  runLadder,
  type CalibrateOptions,
  type VariantOutcome,
} from './calibrate.ts';

const VARIANT_TASK = new URL('./variantTask.ts', import.meta.url);

/** calibrateRelease with the variants on `workers` threads (default: the available cores). */
export async function calibrateOnWorkers(release: Release, options: CalibrateOptions, workers: number = defaultWorkers()): Promise<Results> {
  if (workers <= 1 || release.variants.length === 0) return calibrateRelease(release, options);
  const cache = newRungCache();
  try {
    earlyRungs(release, release.analysis, cache);
  } catch {
    // the baseline pass below refuses the release with the ladder's own words
    return calibrateRelease(release, options);
  }
  const outcomes = mapOnWorkers<VariantTaskData, number, VariantOutcome>(
    VARIANT_TASK,
    { release, cache },
    release.variants.map((_, i) => i),
    Math.min(workers, release.variants.length),
  );
  // the baseline here meanwhile (a failure refuses the release, as in calibrateRelease)
  let baseline;
  try {
    baseline = runLadder(release, release.analysis, cache);
  } catch (e) {
    await outcomes.catch(() => undefined);
    throw e;
  }
  return finishCalibration(release, baseline, await outcomes, options);
}
