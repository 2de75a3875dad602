/**
 * A minimal pool of worker threads for recovery seeds: each worker receives the context once
 * (the release and its own fit), then seeds one at a time, and posts each seed's line. With 0
 * workers, or when none starts, seeds run in this thread. A seed's line does not depend on where
 * it ran (seed.ts is pure), so the results are the same either way.
 * (src/parallel/ is being written for all pools; this one is kept small until they are unified.)
 */
import { readFileSync } from 'node:fs';
import { createRequire } from 'node:module';
import { availableParallelism } from 'node:os';
import { dirname, join } from 'node:path';
import { pathToFileURL } from 'node:url';
import { Worker } from 'node:worker_threads';
import type { Release } from '../types/release.ts';
import type { Results } from '../types/results.ts';
import { runSeed, seedContext, type SeedLine } from './seed.ts';
import type { SimulateOptions } from './simulate.ts';

export interface PoolInit {
  release: Release;
  truthResults: Results;
  codeVersion: string;
  options: SimulateOptions;
}

/** Every core by default. */
export function defaultWorkers(): number {
  return Math.max(1, availableParallelism());
}

/**
 * Code of a worker thread: register tsx's loader, then import worker.ts (the pattern of
 * src/diff/pool.ts: on Node 20 `execArgv: ['--import', 'tsx']` loads the entry before the hooks).
 */
function workerBootstrap(): string {
  const require = createRequire(import.meta.url);
  const pkgPath = require.resolve('tsx/package.json');
  const pkg = JSON.parse(readFileSync(pkgPath, 'utf8')) as { exports: Record<string, { import: { default: string } }> };
  const api = pathToFileURL(join(dirname(pkgPath), pkg.exports['./esm/api'].import.default)).href;
  const entry = new URL('./worker.ts', import.meta.url).href;
  return `import(${JSON.stringify(api)}).then((tsx) => { tsx.register(); return import(${JSON.stringify(entry)}); });`;
}

/**
 * Run `seeds` on `workers` threads; `onLine` is called for each finished seed (in completion
 * order). Resolves when all are done; rejects on the first seed that throws (a defect, not a
 * refusal: refusals are lines with "failed").
 */
export async function runSeeds(init: PoolInit, seeds: readonly number[], workers: number, onLine: (line: SeedLine) => void): Promise<void> {
  const n = Math.min(Math.max(0, Math.floor(workers)), seeds.length);
  if (n === 0) {
    const ctx = seedContext(init.release, init.truthResults, init.codeVersion, init.options);
    for (const s of seeds) onLine(runSeed(ctx, s));
    return;
  }
  const queue = [...seeds];
  const threads: Worker[] = [];
  try {
    await new Promise<void>((resolve, reject) => {
      let running = 0;
      let failed = false;
      const fail = (e: Error) => {
        if (!failed) {
          failed = true;
          reject(e);
        }
      };
      const feed = (w: Worker) => {
        const seed = queue.shift();
        if (seed === undefined) {
          running--;
          if (running === 0 && !failed) resolve();
          return;
        }
        w.postMessage({ type: 'seed', seed });
      };
      for (let i = 0; i < n; i++) {
        const w = new Worker(workerBootstrap(), { eval: true, execArgv: [] });
        threads.push(w);
        running++;
        w.on('message', (m: { type: string; line?: SeedLine; message?: string }) => {
          if (m.type === 'ready') {
            w.postMessage({ type: 'init', ...init });
            feed(w);
          } else if (m.type === 'line') {
            onLine(m.line!);
            feed(w);
          } else fail(new Error(`recovery worker failed: ${m.message}`));
        });
        w.on('error', (e) => fail(e));
        w.on('exit', (code) => {
          if (code !== 0) fail(new Error(`recovery worker stopped with exit code ${code}`));
        });
      }
    });
  } finally {
    await Promise.all(threads.map((t) => t.terminate()));
  }
}
