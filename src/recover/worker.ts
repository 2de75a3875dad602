/** Worker thread of a recovery (pool.ts): receives the context once, then runs seeds and posts their lines. */
import { parentPort } from 'node:worker_threads';
import { runSeed, seedContext, type SeedContext } from './seed.ts';
import type { PoolInit } from './pool.ts';

type Message = ({ type: 'init' } & PoolInit) | { type: 'seed'; seed: number };

let ctx: SeedContext | null = null;
const port = parentPort!;
port.on('message', (m: Message) => {
  if (m.type === 'init') {
    ctx = seedContext(m.release, m.truthResults, m.codeVersion, m.options);
    return;
  }
  try {
    if (!ctx) throw new Error('recovery worker received a seed before its context');
    port.postMessage({ type: 'line', line: runSeed(ctx, m.seed) });
  } catch (e) {
    port.postMessage({ type: 'failed', message: e instanceof Error ? `${e.name}: ${e.message}\n${e.stack ?? ''}` : String(e) });
  }
});
port.postMessage({ type: 'ready' });
