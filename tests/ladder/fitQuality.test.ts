// The fit-quality measure that can fail (src/ladder/fitQuality.ts): Bartlett's test that every
// Cepheid host's residual variance is alike (Bartlett 1937, Proc. R. Soc. Lond. A 160, 268).
// Kind: a reference check of the statistic against scipy's implementation (Debian
// python3-scipy, scipy.stats.bartlett), and a recovery check on generated releases with known
// truth: clean releases pass at the stated false-alarm rate, releases in which one host's
// stated errors are four times too small fail.
import { execFileSync, spawnSync } from 'node:child_process';
import { mkdtempSync, rmSync } from 'node:fs';
import { tmpdir } from 'node:os';
import { join } from 'node:path';
import { describe, expect, it } from 'vitest';
import { bartlett, cepheidHostHomogeneity, HOMOGENEITY_ALPHA } from '../../src/ladder/fitQuality.ts';
import { chiSquarePValue } from '../../src/math/special.ts';
import { writeGeneratedRelease } from '../../src/demo/index.ts';
import { DEMO_PARAMETERS } from '../../src/demo/truth.ts';
import { loadRelease } from '../../src/io/release.ts';
import { runLadder } from '../../src/ladder/calibrate.ts';
import type { Release } from '../../src/types/release.ts';

/** Debian's interpreter first (scripts/test-setup.mjs installs python3-scipy into it): the first that imports scipy.stats. */
function scipyPython(): string {
  const tried = [process.env.RUNGBOOK_PYTHON ?? '', '/usr/bin/python3', 'python3'].filter((p) => p.length > 0);
  const ok = tried.find((p) => {
    const r = spawnSync(p, ['-c', 'import scipy.stats'], { stdio: 'ignore' });
    return !r.error && r.status === 0;
  });
  if (!ok)
    throw new Error(`no Python with scipy among ${tried.join(', ')}: run \`node scripts/test-setup.mjs\` (installs Debian python3-scipy when run as root)`);
  return ok;
}

describe('reference: Bartlett statistic against scipy.stats.bartlett', () => {
  it("three invented samples give scipy's statistic and p-value", () => {
    const samples = [
      [0.3, -1.2, 0.8, 1.9, -0.4, 0.1],
      [2.5, -3.1, 0.7, -1.8, 3.3, -0.2, 1.1],
      [0.05, -0.2, 0.3, 0.1, -0.15],
    ];
    const py = `
import json, sys
from scipy import stats
s = json.loads(sys.argv[1])
t, p = stats.bartlett(*s)
print(json.dumps([t, p]))
`;
    let ref: [number, number];
    try {
      ref = JSON.parse(execFileSync(scipyPython(), ['-c', py, JSON.stringify(samples)], { encoding: 'utf8' }));
    } catch (e) {
      throw new Error(
        `python3 with scipy is required for this reference check (Debian python3-scipy, installed by scripts/test-setup.mjs): ${(e as Error).message}`,
        { cause: e },
      );
    }
    // scipy uses the sample variance about each sample's mean: chi2 = sum (x - mean)^2, dof = n - 1.
    const groups = samples.map((x) => {
      const m = x.reduce((a, b) => a + b, 0) / x.length;
      return { chi2: x.reduce((a, b) => a + (b - m) ** 2, 0), dof: x.length - 1 };
    });
    const t = bartlett(groups);
    expect(Math.abs(t.statistic - ref[0]) / ref[0]).toBeLessThan(1e-10);
    expect(Math.abs(chiSquarePValue(t.statistic, t.dof) - ref[1])).toBeLessThan(1e-9);
  });
});

/** One generated release (no blends: this test is about stated errors), optionally with one host's errors scaled. */
function homogeneity(seed: number, errorFactor: number): { p: number; host: string; hostP: number } {
  const dir = mkdtempSync(join(tmpdir(), 'rungbook-fitquality-'));
  try {
    const truth = writeGeneratedRelease(dir, 'sim', { seed, writeTruth: false, variants: [], parameters: { ...DEMO_PARAMETERS, blendFraction: 0 } });
    const release = loadRelease(truth.dir);
    // the supernova host with the most Cepheids
    const hostIds = new Set(release.snCalibrators.map((s) => s.system));
    const counts = new Map<string, number>();
    for (const c of release.cepheids) if (hostIds.has(c.system)) counts.set(c.system, (counts.get(c.system) ?? 0) + 1);
    const host = [...counts].sort((a, b) => b[1] - a[1] || a[0].localeCompare(b[0]))[0][0];
    const changed: Release =
      errorFactor === 1
        ? release
        : {
            ...release,
            cepheids: release.cepheids.map((c) =>
              c.system === host ? { ...c, mHErr: c.mHErr * errorFactor, mVErr: c.mVErr * errorFactor, mIErr: c.mIErr * errorFactor } : c,
            ),
          };
    const run = runLadder(changed, changed.analysis);
    const t = cepheidHostHomogeneity(run.fit!)!;
    return { p: t.p_value, host, hostP: t.groups.find((g) => g.system === host)!.p_value };
  } finally {
    rmSync(dir, { recursive: true, force: true });
  }
}

const SEEDS = Array.from({ length: 12 }, (_, i) => 7100 + i);

describe('recovery: the test passes clean releases and flags one host with misstated errors', () => {
  it(`clean: at most 1 of ${SEEDS.length} releases fails at p < ${HOMOGENEITY_ALPHA}`, () => {
    // With a true false-alarm rate of 1 %, P(2 or more failures in 12) = 0.006.
    const p = SEEDS.map((s) => homogeneity(s, 1).p);
    expect(p.filter((x) => x < HOMOGENEITY_ALPHA).length).toBeLessThanOrEqual(1);
    // and the p-values are not piled up near 0 or 1: the median lies in the middle half
    const sorted = [...p].sort((a, b) => a - b);
    const median = (sorted[5] + sorted[6]) / 2;
    expect(median).toBeGreaterThan(0.15);
    expect(median).toBeLessThan(0.85);
  }, 120_000);

  it(`one host's stated errors four times too small: at least 11 of ${SEEDS.length} fail, each with that host's own p-value below the level`, () => {
    const out = SEEDS.map((s) => homogeneity(s, 0.25));
    expect(out.filter((o) => o.p < HOMOGENEITY_ALPHA).length).toBeGreaterThanOrEqual(11);
    for (const o of out.filter((x) => x.p < HOMOGENEITY_ALPHA)) expect(o.hostP).toBeLessThan(HOMOGENEITY_ALPHA);
  }, 120_000);
});
