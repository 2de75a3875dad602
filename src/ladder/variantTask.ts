/**
 * Worker-side task of calibrateOnWorkers: the release is sent once (setup), each task is the
 * index of a variant, its result that variant's outcome. Pure: depends only on (release, index).
 */
import type { Release } from '../types/release.ts';
import { newRungCache, runVariant, type RungCache, type VariantOutcome } from './calibrate.ts';

export function setup(release: Release): { release: Release; cache: RungCache } {
  return { release, cache: newRungCache() };
}

export function handle(ctx: { release: Release; cache: RungCache }, index: number): VariantOutcome {
  return runVariant(ctx.release, ctx.release.variants[index], ctx.cache);
}
