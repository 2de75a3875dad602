// How many worker threads `rungbook calibrate --workers auto` starts (src/ladder/calibrateParallel.ts).
// Kind: edge cases. Small releases stay in this thread; a large one gets workers only while the
// estimated peak memory stays within the budget; the estimate itself is checked against the peaks
// measured at 1x and 16x the demo (DEVELOPERS.md, benchmark section), not against its own formula.
import { describe, expect, it } from 'vitest';
import { AUTO_MEMORY_BUDGET_MB, AUTO_WORKERS_MIN_ROWS, autoWorkers, estimatedPeakMb } from '../../src/ladder/calibrateParallel.ts';
import type { Release } from '../../src/types/release.ts';

const withRows = (rows: number) => ({ inputs: [{ rows }] }) as unknown as Release;

describe('calibrate --workers auto', () => {
  it('a small release runs in this thread', () => {
    expect(autoWorkers(withRows(2345))).toBe(1);
    expect(autoWorkers(withRows(AUTO_WORKERS_MIN_ROWS - 1))).toBe(1);
  });

  it('never starts workers whose estimated memory passes the budget', () => {
    for (const rows of [AUTO_WORKERS_MIN_ROWS, 18_818, 37_489, 150_000]) {
      const w = autoWorkers(withRows(rows));
      expect(w).toBeGreaterThanOrEqual(1);
      if (w > 1) expect(estimatedPeakMb(rows, w)).toBeLessThanOrEqual(AUTO_MEMORY_BUDGET_MB);
    }
    // 16x the demo: one thread (measured 374-404 MB) rather than two workers (686-740 MB)
    expect(autoWorkers(withRows(37_489))).toBe(1);
  });

  it('the estimate is not below the peaks measured (1x: 147 MB, 240 MB on 2 workers; 16x: 404 MB, 740 MB on 2 workers)', () => {
    expect(estimatedPeakMb(2345, 1)).toBeGreaterThanOrEqual(147);
    expect(estimatedPeakMb(2345, 2)).toBeGreaterThanOrEqual(240);
    expect(estimatedPeakMb(37_489, 1)).toBeGreaterThanOrEqual(404);
    expect(estimatedPeakMb(37_489, 2)).toBeGreaterThanOrEqual(740);
    // and not wildly above them (within 15 %)
    expect(estimatedPeakMb(37_489, 1)).toBeLessThanOrEqual(404 * 1.15);
    expect(estimatedPeakMb(37_489, 2)).toBeLessThanOrEqual(740 * 1.15);
  });
});
