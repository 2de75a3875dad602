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
import { calibrateRelease, earlyRungs, finishCalibration, newRungCache, runLadder, type CalibrateOptions, type VariantOutcome } from './calibrate.ts';

const VARIANT_TASK = new URL('./variantTask.ts', import.meta.url);

/**
 * Below this many input rows the variants run in this thread when the number of workers is
 * left to us: a worker thread first loads the ladder's modules (about 1 s of CPU, measured with
 * `npm run bench`), more than the variants of a demo-sized release take. The comparison uses the
 * same threshold for its worker threads (src/diff/compare.ts).
 */
export const AUTO_WORKERS_MIN_ROWS = 10_000;

/**
 * Peak memory that 'auto' keeps a calibration under: issue 14's target for a 16x release with
 * its variants (500 MB). Each worker thread holds its own copy of the release and of its fits.
 */
export const AUTO_MEMORY_BUDGET_MB = 500;

/**
 * Peak memory of a calibration, MB, as a line in the input rows, fitted to the peaks measured with
 * `/usr/bin/time -v` and `npm run bench` on the 2-core machine (December 2026): this thread
 * (the process) about 147 MB at 2,345 rows and 374-404 MB at 37,489 rows; two worker threads
 * about 93 MB more at 2,345 rows and 300-340 MB more at 37,489 rows (each its own module graph,
 * copy of the release and fits). Rounded up, so that 'auto' errs towards fewer threads.
 */
export function estimatedPeakMb(rows: number, workers: number): number {
  const process = 140 + 0.0072 * rows;
  const perWorker = 40 + 0.0036 * rows;
  return process + (workers > 1 ? workers : 0) * perWorker;
}

/**
 * Workers for 'auto': the available cores for a large release, 1 (this thread) for a small one,
 * and never so many that the estimated peak memory passes AUTO_MEMORY_BUDGET_MB (at 16x the demo
 * two workers took 690-740 MB for a wall time no shorter than one thread's).
 */
export function autoWorkers(release: Release): number {
  const rows = release.inputs.reduce((n, t) => n + t.rows, 0);
  if (rows < AUTO_WORKERS_MIN_ROWS) return 1;
  let workers = defaultWorkers();
  while (workers > 1 && estimatedPeakMb(rows, workers) > AUTO_MEMORY_BUDGET_MB) workers--;
  return workers;
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
