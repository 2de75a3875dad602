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

/**
 * Below this many input rows the variants run in this thread when the number of workers is
 * left to us: a worker thread first loads the ladder's modules (about 1 s of CPU, measured with
 * `npm run bench`), more than the variants of a demo-sized release take. The comparison uses the
 * same threshold for its worker threads (src/diff/compare.ts).
 */
export const AUTO_WORKERS_MIN_ROWS = 10_000;

/** Workers for 'auto': the available cores for a large release, 1 (this thread) for a small one. */
export function autoWorkers(release: Release): number {
  const rows = release.inputs.reduce((n, t) => n + t.rows, 0);
  return rows >= AUTO_WORKERS_MIN_ROWS ? defaultWorkers() : 1;
}

/** calibrateRelease with the variants on `workers` threads ('auto': see autoWorkers). */
export async function calibrateOnWorkers(release: Release, options: CalibrateOptions, workersOption: number | 'auto' = 'auto'): Promise<Results> {
  const workers = workersOption === 'auto' ? autoWorkers(release) : workersOption;
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
