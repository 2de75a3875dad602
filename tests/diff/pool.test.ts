/** Worker threads for the recalibrations: they start, and give what the serial fallback gives. */
import { join } from 'node:path';
import { describe, expect, it } from 'vitest';
import { loadRelease } from '../../src/io/release.ts';
import { startRunner } from '../../src/diff/pool.ts';
import { newJobContext, runJob, type DiffJob } from '../../src/diff/jobs.ts';
import { maskOf } from '../../src/diff/hybrid.ts';
import { AUTO_WORKERS_MIN_ROWS, autoWorkers, compareReleaseDirs } from '../../src/diff/compare.ts';
import { DEMO_DIR } from './fixtures.ts';

describe('job runner', () => {
  it('runs jobs on two worker threads with the same results as in this thread', async () => {
    const a = loadRelease(join(DEMO_DIR, '2026.2'));
    const b = loadRelease(join(DEMO_DIR, '2026.3'));
    const jobs: DiffJob[] = [
      { kind: 'hybrid', mask: maskOf(['cepheids']) },
      { kind: 'hybrid', mask: maskOf(['sn_hubble_flow']) },
      { kind: 'swap', table: 'cepheids', ids: ['Juniperfold-C001'] },
    ];
    const runner = startRunner(2);
    try {
      runner.init(a, b, 'test');
      const fromWorkers = await Promise.all(jobs.map((j) => runner.run(j)));
      expect(runner.notes).toEqual([]);
      expect(runner.mode).toBe('workers');
      const ctx = newJobContext(a, b, 'test');
      expect(fromWorkers).toEqual(jobs.map((j) => runJob(ctx, j)));
    } finally {
      await runner.close();
    }
  });

  it('a whole comparison is the same with worker threads and without', async () => {
    const [withWorkers, serial] = await Promise.all([
      compareReleaseDirs(join(DEMO_DIR, '2026.1'), join(DEMO_DIR, '2026.2'), { workers: 2 }),
      compareReleaseDirs(join(DEMO_DIR, '2026.1'), join(DEMO_DIR, '2026.2'), { workers: 0 }),
    ]);
    expect(JSON.stringify(withWorkers)).toBe(JSON.stringify(serial));
  });

  it("'auto' uses two worker threads for large releases only", () => {
    const a = loadRelease(join(DEMO_DIR, '2026.2'));
    expect(autoWorkers(a, a)).toBe(0); // the demo releases: 2 x 2,323 rows
    const big = structuredClone(a);
    while (big.snHubbleFlow.length < AUTO_WORKERS_MIN_ROWS) big.snHubbleFlow.push(...a.snHubbleFlow);
    expect(autoWorkers(a, big)).toBe(2);
  });
});
