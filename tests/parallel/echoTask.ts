// Task module for pool.test.ts: a pure function of (shared data, task); task -1 throws.
import { threadId } from 'node:worker_threads';

export function setup(data: { offset: number }): { offset: number } {
  return data;
}

export function handle(ctx: { offset: number }, task: number): { value: number; thread: number } {
  if (task === -1) throw new RangeError('task -1 is refused');
  let s = 0;
  for (let i = 0; i < 20000; i++) s += Math.sqrt(i + task); // some work, so that both workers get tasks
  return { value: task * task + ctx.offset + (s > 0 ? 0 : 1), thread: threadId };
}
