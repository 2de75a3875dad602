// Injection and recovery over many generator seeds: the test that matters most.
// Kind: recovery by simulation. The generator (src/demo) draws a universe with known truth and
// observes it with the release format's noise model, with 2 % of the extragalactic Cepheids
// blended (0.5 mag too bright, never too faint: harness.ts); the full ladder is calibrated as
// `rungbook calibrate` does; every quantity results.json publishes with an error is compared
// with the truth as a pull (published - true) / published error.
//
// Seeds: SEED_COUNT consecutive seeds from SEED_BASE, on every core (src/parallel/pool.ts). The
// set is fixed, so that a run is reproducible; it was not chosen to pass: the base 20261205 is
// the date this set was written down, before its first run, and no other set was tried for this
// test. It differs from the earlier test's set (300 seeds from 20261213) and from the seeds of the
// committed recovery.json (1-500). `npm run recovery:campaign -- --base B` runs the same checks on
// any other set (the note of issue 13 repeats the campaign on a second set of the same size).
//
// Bounds: tests/recovery/verdict.ts (|mean| < 0.1, SD in [0.92, 1.08], coverages in [0.63, 0.73]
// and [0.93, 0.97] for each global quantity; for the distances the pooled SD in [0.92, 1.08] and
// no system's mean pull beyond 0.15), with what they can see at n = 1000. Each kind of distance
// (anchor, main-sequence target, galaxy, supernova host; final and own-rung) is also held to
// bounds of Z_BOUND standard errors of its own n (the systems of one seed share the
// calibration, so the number of seeds is the safe count):
//   mean pull:        |mean| < z / sqrt(n)
//   SD of the pulls:  |sd - 1| < z / sqrt(2 (n - 1))
//   1-sigma coverage: |c1 - 0.6827| < z sqrt(0.6827 0.3173 / n)
//   2-sigma coverage: |c2 - 0.9545| < z sqrt(0.9545 0.0455 / n)
// The normal probabilities 0.6827 and 0.9545 are erf(1/sqrt 2) and erf(2/sqrt 2) (checked
// against Python's math.erf in tests/ladder/cepheidMixture.test.ts).
//
// Every published quantity is asserted. A quantity known to fail is asserted as failing
// (it.fails), by name, with its measured numbers and the reason: when it is fixed, that test
// fails and must be turned into an ordinary one.
import { beforeAll, describe, expect, it } from 'vitest';
import { recoverSeeds } from './pool.ts';
import { formatSummary, intervalCoverage, summarisePulls, type Pull, type PullSummary } from './harness.ts';
import { GLOBAL_BOUNDS, MIN_SEEDS, distanceFamily, globalFailures, pooledFailures, systemFailures } from './verdict.ts';
import { RECOVERY_BLEND_FRACTION } from './harness.ts';
import { readMeasured } from './measured.ts';

const SEED_BASE = 20261205;
const SEED_COUNT = MIN_SEEDS;
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
const PARAMETERS = ['H0', 'M_W', 'b_W', 'Z_W', 'M_B', 'a_B', 'delta_M_host', 'alpha', 'beta', 'sigma_int_sn', 'parallax_zero_point'];
const DISTANCES = ['mu (anchor)', 'mu own rung (anchor)', 'mu (ms_target)', 'mu own rung (ms_target)', 'mu (galaxy)', 'mu own rung (galaxy)', 'mu (sn_host)'];

/**
 * Known failures, excused by name with their measured numbers and the reason. (Until the main-sequence rung
 * was reworked, issue 13 item 6, the own-rung distances of main-sequence targets had SD 0.69 and
 * the nearby galaxy's mean -0.30 over the 300 seeds of the earlier set; after it: SD 0.88, mean -0.06, and 0.95,
 * +0.07, within the bounds.) A quantity that fails goes here with its numbers and its reason.
 */
