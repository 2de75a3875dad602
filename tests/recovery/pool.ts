/**
 * Run recoverSeed over many seeds on the project's worker-thread pool (src/parallel/pool.ts),
 * by default on every core. The pulls come back in seed order whatever the number of workers.
 */
import { defaultWorkers, mapOnWorkers } from '../../src/parallel/pool.ts';
import type { Pull, RecoverSeedOptions } from './harness.ts';

const SEED_TASK = new URL('./seedTask.ts', import.meta.url);

export async function recoverSeeds(seeds: number[], options: RecoverSeedOptions = {}, workers = defaultWorkers()): Promise<Pull[]> {
  const perSeed = await mapOnWorkers<RecoverSeedOptions, number, Pull[]>(SEED_TASK, options, seeds, workers);
  return perSeed.flat();
}
