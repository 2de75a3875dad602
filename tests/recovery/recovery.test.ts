// Injection and recovery over many generator seeds: the test that matters most.
// Kind: recovery by simulation. The generator (src/demo) draws a universe with known truth and
// observes it with the release format's noise model, with 2 % of the extragalactic Cepheids
// blended (0.5 mag too bright, never too faint: harness.ts); the full ladder is calibrated as
// `rungbook calibrate` does; every quantity results.json publishes with an error is compared
// with the truth as a pull (published - true) / published error.
//
// Seeds: SEED_COUNT consecutive seeds from SEED_BASE. The set is fixed, so that a run is
// reproducible; it was not chosen to pass: the base is the number 20261213 (a date-like
// label written down before the first run, unrelated to any outcome), and no other set was
// tried for this test. It differs from the seeds of the committed recovery.json (1-500).
//
// Bounds (from the number of seeds n; z = Z_BOUND standard errors, for a family of about 80
// checks: a correct estimator fails one of them with probability about 1 %):
//   mean pull:        |mean| < z / sqrt(n)                       (standard error of a mean of unit-variance pulls)
//   SD of the pulls:  |sd - 1| < z / sqrt(2 (n - 1))              (standard error of a normal sample's SD)
//   1-sigma coverage: |c1 - 0.6827| < z sqrt(0.6827 0.3173 / n)  (binomial)
//   2-sigma coverage: |c2 - 0.9545| < z sqrt(0.9545 0.0455 / n)  (binomial)
// For the distances pooled per system kind, n is the number of seeds, not of pulls: the
// systems of one seed share the calibration (M_W, the anchors), so their pulls are correlated
// and the number of seeds is the safe count.
// The normal probabilities 0.6827 and 0.9545 are erf(1/sqrt 2) and erf(2/sqrt 2) (checked
// against Python's math.erf in tests/ladder/cepheidMixture.test.ts).
//
// Every published quantity is asserted. A quantity known to fail is asserted as failing
// (it.fails), by name, with its measured numbers and the reason: when it is fixed, that test
// fails and must be turned into an ordinary one.
import { beforeAll, describe, expect, it } from 'vitest';
import { recoverSeeds } from './pool.ts';
import { formatSummary, summarisePulls, type PullSummary } from './harness.ts';

const SEED_BASE = 20261213;
const SEED_COUNT = 300;
const SEEDS = Array.from({ length: SEED_COUNT }, (_, i) => SEED_BASE + i);
const Z_BOUND = 3.9;
const P1 = 0.6827;
const P2 = 0.9545;

const bounds = (n: number) => ({
  mean: Z_BOUND / Math.sqrt(n),
  sd: Z_BOUND / Math.sqrt(2 * (n - 1)),
  c1: Z_BOUND * Math.sqrt((P1 * (1 - P1)) / n),
  c2: Z_BOUND * Math.sqrt((P2 * (1 - P2)) / n),
});

/** Every quantity the generated releases publish with an error (the test also checks no other appears). */
const PARAMETERS = ['H0', 'M_W', 'b_W', 'Z_W', 'M_B', 'a_B', 'delta_M_host', 'alpha', 'beta', 'sigma_int_cepheid', 'sigma_int_sn', 'parallax_zero_point'];
const DISTANCES = [
  'mu (anchor)',
  'mu own rung (anchor)',
  'mu (ms_target)',
  'mu own rung (ms_target)',
  'mu (galaxy)',
  'mu own rung (galaxy)',
  'mu (sn_host)',
];

/**
 * Known failures, excused by name with their measured numbers: none. (Until the main-sequence rung
 * was reworked, issue 13 item 6, the own-rung distances of main-sequence targets had SD 0.69 and
 * the nearby galaxy's mean -0.30 over these 300 seeds; after it: SD 0.88, mean -0.06, and 0.95,
 * +0.07, within the bounds.) A quantity that fails goes here with its numbers and its reason.
 */
const KNOWN_FAILING: Record<string, string> = {};

describe(`recovery over ${SEED_COUNT} seeds with blended Cepheids`, () => {
  let summary: PullSummary[] = [];

  beforeAll(async () => {
    summary = summarisePulls(await recoverSeeds(SEEDS));
    console.log(formatSummary(summary));
  }, 600_000);

  it('every seed is calibrated and publishes exactly the quantities asserted here', () => {
    expect(summary.find((s) => s.name === 'H0')?.n).toBe(SEED_COUNT);
    expect(summary.map((s) => s.name).sort()).toEqual([...PARAMETERS, ...DISTANCES, ...Object.keys(KNOWN_FAILING)].sort());
  });

  const check = (s: PullSummary) => {
    const b = bounds(Math.min(s.n, SEED_COUNT));
    expect(Math.abs(s.mean), `${s.name}: mean pull ${s.mean.toFixed(3)}`).toBeLessThan(b.mean);
    expect(Math.abs(s.sd - 1), `${s.name}: SD of pulls ${s.sd.toFixed(3)}`).toBeLessThan(b.sd);
    expect(Math.abs(s.coverage1 - P1), `${s.name}: 1-sigma coverage ${s.coverage1.toFixed(3)}`).toBeLessThan(b.c1);
    expect(Math.abs(s.coverage2 - P2), `${s.name}: 2-sigma coverage ${s.coverage2.toFixed(3)}`).toBeLessThan(b.c2);
  };

  for (const name of [...PARAMETERS, ...DISTANCES]) {
    it(`${name}: mean, SD and coverage of the pulls within the bounds of ${SEED_COUNT} seeds`, () => {
      const s = summary.find((x) => x.name === name);
      expect(s, `no pulls for ${name}`).toBeDefined();
      check(s!);
    });
  }

  for (const [name, reason] of Object.entries(KNOWN_FAILING)) {
    it.fails(`${name}: known to fail (${reason})`, () => {
      const s = summary.find((x) => x.name === name);
      expect(s, `no pulls for ${name}`).toBeDefined();
      check(s!);
    });
  }
});