const KNOWN_FAILING: Record<string, string> = {
  sigma_int_cepheid:
    'its error is about 10 % small: over these 1000 seeds mean pull +0.008, SD 1.098, 1-sigma coverage 0.634, ' +
    '2-sigma 0.927 (SD and 2-sigma outside the bounds); without blends, 400 seeds: SD 1.063 +- 0.038, mean -0.15 +- 0.05. ' +
    "The moment estimator's Gaussian-theory spread leaves out the uncertainty of the blend memberships and of the " +
    'leverage correction; a fourth-moment sandwich made it worse (SD 1.16) and was not kept',
};

describe(`recovery over ${SEED_COUNT} seeds with blended Cepheids`, () => {
  let summary: PullSummary[] = [];
  let pooled: PullSummary[] = [];
  let perSystem: PullSummary[] = [];
  let intervals: ReturnType<typeof intervalCoverage> = [];

  beforeAll(async () => {
    const pulls: Pull[] = await recoverSeeds(SEEDS);
    summary = summarisePulls(pulls);
    pooled = summarisePulls(pulls, (p) => distanceFamily(p.name));
    perSystem = summarisePulls(pulls, (p) => (p.system ? `${p.name} ${p.system}` : null));
    intervals = intervalCoverage(pulls);
    console.log(formatSummary([...summary, ...pooled]));
  }, 1_800_000);

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

  for (const name of PARAMETERS) {
    it(`${name}: |mean pull| < 0.1, SD in [0.92, 1.08], coverage in [0.63, 0.73] and [0.93, 0.97]`, () => {
      const s = summary.find((x) => x.name === name);
      expect(s, `no pulls for ${name}`).toBeDefined();
      expect(s!.n).toBe(SEED_COUNT);
      expect(globalFailures(s!), name).toEqual([]);
    });
  }

  for (const family of ['mu (all systems)', 'mu own rung (all systems)']) {
    it(`${family}: pooled SD of the pulls in [0.92, 1.08]`, () => {
      const s = pooled.find((x) => x.name === family);
      expect(s?.n ?? 0, family).toBeGreaterThan(SEED_COUNT);
      expect(pooledFailures(s!), family).toEqual([]);
    });
  }

  it("the table the method notes show (content/methods/measured/recovery.json) is exactly this run's", () => {
    const m = readMeasured();
    const stale = 'the committed table is not what this run measures: run `npm run recovery:campaign -- --write` and commit it';
    expect(m.seeds, stale).toEqual({ base: SEED_BASE, count: SEED_COUNT });
    expect(m.blend_fraction, stale).toBe(RECOVERY_BLEND_FRACTION);
    const measured = [...summary, ...pooled];
    expect(
      m.quantities.map((q) => q.name),
      stale,
    ).toEqual(measured.map((q) => q.name));
    for (const [i, q] of m.quantities.entries()) {
      const now = measured[i]!;
      expect(q.n, `${q.name}: ${stale}`).toBe(now.n);
      for (const k of ['mean', 'sd', 'coverage1', 'coverage2'] as const) expect(Math.abs(q[k] - now[k]), `${q.name} ${k}: ${stale}`).toBeLessThan(1e-12);
    }
  });

  it("the intrinsic scatters' asymmetric 68 % intervals cover the truth in [0.63, 0.73] of the seeds", () => {
    expect(intervals.map((i) => i.name).sort()).toEqual(['sigma_int_cepheid', 'sigma_int_sn']);
    for (const i of intervals) {
      expect(i.n, i.name).toBe(SEED_COUNT);
      expect(i.coverage, `${i.name}: interval coverage`).toBeGreaterThanOrEqual(GLOBAL_BOUNDS.coverage1[0]);
      expect(i.coverage, `${i.name}: interval coverage`).toBeLessThanOrEqual(GLOBAL_BOUNDS.coverage1[1]);
    }
  });

  it('no system has a mean distance pull beyond 0.15 (final and own-rung distances)', () => {
    expect(perSystem.length).toBeGreaterThanOrEqual(14);
    for (const s of perSystem) expect(s.n, s.name).toBe(SEED_COUNT);
    const failing = perSystem.flatMap((s) => systemFailures(s).map((f) => `${s.name}: ${f}`));
    expect(failing).toEqual([]);
  });

  for (const name of DISTANCES) {
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
      expect(globalFailures(s!), name).toEqual([]);
    });
  }
});
