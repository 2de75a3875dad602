/**
 * Run recoverSeed over many seeds on the project's worker-thread pool (src/parallel/pool.ts),
 * by default on every core. The pulls come back in seed order whatever the number of workers.
 */
import { defaultWorkers, mapOnWorkers } from '../../src/parallel/pool.ts';
import type { Pull } from './harness.ts';

const SEED_TASK = new URL('./seedTask.ts', import.meta.url);

export async function recoverSeeds(seeds: number[], workers = defaultWorkers()): Promise<Pull[]> {
  const perSeed = await mapOnWorkers<null, number, Pull[]>(SEED_TASK, null, seeds, workers);
  return perSeed.flat();
}
