/**
 * The bounds a recovery campaign must meet, and the checks, shared by the recovery test
 * (recovery.test.ts, a fixed seed set) and the campaign command (campaign.ts, any seed set).
 *
 * For each global quantity results.json publishes with an error (every ladder parameter, each
 * intrinsic scatter, H0), over at least 1000 seeds:
 *   |mean pull| < 0.1, SD of the pulls in [0.92, 1.08],
 *   1-sigma coverage in [0.63, 0.73], 2-sigma coverage in [0.93, 0.97].
 * For the distances: the SD of all pulls of one kind (final distance, own-rung distance),
 * pooled over the systems, in [0.92, 1.08], and no system's mean pull beyond 0.15.
 *
 * What the bounds can see, for n = 1000 unit-normal pulls: the standard error of a mean is
 * 1/sqrt(n) = 0.032, so a bias of 0.1 sigma lies 3.2 standard errors out; the SD's standard
 * error is 1/sqrt(2(n-1)) = 0.022 (bound at 3.6 of them); the coverages' binomial errors are
 * 0.015 and 0.0066 (bounds at 3.4 and 2.3-2.4 of them about 0.6827 and 0.9545). A correct
 * estimator passes each check with probability above 98 %. The per-system means have the
 * same standard error, so 0.15 is 4.7 of them.
 */
import type { PullSummary } from './harness.ts';

export const MIN_SEEDS = 1000;
export const GLOBAL_BOUNDS = { mean: 0.1, sd: [0.92, 1.08], coverage1: [0.63, 0.73], coverage2: [0.93, 0.97] } as const;
export const DISTANCE_BOUNDS = { pooledSd: [0.92, 1.08], systemMean: 0.15 } as const;

/** The ways one summary misses the global bounds (empty when it meets them all). */
export function globalFailures(s: PullSummary): string[] {
  const out: string[] = [];
  const b = GLOBAL_BOUNDS;
  if (!(Math.abs(s.mean) < b.mean)) out.push(`mean pull ${s.mean.toFixed(3)} (|mean| < ${b.mean})`);
  if (!(s.sd >= b.sd[0] && s.sd <= b.sd[1])) out.push(`SD ${s.sd.toFixed(3)} (in [${b.sd.join(', ')}])`);
  if (!(s.coverage1 >= b.coverage1[0] && s.coverage1 <= b.coverage1[1]))
    out.push(`1-sigma coverage ${s.coverage1.toFixed(3)} (in [${b.coverage1.join(', ')}])`);
  if (!(s.coverage2 >= b.coverage2[0] && s.coverage2 <= b.coverage2[1]))
    out.push(`2-sigma coverage ${s.coverage2.toFixed(3)} (in [${b.coverage2.join(', ')}])`);
  return out;
}

export function pooledFailures(s: PullSummary): string[] {
  const [lo, hi] = DISTANCE_BOUNDS.pooledSd;
  return s.sd >= lo && s.sd <= hi ? [] : [`pooled SD ${s.sd.toFixed(3)} (in [${lo}, ${hi}])`];
}

export function systemFailures(s: PullSummary): string[] {
  return Math.abs(s.mean) <= DISTANCE_BOUNDS.systemMean ? [] : [`mean pull ${s.mean.toFixed(3)} (|mean| <= ${DISTANCE_BOUNDS.systemMean})`];
}

/** Distance pulls are named "mu (<kind>)" and "mu own rung (<kind>)"; pooled over kinds of systems by the first word. */
export function distanceFamily(name: string): string | null {
  if (name.startsWith('mu own rung')) return 'mu own rung (all systems)';
  if (name.startsWith('mu (')) return 'mu (all systems)';
  return null;
}
