// Worker thread for recovery.test.ts: calibrates the seeds it is given and posts their pulls.
import { parentPort, workerData } from 'node:worker_threads';
import { recoverSeed } from './harness.ts';

const { seeds } = workerData as { seeds: number[] };
const pulls = seeds.flatMap((seed) => recoverSeed(seed));
parentPort!.postMessage(pulls);
