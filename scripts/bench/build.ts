/**
 * Report build benchmark, in its own process: `rungbook build` on the demo releases from a cold
 * cache, again with nothing changed, and on 20 generated releases. Prints one JSON line.
 *   tsx scripts/bench/build.ts
 */
import { mkdtempSync, rmSync } from 'node:fs';
import { tmpdir } from 'node:os';
import { join, resolve } from 'node:path';
import { buildReport, type BuildSummary } from '../../src/report/build.ts';
import { calibrateReleaseDir } from '../../src/cli/calibrate.ts';
import { writeGeneratedRelease } from '../../src/demo/index.ts';

const root = resolve(import.meta.dirname, '..', '..');
const tmp = mkdtempSync(join(tmpdir(), 'rungbook-bench-build-'));

async function build(releasesDir: string, name: string): Promise<BuildSummary & { wallMs: number }> {
  const t = performance.now();
  const s = await buildReport({
    releasesDir,
    outDir: join(tmp, `${name}-dist`),
    calibrate: calibrateReleaseDir,
    progress: false,
    workDir: join(tmp, `${name}-work`),
    cacheDir: join(tmp, `${name}-cache`),
  });
  return { ...s, wallMs: performance.now() - t };
}

try {
  const cold = await build(join(root, 'content', 'releases'), 'demo');
  const warm = await build(join(root, 'content', 'releases'), 'demo');
  const many = join(tmp, 'many');
  for (let k = 1; k <= 20; k++) {
    writeGeneratedRelease(many, `2030.${String(k).padStart(2, '0')}`, { seed: 9000 + k, writeTruth: false });
  }
  const twenty = await build(many, 'twenty');
  const pick = (s: BuildSummary & { wallMs: number }) => ({
    wallMs: s.wallMs,
    timingsMs: s.timingsMs,
    pages: s.pages,
    files: s.files,
    bytes: s.bytes,
    largestPage: s.largestPage,
  });
  console.log(JSON.stringify({ cold: pick(cold), warm: pick(warm), twenty: pick(twenty) }));
} finally {
  rmSync(tmp, { recursive: true, force: true });
}
