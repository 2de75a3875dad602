/**
 * The comparison's recalibrations on the shared worker pool (src/parallel/pool.ts, task module
 * src/diff/refitTask.ts): they run on worker threads, and give what one thread gives.
 */
import { join } from 'node:path';
import { describe, expect, it } from 'vitest';
import { loadRelease } from '../../src/io/release.ts';
import { mapOnWorkers } from '../../src/parallel/pool.ts';
import type { RefitTaskData } from '../../src/diff/refitTask.ts';
import type { DiffJobResult } from '../../src/diff/jobs.ts';
import { newJobContext, runJob, type DiffJob } from '../../src/diff/jobs.ts';
import { maskOf } from '../../src/diff/hybrid.ts';
import { AUTO_WORKERS_MIN_ROWS, autoWorkers, compareReleaseDirs } from '../../src/diff/compare.ts';
import { DEMO_DIR } from './fixtures.ts';

const PROBE = new URL('./refitProbe.ts', import.meta.url);

describe('recalibrations on the worker pool', () => {
  it('runs jobs on two worker threads with the same results as in this thread', async () => {
    const a = loadRelease(join(DEMO_DIR, '2026.2'));
    const b = loadRelease(join(DEMO_DIR, '2026.3'));
    const jobs: DiffJob[] = [
      { kind: 'hybrid', mask: maskOf(['cepheids']) },
      { kind: 'hybrid', mask: maskOf(['sn_hubble_flow']) },
      { kind: 'swap', table: 'cepheids', ids: ['Juniperfold-C001'] },
    ];
    const fromWorkers = await mapOnWorkers<RefitTaskData, DiffJob, { outcome: DiffJobResult; thread: number }>(PROBE, { a, b, codeVersion: 'test' }, jobs, 2);
    // every outcome computed on a worker thread (none left to this thread by a worker that failed)
    expect(fromWorkers.every((r) => r.thread !== 0)).toBe(true);
    const ctx = newJobContext(a, b, 'test');
    expect(fromWorkers.map((r) => r.outcome)).toEqual(jobs.map((j) => runJob(ctx, j)));
  }, 120_000);

  it('a whole comparison is the same in this thread and on 2 or 3 worker threads', async () => {
    const dirA = join(DEMO_DIR, '2026.1');
    const dirB = join(DEMO_DIR, '2026.2');
    const serial = await compareReleaseDirs(dirA, dirB, { workers: 0 });
    const one = await compareReleaseDirs(dirA, dirB, { workers: 1 });
    const two = await compareReleaseDirs(dirA, dirB, { workers: 2 });
    const three = await compareReleaseDirs(dirA, dirB, { workers: 3 });
    expect(JSON.stringify(one)).toBe(JSON.stringify(serial));
    expect(JSON.stringify(two)).toBe(JSON.stringify(serial));
    expect(JSON.stringify(three)).toBe(JSON.stringify(serial));
  }, 300_000);

  it("'auto' uses two worker threads for large releases only", () => {
    const a = loadRelease(join(DEMO_DIR, '2026.2'));
    expect(autoWorkers(a, a)).toBe(0); // the demo releases: 2 x 2,323 rows
    const big = structuredClone(a);
    while (big.snHubbleFlow.length < AUTO_WORKERS_MIN_ROWS) big.snHubbleFlow.push(...a.snHubbleFlow);
    expect(autoWorkers(a, big)).toBe(2);
  });
});
