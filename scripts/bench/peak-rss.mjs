// Preloaded by the benchmark into a child process (`node --import`): prints the process's peak
// resident memory (worker threads included) on stderr when it exits, as `peak-rss-kb N`.
import { writeSync } from 'node:fs';

process.on('exit', () => writeSync(2, `\npeak-rss-kb ${process.resourceUsage().maxRSS}\n`));
