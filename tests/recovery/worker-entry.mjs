// Plain-JavaScript entry of the recovery worker thread: registers the TypeScript loader (tsx),
// then runs worker.ts. (A worker's execArgv `--import tsx` is not honoured inside vitest.)
import { register } from 'tsx/esm/api';

register();
await import('./worker.ts');
