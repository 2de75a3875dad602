// Injection and recovery over many generator seeds: the test that matters most.
// Kind: recovery by simulation. The generator (src/demo) draws a universe with known truth and
// observes it with the release format's noise model; the full ladder is calibrated; each fitted
// quantity is compared with the truth as a pull (fitted - true) / reported error.
// Requirements (issue: calibration engine): no bias (|mean pull| < 0.25) and honest errors
// (the 1-sigma interval covers the truth in roughly 68 % of seeds).
import { describe, expect, it } from 'vitest';
import { recoverSeeds } from './pool.ts';
import { summarisePulls, type PullSummary } from './harness.ts';

/** Seeds: enough that the standard error of a mean pull is ~0.07, so 0.25 is a 3.5-sigma bound. */
const SEEDS = Array.from({ length: 200 }, (_, i) => 5000 + i);
const MAX_ABS_MEAN_PULL = 0.25;
/** Coverage band for 200 seeds: 68.3 % +- about 3.5 binomial standard errors (3.3 %). */
const COVERAGE_BAND: readonly [number, number] = [0.56, 0.8];

describe('recovery over 200 seeds', () => {
  let summary: PullSummary[] = [];

  it('calibrates every seed', async () => {
    const pulls = await recoverSeeds(SEEDS);
    summary = summarisePulls(pulls);
    console.log('quantity                    n   mean pull   rms   coverage');
    for (const s of summary) {
      console.log(
        `${s.name.padEnd(26)} ${String(s.n).padStart(4)}  ${s.meanPull.toFixed(3).padStart(7)} ± ${s.meanPullErr.toFixed(3)}  ${s.rmsPull.toFixed(2)}  ${(100 * s.coverage).toFixed(0)} %`,
      );
    }
    expect(summary.find((s) => s.name === 'H0')?.n).toBe(SEEDS.length);
  }, 900_000);

  const quantities = ['H0', 'M_W', 'b_W', 'Z_W', 'M_B', 'a_B', 'alpha', 'beta', 'parallax zero point', 'mu (anchor)', 'mu (ms_target)', 'mu (galaxy)', 'mu (sn_host)'];
  for (const name of quantities) {
    it(`${name}: unbiased and with honest errors`, () => {
      const s = summary.find((x) => x.name === name);
      expect(s, `no pulls for ${name}`).toBeDefined();
      expect(Math.abs(s!.meanPull)).toBeLessThan(MAX_ABS_MEAN_PULL);
      expect(s!.coverage).toBeGreaterThan(COVERAGE_BAND[0]);
      expect(s!.coverage).toBeLessThan(COVERAGE_BAND[1]);
    });
  }
});
