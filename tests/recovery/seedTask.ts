// Task module of the recovery seeds for src/parallel/pool.ts: each task is one seed, its result
// the pulls of that seed's calibration (recoverSeed depends on the seed and the shared options alone).
import { recoverSeed, type Pull, type RecoverSeedOptions } from './harness.ts';

export function setup(options: RecoverSeedOptions): RecoverSeedOptions {
  return options;
}

export function handle(options: RecoverSeedOptions, seed: number): Pull[] {
  return recoverSeed(seed, options);
}
