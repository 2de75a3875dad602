/**
 * Comparison benchmark, in its own process: one full `rungbook diff` (input changes, result
 * shifts, uncertainty of the difference, attribution over every hybrid release, row influence,
 * overlays) of the demo pair 2026.2 -> 2026.3, generated at `--scale` times the demo size.
 * Prints one JSON line.
 *   tsx scripts/bench/diff.ts --scale 16 --workers auto
 */
import { benchmarkDiff } from '../../src/diff/bench.ts';

const arg = (name: string, fallback: string) => {
  const i = process.argv.indexOf(`--${name}`);
  return i >= 0 ? process.argv[i + 1]! : fallback;
};
const scale = Number(arg('scale', '1'));
const workersText = arg('workers', 'auto');
const workers = workersText === 'auto' ? 'auto' : Number(workersText);

const t = performance.now();
const result = await benchmarkDiff(scale, { workers });
const wallMs = performance.now() - t;
console.log(JSON.stringify({ ...result, wallMs, peakRssMb: process.resourceUsage().maxRSS / 1024 }));
