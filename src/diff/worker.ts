/**
 * Worker thread of the comparison: receives the two releases once ("init"), then runs jobs
 * (jobs.ts) and posts their results. Loaded through tsx (`execArgv: ['--import', 'tsx']`).
 */
import { parentPort } from 'node:worker_threads';
import { newJobContext, runJob, type DiffJob, type JobContext } from './jobs.ts';
import type { Release } from '../types/release.ts';

type Message = { type: 'init'; a: Release; b: Release; codeVersion: string } | { type: 'job'; id: number; job: DiffJob };

let ctx: JobContext | null = null;
const port = parentPort!;
port.on('message', (m: Message) => {
  if (m.type === 'init') {
    ctx = newJobContext(m.a, m.b, m.codeVersion);
    return;
  }
  try {
    if (!ctx) throw new Error('comparison worker received a job before the releases');
    port.postMessage({ type: 'result', id: m.id, result: runJob(ctx, m.job) });
  } catch (e) {
    port.postMessage({ type: 'failed', id: m.id, message: e instanceof Error ? `${e.name}: ${e.message}\n${e.stack ?? ''}` : String(e) });
  }
});
port.postMessage({ type: 'ready' });
