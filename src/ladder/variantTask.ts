/**
 * Worker-side task of calibrateOnWorkers: the release and the baseline's early rungs are sent
 * once (setup), each task is the index of a variant, its result that variant's outcome. Pure:
 * depends only on (release, index); the rung cache only memoises.
 */
import type { Release } from '../types/release.ts';
import { runLadder, runVariant, type LadderRun, type RungCache, type VariantOutcome } from './calibrate.ts';

export interface VariantTaskData {
  release: Release;
  cache: RungCache;
}

interface WorkerContext extends VariantTaskData {
  /** The baseline, run at most once per worker: only variants that change the data need it (their noise). */
  baseline: LadderRun | null;
}

export function setup(data: VariantTaskData): WorkerContext {
  return { ...data, baseline: null };
}

export function handle(ctx: WorkerContext, index: number): VariantOutcome {
  const baseline = () => (ctx.baseline ??= runLadder(ctx.release, ctx.release.analysis, ctx.cache));
  return runVariant(ctx.release, ctx.release.variants[index], ctx.cache, baseline);
}
