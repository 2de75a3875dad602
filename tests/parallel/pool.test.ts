// The worker-thread pool (src/parallel/pool.ts) and the calibration's variants on it. Kind:
// edge cases and invariance: results in task order and identical with 1 or N workers; a task's
// error reaches the caller; and a whole calibration of a demo release is the same, number for
// number, with its variants on worker threads as in one thread.
import { describe, expect, it } from 'vitest';
import { fileURLToPath } from 'node:url';
import { mapOnWorkers } from '../../src/parallel/pool.ts';
import { loadRelease } from '../../src/io/release.ts';
import { calibrateRelease } from '../../src/ladder/calibrate.ts';
import { calibrateOnWorkers } from '../../src/ladder/calibrateParallel.ts';

const TASK = new URL('./echoTask.ts', import.meta.url);

describe('worker-thread pool', () => {
  const tasks = Array.from({ length: 12 }, (_, i) => i);

  it('returns results in task order, the same in this thread and on 2 or 5 workers', async () => {
    const here = await mapOnWorkers<{ offset: number }, number, { value: number; thread: number }>(TASK, { offset: 7 }, tasks, 1);
    const two = await mapOnWorkers<{ offset: number }, number, { value: number; thread: number }>(TASK, { offset: 7 }, tasks, 2);
    const five = await mapOnWorkers<{ offset: number }, number, { value: number; thread: number }>(TASK, { offset: 7 }, tasks, 5);
    const expected = tasks.map((t) => t * t + 7);
    expect(here.map((r) => r.value)).toEqual(expected);
    expect(two.map((r) => r.value)).toEqual(expected);
    expect(five.map((r) => r.value)).toEqual(expected);
    // in this thread: the main thread's id (0); on workers: other threads (how the tasks spread
    // over the workers depends on timing and is not asserted)
    expect(new Set(here.map((r) => r.thread))).toEqual(new Set([0]));
    expect(two.every((r) => r.thread !== 0)).toBe(true);
    expect(five.every((r) => r.thread !== 0)).toBe(true);
  }, 60_000);

  it("passes a task's error to the caller, on workers and in this thread", async () => {
    await expect(mapOnWorkers(TASK, { offset: 0 }, [1, -1, 2], 2)).rejects.toThrow(/task -1 is refused/);
    await expect(mapOnWorkers(TASK, { offset: 0 }, [1, -1, 2], 1)).rejects.toThrow(/task -1 is refused/);
  }, 60_000);

  it('handles no tasks', async () => {
    expect(await mapOnWorkers(TASK, { offset: 0 }, [], 2)).toEqual([]);
  });
});

describe('calibration with the variants on worker threads', () => {
  it('release 2026.1: results.json content identical with 2 workers and in one thread', async () => {
    const release = loadRelease(fileURLToPath(new URL('../../content/releases/2026.1', import.meta.url)));
    expect(release.variants.length).toBeGreaterThan(1);
    const serial = calibrateRelease(release, { codeVersion: 'test' });
    const parallel = await calibrateOnWorkers(release, { codeVersion: 'test' }, 2);
    expect(parallel).toEqual(serial);
    expect(parallel.variants.map((v) => v.h0)).toEqual(serial.variants.map((v) => v.h0));
  }, 120_000);
});
