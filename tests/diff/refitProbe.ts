// Task module for pool.test.ts: the comparison's refit task (src/diff/refitTask.ts), each
// outcome with the id of the thread that computed it, so that the test can tell that the
// outcomes came from worker threads (threadId 0 is the main thread).
import { threadId } from 'node:worker_threads';
import { handle as refit, setup } from '../../src/diff/refitTask.ts';
import type { DiffJob, DiffJobResult, JobContext } from '../../src/diff/jobs.ts';

export { setup };

export function handle(ctx: JobContext, job: DiffJob): { outcome: DiffJobResult; thread: number } {
  return { outcome: refit(ctx, job), thread: threadId };
}
