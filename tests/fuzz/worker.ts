// Worker thread of the fuzz test: runs rungbook commands in-process through main() and posts
// what happened. Anything that escapes main() (a thrown error, an unhandled rejection, an
// uncaught exception) is reported as such, never swallowed.
import { parentPort } from 'node:worker_threads';
import { main } from '../../src/cli/main.ts';

export interface Job {
  id: number;
  argv: string[];
}

export interface JobResult {
  id: number;
  code: number | null;
  stdout: string;
  stderr: string;
  /** Set when something escaped main(). */
  uncaught: string | null;
}

let current: Job | null = null;
const escaped = (e: unknown) => {
  if (current) parentPort!.postMessage({ id: current.id, code: null, stdout: '', stderr: '', uncaught: String((e as Error)?.stack ?? e) } satisfies JobResult);
  current = null;
};
process.on('uncaughtException', escaped);
process.on('unhandledRejection', escaped);

parentPort!.on('message', async (job: Job) => {
  current = job;
  const out: string[] = [];
  const err: string[] = [];
  let result: JobResult;
  try {
    const code = await main(job.argv, { stdout: (s) => void out.push(s), stderr: (s) => void err.push(s) });
    result = { id: job.id, code, stdout: out.join(''), stderr: err.join(''), uncaught: null };
  } catch (e) {
    result = { id: job.id, code: null, stdout: out.join(''), stderr: err.join(''), uncaught: String((e as Error)?.stack ?? e) };
  }
  if (current?.id === job.id) parentPort!.postMessage(result);
  current = null;
});
