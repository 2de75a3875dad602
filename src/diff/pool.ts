/**
 * Runs comparison jobs on worker threads (default 2: the recalibrations are independent), or
 * in this thread when workers are not wanted or cannot start (the serial fallback). Results
 * are the same either way; only the time differs. Workers load TypeScript through tsx.
 */
import { readFileSync } from 'node:fs';
import { createRequire } from 'node:module';
import { dirname, join } from 'node:path';
import { pathToFileURL } from 'node:url';
import { Worker } from 'node:worker_threads';
import type { Release } from '../types/release.ts';
import { jobCacheKey, newJobContext, runJob, type DiffJob, type DiffJobResult, type JobContext } from './jobs.ts';

export const DEFAULT_WORKERS = 2;

export interface JobRunner {
  /** 'workers' while at least one worker thread is alive, else 'serial'. */
  readonly mode: 'workers' | 'serial';
  init(a: Release, b: Release, codeVersion: string): void;
  run(job: DiffJob): Promise<DiffJobResult>;
  close(): Promise<void>;
  /** What went wrong with the workers, if anything (for a note on stderr). */
  readonly notes: string[];
}

interface Pending {
  id: number;
  job: DiffJob;
  resolve: (r: DiffJobResult) => void;
  reject: (e: Error) => void;
}

interface Slot {
  worker: Worker;
  ready: boolean;
  initialised: boolean;
  dead: boolean;
  busy: Pending | null;
  /** Rung caches this worker holds (jobCacheKey of the jobs it ran). */
  caches: Set<number>;
}

type InitData = { a: Release; b: Release; codeVersion: string };

class Runner implements JobRunner {
  private slots: Slot[] = [];
  private queue: Pending[] = [];
  private initData: InitData | null = null;
  private local: JobContext | null = null;
  private nextId = 0;
  private closed = false;
  readonly notes: string[] = [];

  constructor(workers: number) {
    for (let i = 0; i < workers; i++) this.spawn();
  }

  get mode(): 'workers' | 'serial' {
    return this.slots.some((s) => !s.dead) ? 'workers' : 'serial';
  }

  private spawn(): void {
    let worker: Worker;
    try {
      worker = new Worker(workerBootstrap(), { eval: true, execArgv: [] });
    } catch (e) {
      this.notes.push(`worker thread did not start (${(e as Error).message})`);
      return;
    }
    const slot: Slot = { worker, ready: false, initialised: false, dead: false, busy: null, caches: new Set() };
    this.slots.push(slot);
    worker.on('message', (m: { type: string; id?: number; result?: DiffJobResult; message?: string }) => {
      if (m.type === 'ready') {
        slot.ready = true;
        this.pump();
        return;
      }
      const p = slot.busy;
      slot.busy = null;
      if (p && m.id === p.id) {
        if (m.type === 'result') p.resolve(m.result!);
        else p.reject(new Error(`comparison worker failed: ${m.message}`));
      }
      this.pump();
    });
    const lost = (why: string) => {
      if (slot.dead) return;
      slot.dead = true;
      if (!this.closed) this.notes.push(`a worker thread stopped (${why}); continuing without it`);
      if (slot.busy) {
        this.queue.unshift(slot.busy);
        slot.busy = null;
      }
      this.pump();
    };
    worker.on('error', (e) => lost(e.message));
    worker.on('exit', (code) => lost(`exit code ${code}`));
  }

  init(a: Release, b: Release, codeVersion: string): void {
    this.initData = { a, b, codeVersion };
    this.pump();
  }

  run(job: DiffJob): Promise<DiffJobResult> {
    return new Promise((resolve, reject) => {
      this.queue.push({ id: this.nextId++, job, resolve, reject });
      this.pump();
    });
  }

  private pump(): void {
    if (!this.initData || this.closed) return;
    if (this.mode === 'serial') {
      this.drainLocally();
      return;
    }
    for (const slot of this.slots) {
      if (slot.dead || !slot.ready) continue;
      if (!slot.initialised) {
        slot.worker.postMessage({ type: 'init', ...this.initData });
        slot.initialised = true;
      }
      if (slot.busy || this.queue.length === 0) continue;
      const p = this.queue.splice(this.nextFor(slot), 1)[0]!;
      slot.busy = p;
      slot.caches.add(jobCacheKey(p.job));
      slot.worker.postMessage({ type: 'job', id: p.id, job: p.job });
    }
  }

  /**
   * Index in the queue of the job for a free worker: the first whose early rungs this worker has
   * already computed (its rung cache is reused, as in one thread), else the first whose early
   * rungs no worker holds, else the first. Only the order of work changes, never a result.
   */
  private nextFor(slot: Slot): number {
    const mine = this.queue.findIndex((p) => slot.caches.has(jobCacheKey(p.job)));
    if (mine >= 0) return mine;
    const fresh = this.queue.findIndex((p) => !this.slots.some((s) => !s.dead && s.caches.has(jobCacheKey(p.job))));
    return fresh >= 0 ? fresh : 0;
  }

  private drainLocally(): void {
    this.local ??= newJobContext(this.initData!.a, this.initData!.b, this.initData!.codeVersion);
    while (this.queue.length > 0) {
      const p = this.queue.shift()!;
      try {
        p.resolve(runJob(this.local, p.job));
      } catch (e) {
        p.reject(e as Error);
      }
    }
  }

  async close(): Promise<void> {
    this.closed = true;
    await Promise.all(this.slots.filter((s) => !s.dead).map((s) => s.worker.terminate()));
  }
}

/**
 * Code of a worker thread: register tsx's loader, then import worker.ts. On Node 20 a worker
 * started with `execArgv: ['--import', 'tsx']` loads its entry before the loader hooks are in
 * place and fails with ERR_UNKNOWN_FILE_EXTENSION (tsx issue #354), so the loader is
 * registered by the worker's own first statement (tsx's documented `register()` API).
 * Paths are absolute: an eval'd worker resolves bare names from the working directory.
 */
function workerBootstrap(): string {
  const require = createRequire(import.meta.url);
  const pkgPath = require.resolve('tsx/package.json');
  const pkg = JSON.parse(readFileSync(pkgPath, 'utf8')) as { exports: Record<string, { import: { default: string } }> };
  const api = pathToFileURL(join(dirname(pkgPath), pkg.exports['./esm/api'].import.default)).href;
  const entry = new URL('./worker.ts', import.meta.url).href;
  return `import(${JSON.stringify(api)}).then((tsx) => { tsx.register(); return import(${JSON.stringify(entry)}); });`;
}

/** A job runner with `workers` worker threads (0: everything in this thread). */
export function startRunner(workers: number = DEFAULT_WORKERS): JobRunner {
  return new Runner(Math.max(0, Math.floor(workers)));
}
