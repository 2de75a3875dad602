/**
 * Benchmark of a full comparison with attribution (for `npm run bench`): the demo pair
 * 2026.2 -> 2026.3 at scale 1 (the committed releases), or two generated releases that differ
 * as the demo ones do at a larger scale (writeGeneratedRelease, same seed, releases '2026.2'
 * and '2026.3'). The time covers what `rungbook diff` does: reading both folders, both full
 * calibrations, every hybrid recalibration, the per-row estimates and the report; generating
 * the releases is not timed. Measures, never asserts.
 */
import { mkdtempSync, rmSync } from 'node:fs';
import { tmpdir } from 'node:os';
import { join } from 'node:path';
import { fileURLToPath } from 'node:url';
import { DEMO_SEED, writeGeneratedRelease } from '../demo/index.ts';
import { compareReleaseDirs } from './compare.ts';

export interface DiffBenchResult {
  scale: number;
  /** Rows of all tables in release a and b. */
  rows: { a: number; b: number };
  /** Input groups that differ (k) and hybrid releases recalibrated (2^k - 2). */
  groups: number;
  hybrids: number;
  /** The workers option, and whether worker threads were used. */
  workers: number | 'auto';
  threads: boolean;
  /** Wall time of the comparison, ms. */
  ms: number;
  /** Wall time of each step, ms, by the progress line that started it. */
  stages: Record<string, number>;
  h0Delta: number | null;
  sigmaDiff: number | null;
}

const DEMO_DIR = fileURLToPath(new URL('../../content/releases/', import.meta.url));

/**
 * Time one full comparison at `scale` (1: the committed demo pair 2026.2 -> 2026.3). `workers`
 * as for compareReleaseDirs (default 'auto', what `rungbook diff` does).
 */
export async function benchmarkDiff(scale: number, options: { workers?: number | 'auto' } = {}): Promise<DiffBenchResult> {
  const workers = options.workers ?? 'auto';
  let dirA = join(DEMO_DIR, '2026.2');
  let dirB = join(DEMO_DIR, '2026.3');
  let tmp: string | null = null;
  if (scale !== 1) {
    tmp = mkdtempSync(join(tmpdir(), 'rungbook-diff-bench-'));
    dirA = writeGeneratedRelease(tmp, '2026.2', { seed: DEMO_SEED, scale, release: '2026.2', writeTruth: false }).dir;
    dirB = writeGeneratedRelease(tmp, '2026.3', { seed: DEMO_SEED, scale, release: '2026.3', writeTruth: false }).dir;
  }
  try {
    const stages: Record<string, number> = {};
    const t0 = performance.now();
    let last = t0;
    let current = 'starting';
    const report = await compareReleaseDirs(dirA, dirB, {
      workers,
      progress: (line) => {
        const now = performance.now();
        stages[current] = now - last;
        last = now;
        current = line;
      },
    });
    const t1 = performance.now();
    stages[current] = t1 - last;
    const rowsOf = (side: 'a' | 'b') => report.inputs.reduce((s, t) => s + (side === 'a' ? t.rows_a : t.rows_b), 0);
    const k = report.attribution.filter((e) => e.differs).length;
    return {
      scale,
      rows: { a: rowsOf('a'), b: rowsOf('b') },
      groups: k,
      hybrids: Math.max(0, 2 ** k - 2),
      workers,
      threads: Object.keys(stages).some((k) => k.includes('(worker threads)')),
      ms: t1 - t0,
      stages,
      h0Delta: report.h0?.delta ?? null,
      sigmaDiff: report.h0?.sigma_diff ?? null,
    };
  } finally {
    if (tmp) rmSync(tmp, { recursive: true, force: true });
  }
}
