/**
 * The Cepheid blend mixture (src/ladder/cepheidMixture.ts).
 * Kind: reference values from outside the project, then behaviour on simulated samples.
 * References: Python 3 math.erfc and scipy 1.17 (Debian python3-scipy): scipy.stats.norm.logcdf,
 * norm.pdf / norm.cdf for the mixture's densities, scipy.stats.truncnorm for the moments of the
 * blend offset given a blend (values printed by the one-line scripts quoted beside each case).
 */
import { describe, expect, it } from 'vitest';
import { blendPosterior, logBlendDensity, logNormalCdf, mixtureAtResiduals } from '../../src/ladder/cepheidMixture.ts';
import { createRng } from '../../src/demo/random.ts';

describe('reference: normal CDF and the mixture densities against Python', () => {
  it('ln Phi(z) agrees with scipy.stats.norm.logcdf / math.erfc to 1e-12 relative, far tails included', () => {
    // python3: math.log(0.5 * math.erfc(-z / math.sqrt(2))); z = -40 and 8: scipy.stats.norm.logcdf(z)
    const cases: [number, number][] = [
      [-40, -804.6084420137539],
      [-30, -454.3212439563431],
      [-10, -53.23128515051246],
      [-3, -6.607726221510348],
      [-1, -1.8410216450092634],
      [0, -0.6931471805599453],
      [0.5, -0.36894641528865635],
      [2, -0.02301290932896349],
      [8, -6.220960574271742e-16],
    ];
    for (const [z, want] of cases) {
      expect(Math.abs(logNormalCdf(z) - want), `z = ${z}`).toBeLessThan(1e-12 * Math.max(1, Math.abs(want)) + 1e-17);
    }
  });

  it('blend density, core membership and the truncated-normal moments of the offset agree with scipy', () => {
    // python3: s = sqrt(v); g = (norm.cdf((r+1)/s) - norm.cdf((r+0.3)/s)) / 0.7; c = norm.pdf(r, 0, s);
    //          p = 0.95 c / (0.95 c + 0.05 g); truncnorm.stats((0.3+r)/s, (1+r)/s, loc=-r, scale=s, moments='mv')
    const cases = [
      { r: -0.5, v: 0.04, mean: 0.5537499691249843, variance: 0.023422545619624, logG: 0.17651315006818535, p: 0.5825925486524762 },
      { r: 0.2, v: 0.09, mean: 0.42403299100244457, variance: 0.012010855905192743, logG: -2.684919482944642, p: 0.9966390684726716 },
      { r: -2.0, v: 0.01, mean: 0.9901906766037436, variance: 9.445377825130442e-5, logG: -52.87461020657375, p: 9.636486817252616e-63 },
      { r: -0.6, v: 0.0625, mean: 0.6250759267164818, variance: 0.030965188588941962, logG: 0.17050323048923857, p: 0.5893530523352998 },
    ];
    for (const c of cases) {
      const post = blendPosterior(c.r, c.v, 0.05, [0.3, 1.0]);
      expect(Math.abs(logBlendDensity(c.r, c.v, [0.3, 1.0]) - c.logG), `ln g at r = ${c.r}`).toBeLessThan(1e-10);
      expect(Math.abs(post.membership - c.p) / c.p, `p at r = ${c.r}`).toBeLessThan(1e-9);
      expect(Math.abs(post.offsetMean - c.mean), `E[u] at r = ${c.r}`).toBeLessThan(1e-10);
      expect(Math.abs(post.offsetVariance - c.variance) / c.variance, `Var[u] at r = ${c.r}`).toBeLessThan(1e-7);
    }
  });
});

describe('expectation-maximisation on simulated residuals', () => {
  /** n residuals: N(0, v_i) with v_i spread like Cepheid errors, a fraction f made u ~ U(0.3, 1) brighter. */
  function sample(seed: number, n: number, f: number) {
    const rng = createRng(seed, 'test', 'mixture');
    const r = new Float64Array(n);
    const v = new Float64Array(n);
    const blended: boolean[] = [];
    for (let i = 0; i < n; i++) {
      const s = rng.between(0.08, 0.35);
      v[i] = s * s;
      const b = rng.chance(f);
      blended.push(b);
      r[i] = rng.gauss(0, s) - (b ? rng.between(0.3, 1.0) : 0);
    }
    return { r, v, blended };
  }

  it('fits the blend fraction within its binomial error, and the expected blend light removes the bias of the mean', () => {
    const n = 20000;
    for (const [seed, f] of [
      [1, 0.02],
      [2, 0.05],
    ] as const) {
      const { r, v } = sample(seed, n, f);
      const em = mixtureAtResiduals(r, v, 0.02, 500);
      // the fraction is not better known than a binomial count of the blends (4 standard errors, doubled
      // because blends and core overlap where the errors are large)
      expect(Math.abs(em.fraction - f), `f = ${f}`).toBeLessThan(2 * 4 * Math.sqrt((f * (1 - f)) / n));
      // raw mean: -f E[u] = -0.65 f; with the expected light taken out, within 4 standard errors of 0
      let raw = 0;
      let corrected = 0;
      let w = 0;
      for (let i = 0; i < n; i++) {
        raw += r[i]! / v[i]!;
        corrected += (r[i]! + em.shift[i]!) / v[i]!;
        w += 1 / v[i]!;
      }
      const se = Math.sqrt(1 / w);
      expect(raw / w).toBeLessThan(-0.5 * 0.65 * f);
      expect(Math.abs(corrected / w), `bias left at f = ${f}`).toBeLessThan(4 * se);
    }
  });

  it('gives clear blends a low core membership and clean rows a high one, and never treats too-faint rows as blends', () => {
    const { r, v, blended } = sample(3, 5000, 0.05);
    const em = mixtureAtResiduals(r, v, 0.02, 500);
    for (let i = 0; i < r.length; i++) {
      const z = r[i]! / Math.sqrt(v[i]!);
      if (z > 0) expect(em.membership[i]!, `row ${i}, z = ${z}`).toBeGreaterThan(0.9);
      if (z < -6) {
        expect(em.membership[i]!).toBeLessThan(1e-3);
        expect(blended[i]).toBe(true);
      }
    }
    const clean = em.membership.filter((_, i) => !blended[i]);
    expect(clean.reduce((a, b) => a + b, 0) / clean.length).toBeGreaterThan(0.97);
  });

  it('finds a fraction near zero in a sample without blends', () => {
    const { r, v } = sample(4, 20000, 0);
    const em = mixtureAtResiduals(r, v, 0.02, 500);
    expect(em.fraction).toBeLessThan(0.005);
  });
});
