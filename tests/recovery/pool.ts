/** Run recoverSeed over many seeds in worker threads (the machine has 2 cores; CI too). */
import { Worker } from 'node:worker_threads';
import { availableParallelism } from 'node:os';
import type { Pull } from './harness.ts';

export async function recoverSeeds(seeds: number[], workers = Math.min(2, availableParallelism())): Promise<Pull[]> {
  const chunks: number[][] = Array.from({ length: workers }, () => []);
  seeds.forEach((s, i) => chunks[i % workers].push(s));
  const results = await Promise.all(
    chunks.map(
      (chunk) =>
        new Promise<Pull[]>((resolve, reject) => {
          const w = new Worker(new URL('./worker-entry.mjs', import.meta.url), { workerData: { seeds: chunk } });
          w.once('message', resolve);
          w.once('error', reject);
          w.once('exit', (code) => code !== 0 && reject(new Error(`recovery worker exited with ${code}`)));
        }),
    ),
  );
  return results.flat();
}
