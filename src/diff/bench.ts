/**
 * Benchmark of a full comparison with attribution (for `npm run bench`, scripts/bench/diff.ts,
 * which supplies the two release folders: the committed demo pair, or a generated pair at a
 * larger scale; the demo generator is a higher layer than the comparison). The time covers
 * what `rungbook diff` does: reading both folders, both full calibrations, every hybrid
 * recalibration, the per-row estimates and the report. Measures, never asserts.
 */
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

/**
 * Time one full comparison of the release folders `dirA` -> `dirB`; `scale` is recorded with
 * the result (the size of the pair relative to the demo releases). `workers` as for
 * compareReleaseDirs (default 'auto', what `rungbook diff` does).
 */
export async function benchmarkDiff(dirA: string, dirB: string, scale: number, options: { workers?: number | 'auto' } = {}): Promise<DiffBenchResult> {
  const workers = options.workers ?? 'auto';
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
}
