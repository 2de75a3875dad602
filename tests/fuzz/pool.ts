/**
 * A small pool of worker threads (tests/fuzz/worker.ts) that run rungbook
 * commands with a time limit each. A command still running at its limit is a
 * hang: its worker is terminated (which stops even a synchronous loop) and
 * replaced, and the job ends as a timeout.
 */
import { Worker } from 'node:worker_threads';
import type { Job, JobResult } from './worker.ts';

export type Outcome = JobResult | { id: number; timeout: true };

interface Slot {
  worker: Worker;
  busy: boolean;
}

export class CommandPool {
  private slots: Slot[] = [];
  private queue: { job: Job; limitMs: number; done: (o: Outcome) => void }[] = [];
  private nextId = 1;

  constructor(size: number) {
    for (let i = 0; i < size; i++) this.slots.push({ worker: this.spawn(), busy: false });
  }

  private spawn(): Worker {
    return new Worker(new URL('./worker-boot.mjs', import.meta.url));
  }

  run(argv: string[], limitMs: number): Promise<Outcome> {
    return new Promise((done) => {
      this.queue.push({ job: { id: this.nextId++, argv }, limitMs, done });
      this.pump();
    });
  }

  private pump(): void {
    for (const slot of this.slots) {
      if (slot.busy || this.queue.length === 0) continue;
      const { job, limitMs, done } = this.queue.shift()!;
      slot.busy = true;
      const w = slot.worker;
      const finish = (o: Outcome) => {
        clearTimeout(timer);
        w.off('message', onMessage);
        w.off('error', onError);
        slot.busy = false;
        done(o);
        this.pump();
      };
      const onMessage = (r: JobResult) => {
        if (r.id === job.id) finish(r);
      };
      const onError = (e: Error) => {
        slot.worker = this.spawn();
        finish({ id: job.id, code: null, stdout: '', stderr: '', uncaught: `worker crashed: ${e.stack ?? e.message}` });
      };
      const timer = setTimeout(() => {
        void w.terminate();
        slot.worker = this.spawn();
        finish({ id: job.id, timeout: true });
      }, limitMs);
      w.on('message', onMessage);
      w.once('error', onError);
      w.postMessage(job);
    }
  }

  async close(): Promise<void> {
    await Promise.all(this.slots.map((s) => s.worker.terminate()));
  }
}
