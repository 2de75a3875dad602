/**
 * Comparison benchmark, in its own process: one full `rungbook diff` (input changes, result
 * shifts, uncertainty of the difference, attribution over every hybrid release, row influence,
 * overlays) of the demo pair 2026.2 -> 2026.3, generated at `--scale` times the demo size.
 * Prints one JSON line.
 *   tsx scripts/bench/diff.ts --scale 16 --workers auto
 */
import { mkdtempSync, rmSync } from 'node:fs';
import { tmpdir } from 'node:os';
import { join } from 'node:path';
import { fileURLToPath } from 'node:url';
import { benchmarkDiff } from '../../src/diff/bench.ts';
import { DEMO_SEED, writeGeneratedRelease } from '../../src/demo/index.ts';

const DEMO_DIR = fileURLToPath(new URL('../../content/releases/', import.meta.url));

const arg = (name: string, fallback: string) => {
  const i = process.argv.indexOf(`--${name}`);
  return i >= 0 ? process.argv[i + 1]! : fallback;
};
const scale = Number(arg('scale', '1'));
const workersText = arg('workers', 'auto');
const workers = workersText === 'auto' ? 'auto' : Number(workersText);

// scale 1: the committed pair; otherwise two releases generated as the demo ones differ
// (same seed, releases '2026.2' and '2026.3'); generating them is not timed
let dirA = join(DEMO_DIR, '2026.2');
let dirB = join(DEMO_DIR, '2026.3');
const tmp = scale !== 1 ? mkdtempSync(join(tmpdir(), 'rungbook-diff-bench-')) : null;
if (tmp) {
  dirA = writeGeneratedRelease(tmp, '2026.2', { seed: DEMO_SEED, scale, release: '2026.2', writeTruth: false }).dir;
  dirB = writeGeneratedRelease(tmp, '2026.3', { seed: DEMO_SEED, scale, release: '2026.3', writeTruth: false }).dir;
}
const t = performance.now();
let result;
try {
  result = await benchmarkDiff(dirA, dirB, scale, { workers });
} finally {
  if (tmp) rmSync(tmp, { recursive: true, force: true });
}
const wallMs = performance.now() - t;
console.log(JSON.stringify({ ...result, wallMs, peakRssMb: process.resourceUsage().maxRSS / 1024 }));
