/**
 * A small generic pool of worker threads for independent, pure tasks (systematic variants,
 * recovery seeds, a comparison's recalibrations). A task module exports
 *   setup(data): context          -- once per worker, with the data every task shares
 *   handle(context, task): result -- one task; must depend only on (data, task)
 * and the pool returns the results in the order of the tasks, so the outcome is the same with
 * one worker, several, or none (workers <= 1 runs everything in this thread, importing the
 * same module). Workers load TypeScript through tsx, registered by the worker's first
 * statement. Tasks are handed out round-robin when the workers start (the calling thread may be
 * busy meanwhile). A task that throws rejects the whole map with its message; a worker that
 * cannot start or dies leaves its tasks to the others, or to this thread when none is left.
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
 * JavaScript module) on `workers` worker threads; results in task order. `onResult`, when
 * given, hears of each result as it arrives (in completion order), e.g. for progress.
 */
/** No worker left: the remaining tasks run in this thread, in order; returns the first failure, or null. */
async function runRestHere<D, T, R>(
  moduleUrl: URL,
  data: D,
  tasks: readonly T[],
  rest: number[],
  results: R[],
  onResult?: (index: number, result: R) => void,
): Promise<Error | null> {
  try {
    const mod = (await import(moduleUrl.href)) as TaskModule<D, unknown, T, R>;
    const ctx = mod.setup(data);
    for (const i of rest.sort((x, y) => x - y)) {
      results[i] = mod.handle(ctx, tasks[i]);
      onResult?.(i, results[i]);
    }
    return null;
  } catch (e) {
    return e as Error;
  }
}

export async function mapOnWorkers<D, T, R>(
  moduleUrl: URL,
  data: D,
  tasks: readonly T[],
  workers: number = defaultWorkers(),
  onResult?: (index: number, result: R) => void,
): Promise<R[]> {
  const n = Math.max(0, Math.min(Math.floor(workers), tasks.length));
  const results = new Array<R>(tasks.length);
  if (n <= 1) return runHere(moduleUrl, data, tasks, onResult);
  let done = 0;
  let settled = false;
  let failure: Error | null = null;
  interface Slot {
    w: Worker;
    /** Task indices posted to this worker and not yet answered. */
    assigned: Set<number>;
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
    // Every task is posted at once, round-robin: a worker queues its messages until it has
    // loaded, and the caller's thread may be busy (the baseline fit) while the workers run,
    // so nothing may wait for the caller's event loop to hand out the next task.
    const post = (slot: Slot, i: number) => {
      slot.assigned.add(i);
      slot.w.postMessage({ i, task: tasks[i] });
    };
    const leftToThisThread = async (rest: number[]) => {
      const e = await runRestHere(moduleUrl, data, tasks, rest, results, onResult);
      if (e) failure ??= e;
      finish();
    };
    const all: Slot[] = [];
    for (let k = 0; k < n; k++) {
      let w: Worker;
      try {
        w = new Worker(bootstrap(moduleUrl.href), { eval: true, workerData: data, execArgv: [] });
      } catch {
        continue;
      }
      const slot: Slot = { w, assigned: new Set() };
      slots.add(slot);
      all.push(slot);
      w.on('message', (m: { ready?: boolean; i?: number; ok?: boolean; result?: R; message?: string }) => {
        if (m.ready || settled) return;
        if (m.ok) {
          slot.assigned.delete(m.i!);
          results[m.i!] = m.result!;
          onResult?.(m.i!, m.result!);
          if (++done === tasks.length) finish();
        } else {
          failure ??= new Error(m.message);
          finish();
        }
      });
      const lost = () => {
        if (settled || !slots.delete(slot)) return;
        // its unanswered tasks go to another worker, or to this thread when none is left
        const orphans = [...slot.assigned];
        const other = [...slots][0];
        if (other) for (const i of orphans) post(other, i);
        else void leftToThisThread(orphans);
      };
      w.on('error', lost);
      w.on('exit', lost);
    }
    if (all.length === 0) {
      void leftToThisThread(tasks.map((_, i) => i));
      return;
    }
    tasks.forEach((_, i) => post(all[i % all.length], i));
  });
}

async function runHere<D, T, R>(moduleUrl: URL, data: D, tasks: readonly T[], onResult?: (index: number, result: R) => void): Promise<R[]> {
  const mod = (await import(moduleUrl.href)) as TaskModule<D, unknown, T, R>;
  const ctx = mod.setup(data);
  return tasks.map((t, i) => {
    const r = mod.handle(ctx, t);
    onResult?.(i, r);
    return r;
  });
}
