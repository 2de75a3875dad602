/**
 * Recovery seeds on the worker-thread pool, for `npm run bench`: time to calibrate --seeds
 * generated releases on --workers threads. Prints one JSON line.
 *   tsx scripts/bench/recovery.ts --seeds 8 --workers 2
 */
import { recoverSeeds } from '../../tests/recovery/pool.ts';

const arg = (name: string) => Number(process.argv[process.argv.indexOf(`--${name}`) + 1]);
const seeds = Array.from({ length: arg('seeds') }, (_, i) => 1000 + i);
const workers = arg('workers');
const t = performance.now();
await recoverSeeds(seeds, {}, workers);
console.log(JSON.stringify({ seeds: seeds.length, workers, ms: performance.now() - t }));
