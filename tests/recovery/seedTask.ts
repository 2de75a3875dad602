// Task module of the recovery seeds for src/parallel/pool.ts: each task is one seed, its result
// the pulls of that seed's calibration (recoverSeed depends on the seed alone).
import { recoverSeed, type Pull } from './harness.ts';

export function setup(): null {
  return null;
}

export function handle(_ctx: null, seed: number): Pull[] {
  return recoverSeed(seed);
}
