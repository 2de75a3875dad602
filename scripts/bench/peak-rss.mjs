// Preloaded by the benchmark into a child process (`node --import`): prints the process's peak
// resident memory and its CPU time (worker threads included) on stderr when it exits, as
// `peak-rss-kb N` and `cpu-ms T`: on a shared machine the CPU time is the steadier measure.
import { writeSync } from 'node:fs';

process.on('exit', () => {
  const u = process.resourceUsage();
  writeSync(2, `\npeak-rss-kb ${u.maxRSS}\ncpu-ms ${(u.userCPUTime + u.systemCPUTime) / 1000}\n`);
});
