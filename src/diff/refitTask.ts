/**
 * The comparison's recalibrations as a task module of the shared worker pool
 * (src/parallel/pool.ts), like the calibration's variants (src/ladder/variantTask.ts) and the
 * recovery seeds (src/recover/seedTask.ts): the two releases are set up once per worker, then
 * each task is one job (jobs.ts: a side's calibration, a hybrid release, a row swap) and its
 * result that job's outcome. Pure: an outcome depends only on (a, b, code version, job); the
 * rung caches of the context only memoise, so which worker ran which job changes no number.
 */
import type { Release } from '../types/release.ts';
import { newJobContext, runJob, type DiffJob, type DiffJobResult, type JobContext } from './jobs.ts';

export interface RefitTaskData {
  a: Release;
  b: Release;
  codeVersion: string;
}

/** File URL of this module, for mapOnWorkers. */
export const REFIT_TASK = new URL('./refitTask.ts', import.meta.url);

export function setup(data: RefitTaskData): JobContext {
  return newJobContext(data.a, data.b, data.codeVersion);
}

export function handle(ctx: JobContext, job: DiffJob): DiffJobResult {
  return runJob(ctx, job);
}
