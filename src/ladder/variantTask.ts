/**
 * Worker-side task of calibrateOnWorkers: the release and the baseline's early rungs are sent
 * once (setup), each task is the index of a variant, its result that variant's outcome. Pure:
 * depends only on (release, index); the rung cache only memoises.
 */
import type { Release } from '../types/release.ts';
import { runVariant, type RungCache, type VariantOutcome } from './calibrate.ts';

export interface VariantTaskData {
  release: Release;
  cache: RungCache;
}

export function setup(data: VariantTaskData): VariantTaskData {
  return data;
}

export function handle(ctx: VariantTaskData, index: number): VariantOutcome {
  return runVariant(ctx.release, ctx.release.variants[index], ctx.cache);
}
