/**
 * Recovery seeds as a task module of the shared worker pool (src/parallel/pool.ts): the context
 * (the release and its own fit as the truth) is set up once per worker, then each task is one
 * seed and its result that seed's line. Pure: a line depends only on (context, seed).
 */
import type { Release } from '../types/release.ts';
import type { Results } from '../types/results.ts';
import { runSeed, seedContext, type SeedContext, type SeedLine } from './seed.ts';
import type { SimulateOptions } from './simulate.ts';

export interface SeedTaskData {
  release: Release;
  truthResults: Results;
  codeVersion: string;
  options: SimulateOptions;
}

export function setup(data: SeedTaskData): SeedContext {
  return seedContext(data.release, data.truthResults, data.codeVersion, data.options);
}

export function handle(ctx: SeedContext, seed: number): SeedLine {
  return runSeed(ctx, seed);
}
