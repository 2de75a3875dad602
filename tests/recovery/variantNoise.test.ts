// The noise a data-changing variant is judged against (src/ladder/variants.ts variantNoiseH0,
// the comparison engine's sigma of a difference on shared rows, src/ladder/sigmaDifference.ts) is the real
// spread of its shift when there is no systematic at all. Kind: recovery by simulation.
// Generated releases (src/demo) are drawn from the very model the fit assumes, so the shift of
// H0 between z_min = 0.0233 and z_min = 0.01 is statistical noise only: shift / predicted noise
// must have mean 0 and standard deviation 1.
// Bounds from the number of seeds N = 48: the mean of N unit normals has sigma 1/sqrt(48) = 0.144,
// asserted within 3 sigma (0.43); the standard deviation of N unit normals has relative sigma
// about 1/sqrt(2 (N - 1)) = 0.103, asserted within [0.7, 1.32] (about 3 sigma on each side). A rule that took the noise as
// sqrt(sigma_variant^2 - sigma_base^2) of the total errors would fail: on demo 2026.3 that
// gives 0.32 km/s/Mpc where the propagated noise is 0.10.
import { mkdtempSync, rmSync } from 'node:fs';
import { tmpdir } from 'node:os';
import { join } from 'node:path';
import { describe, expect, it } from 'vitest';
import { writeGeneratedRelease } from '../../src/demo/index.ts';
import { DEMO_PARAMETERS } from '../../src/demo/truth.ts';
import { loadRelease } from '../../src/io/release.ts';
import { newRungCache, runLadder } from '../../src/ladder/calibrate.ts';
import { variantAnalysis, variantNoiseH0 } from '../../src/ladder/variants.ts';

const SEEDS = Array.from({ length: 48 }, (_, i) => 9300 + i);

function pullOfShift(seed: number): number {
  const dir = mkdtempSync(join(tmpdir(), 'rungbook-variant-noise-'));
  try {
    const truth = writeGeneratedRelease(dir, 'sim', { seed, writeTruth: false, variants: [], parameters: { ...DEMO_PARAMETERS, blendFraction: 0 } });
    const release = loadRelease(truth.dir);
    const cache = newRungCache();
    const base = runLadder(release, release.analysis, cache);
    const variant = runLadder(release, variantAnalysis(release.analysis, { z_min: 0.01 }).analysis, cache);
    const shift = 10 ** variant.log10H0!.value - 10 ** base.log10H0!.value;
    const noise = variantNoiseH0(base, variant)!;
    expect(noise).toBeGreaterThan(0);
    return shift / noise;
  } finally {
    rmSync(dir, { recursive: true, force: true });
  }
}

describe('recovery: the noise of a redshift-cut variant predicts the spread of its shift', () => {
  it(`shift / noise over ${SEEDS.length} seeds: mean 0 and standard deviation 1 within their bounds`, () => {
    const pulls = SEEDS.map(pullOfShift);
    const n = pulls.length;
    const mean = pulls.reduce((a, b) => a + b, 0) / n;
    const sd = Math.sqrt(pulls.reduce((a, b) => a + (b - mean) ** 2, 0) / (n - 1));
    expect(Math.abs(mean), `mean ${mean}`).toBeLessThan(3 / Math.sqrt(n));
    expect(sd, `sd ${sd}`).toBeGreaterThan(0.7);
    expect(sd, `sd ${sd}`).toBeLessThan(1.32);
  }, 300_000);
});
