// Entry of the fuzz test's worker threads: registers tsx's loader in this thread (an
// `--import tsx` in a worker's execArgv does not apply to the worker's own entry module on
// Node 20), then loads the TypeScript worker.
import { register } from 'tsx/esm/api';

register();
await import('./worker.ts');
