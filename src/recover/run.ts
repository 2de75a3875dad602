/**
 * A recovery run on one release folder: its own fit as the truth, then the seeds (or one shard
 * of them) on the shared worker pool (src/parallel/pool.ts), in seed order. Writing files is the command's job
 * (src/cli/recover.ts).
 */
import { loadReleaseWithBlinding } from '../blinding/apply.ts';
import { calibrateRelease } from '../ladder/calibrate.ts';
import type { Release } from '../types/release.ts';
import type { Results } from '../types/results.ts';
import { mapOnWorkers } from '../parallel/pool.ts';
import { publishedQuantities } from './quantities.ts';
import type { SeedLine } from './seed.ts';
import type { SeedTaskData } from './seedTask.ts';
import { SEEDS_SCHEMA, shardSeeds, type SeedsHeader, type Shard } from './shard.ts';
import type { SimulateOptions } from './simulate.ts';

export interface RecoverOptions {
  seeds: number;
  first: number;
  shard: Shard;
  workers: number;
  codeVersion: string;
  /** Test hook only (see simulate.ts). */
  simulate?: SimulateOptions;
  onProgress?: (done: number, total: number) => void;
}

/** The release as the ladder reads it (a blinded one stays blinded) and its own baseline fit. */
export function releaseAndTruth(dir: string, codeVersion: string): { release: Release; truthResults: Results } {
  const { release: read } = loadReleaseWithBlinding(dir);
  // The truth is the baseline fit; the variants are not part of the simulated model.
  const release: Release = { ...read, variants: [] };
  return { release, truthResults: calibrateRelease(release, { codeVersion }) };
}

export function seedsHeader(truthResults: Results, o: Pick<RecoverOptions, 'seeds' | 'first' | 'shard' | 'codeVersion'>): SeedsHeader {
  return {
    schema: SEEDS_SCHEMA,
    release: { id: truthResults.release.id, blinded: truthResults.blinded, inputs_hash: truthResults.provenance.inputs_hash },
    code_version: o.codeVersion,
    first: o.first,
    count: o.seeds,
    shard: o.shard,
    keys: [...publishedQuantities(truthResults).keys()],
  };
}

/** Run the seeds of `o.shard`; lines come back in seed order. */
export async function recoverRelease(dir: string, o: RecoverOptions): Promise<{ header: SeedsHeader; lines: SeedLine[] }> {
  const { release, truthResults } = releaseAndTruth(dir, o.codeVersion);
  const header = seedsHeader(truthResults, o);
  const seeds = shardSeeds(o.first, o.seeds, o.shard);
  const data: SeedTaskData = { release, truthResults, codeVersion: o.codeVersion, options: o.simulate ?? {} };
  let done = 0;
  o.onProgress?.(0, seeds.length);
  // Results come back in task order, that is in seed order, whatever the workers.
  const lines = await mapOnWorkers<SeedTaskData, number, SeedLine>(new URL('./seedTask.ts', import.meta.url), data, seeds, o.workers, () =>
    o.onProgress?.(++done, seeds.length),
  );
  return { header, lines };
}
