/**
 * A small generic pool of worker threads for independent, pure tasks (systematic variants,
 * recovery seeds). A task module exports
 *   setup(data): context          -- once per worker, with the data every task shares
 *   handle(context, task): result -- one task; must depend only on (data, task)
 * and the pool returns the results in the order of the tasks, so the outcome is the same with
 * one worker, several, or none (workers <= 1 runs everything in this thread, importing the
 * same module). Workers load TypeScript through tsx, registered by the worker's first
 * statement. A task that throws rejects the whole map with its message; a worker that cannot
 * start or dies leaves its tasks to the others, or to this thread when none is left.
 */
import { readFileSync } from 'node:fs';
import { availableParallelism } from 'node:os';
import { createRequire } from 'node:module';
import { dirname, join } from 'node:path';
import { pathToFileURL } from 'node:url';
import { Worker } from 'node:worker_threads';

export interface TaskModule<D, C, T, R> {
  setup(data: D): C;
  handle(context: C, task: T): R;
}

/** Default number of workers: the cores this process may use. */
export function defaultWorkers(): number {
  return availableParallelism();
}

/**
 * Code of a worker: register tsx's loader, import the task module, run setup on the shared
 * data and answer task messages. (On Node 20 a worker's `execArgv: ['--import', 'tsx']` loads
 * its entry before the hooks are in place, hence the register() call inside.)
 */
function bootstrap(moduleUrl: string): string {
  const require = createRequire(import.meta.url);
  const pkgPath = require.resolve('tsx/package.json');
  const pkg = JSON.parse(readFileSync(pkgPath, 'utf8')) as { exports: Record<string, { import: { default: string } }> };
  const api = pathToFileURL(join(dirname(pkgPath), pkg.exports['./esm/api'].import.default)).href;
  return `
const { parentPort, workerData } = await import('node:worker_threads');
const tsx = await import(${JSON.stringify(api)});
tsx.register();
const mod = await import(${JSON.stringify(moduleUrl)});
const ctx = mod.setup(workerData);
parentPort.on('message', (m) => {
  try {
    parentPort.postMessage({ i: m.i, ok: true, result: mod.handle(ctx, m.task) });
  } catch (e) {
    parentPort.postMessage({ i: m.i, ok: false, message: e instanceof Error ? e.name + ': ' + e.message : String(e) });
  }
});
parentPort.postMessage({ ready: true });
`;
}

/**
 * Run `tasks` through the module at `moduleUrl` (an absolute file URL of a TypeScript or
 * JavaScript module) on `workers` worker threads; results in task order.
 */
export async function mapOnWorkers<D, T, R>(moduleUrl: URL, data: D, tasks: readonly T[], workers: number = defaultWorkers()): Promise<R[]> {
  const n = Math.max(0, Math.min(Math.floor(workers), tasks.length));
  const results = new Array<R>(tasks.length);
  if (n <= 1) return runHere(moduleUrl, data, tasks);
  let next = 0;
  let done = 0;
  let settled = false;
  let failure: Error | null = null;
  const pending: number[] = [];
  interface Slot {
    w: Worker;
    ready: boolean;
    /** Task index being run, -1 when idle. */
    busy: number;
  }
  const slots = new Set<Slot>();
  return new Promise<R[]>((resolve, reject) => {
    const finish = () => {
      if (settled) return;
      settled = true;
      for (const s of slots) void s.w.terminate();
      slots.clear();
      if (failure) reject(failure);
      else resolve(results);
    };
    const takeTask = () => (pending.length ? pending.shift()! : next < tasks.length ? next++ : -1);
    const pump = () => {
      for (const s of slots) {
        if (!s.ready || s.busy >= 0) continue;
        const i = takeTask();
        if (i < 0) return;
        s.busy = i;
        s.w.postMessage({ i, task: tasks[i] });
      }
    };
    const leftToThisThread = async () => {
      // no worker left: the remaining tasks run here, in order
      try {
        const rest: number[] = [];
        for (let i = takeTask(); i >= 0; i = takeTask()) rest.push(i);
        const mod = (await import(moduleUrl.href)) as TaskModule<D, unknown, T, R>;
        const ctx = mod.setup(data);
        for (const i of rest.sort((x, y) => x - y)) results[i] = mod.handle(ctx, tasks[i]);
      } catch (e) {
        failure ??= e as Error;
      }
      finish();
    };
    for (let k = 0; k < n; k++) {
      let w: Worker;
      try {
        w = new Worker(bootstrap(moduleUrl.href), { eval: true, workerData: data, execArgv: [] });
      } catch {
        continue;
      }
      const slot: Slot = { w, ready: false, busy: -1 };
      slots.add(slot);
      w.on('message', (m: { ready?: boolean; i?: number; ok?: boolean; result?: R; message?: string }) => {
        if (m.ready) slot.ready = true;
        else if (m.ok) {
          slot.busy = -1;
          results[m.i!] = m.result!;
          if (++done === tasks.length) return finish();
        } else {
          failure ??= new Error(m.message);
          return finish();
        }
        pump();
      });
      const lost = () => {
        if (settled || !slots.delete(slot)) return;
        if (slot.busy >= 0) pending.push(slot.busy);
        if (slots.size === 0) void leftToThisThread();
        else pump();
      };
      w.on('error', lost);
      w.on('exit', lost);
    }
    if (slots.size === 0) void leftToThisThread();
  });
}

async function runHere<D, T, R>(moduleUrl: URL, data: D, tasks: readonly T[]): Promise<R[]> {
  const mod = (await import(moduleUrl.href)) as TaskModule<D, unknown, T, R>;
  const ctx = mod.setup(data);
  return tasks.map((t) => mod.handle(ctx, t));
}
