/**
 * The intrinsic scatters' own uncertainty and H0 (src/ladder/globalFit.ts, scatterVariance).
 * Kind: a claim about size, held on the demo releases, and the bookkeeping of carrying it. The term
 * d q / d s err(s) is small (content/methods/global-fit.md: 0.005-0.014 % of the variance of log10 H0
 * on the demo releases, measured); this test fails if it ever reaches 0.1 %, so that the claim would
 * have to be revisited. It checks that the term is not trivially zero, that H0's variance is the
 * parameters' covariance plus this term, and that the budget shows it as a line of its own.
 */
import { join } from 'node:path';
import { describe, expect, it } from 'vitest';
import { loadReleaseWithBlinding } from '../../src/blinding/apply.ts';
import { runLadder } from '../../src/ladder/calibrate.ts';
import { scatterInterval } from '../../src/ladder/assemble.ts';

const ROOT = join(import.meta.dirname, '../..');

describe('the scatters\u2019 uncertainty carried to H0', () => {
  for (const id of ['2026.1', '2026.3']) {
    it(`is positive but below 0.1 % of the statistical variance of log10 H0 on demo release ${id}`, () => {
      const { release } = loadReleaseWithBlinding(join(ROOT, 'content', 'releases', id));
      const run = runLadder(release, release.analysis);
      const share = run.fit!.scatterVariance(run.log10H0!.gradient) / run.log10H0!.variance;
      expect(share).toBeGreaterThan(0);
      expect(share).toBeLessThan(1e-3);
      const g = run.log10H0!.gradient;
      const p = g.length;
      let fromCov = 0;
      for (let i = 0; i < p; i++) for (let j = 0; j < p; j++) fromCov += g[i] * run.fit!.cov[i * p + j] * g[j];
      expect(Math.abs(run.log10H0!.variance - (fromCov + run.fit!.scatterVariance(g))) / run.log10H0!.variance).toBeLessThan(1e-12);
      expect(run.fit!.budget(g).get('intrinsic_scatters')).toBe(run.fit!.scatterVariance(g));
    });
  }
});

describe('68 % interval of an intrinsic scatter (asymmetric in s; src/ladder/assemble.ts, scatterInterval)', () => {
  it('s = 0.08, err(s) = 0.005: err(s^2) = 2 s err = 0.0008, interval [sqrt(0.0056), sqrt(0.0072)] (worked by hand)', () => {
    const [lo, hi] = scatterInterval(0.08, 0.005);
    expect(lo).toBeCloseTo(0.0748331, 6);
    expect(hi).toBeCloseTo(0.0848528, 6);
    expect(0.08 - lo).toBeGreaterThan(hi - 0.08); // longer toward zero
  });
  it('reaches zero when s^2 < err(s^2), and at s = 0 runs to sqrt(err(s^2)) = err', () => {
    expect(scatterInterval(0.01, 0.02)[0]).toBe(0);
    expect(scatterInterval(0, 0.03)).toEqual([0, 0.03]);
  });
});
