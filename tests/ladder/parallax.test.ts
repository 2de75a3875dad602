/**
 * Parallax rung (src/ladder/parallax*.ts).
 * [reference] the EDSD posterior mode against the cubic of Bailer-Jones (2015, PASP 127, 994)
 *   and a brute-force maximisation of ln P; its limits; quantiles against the exact
 *   quantiles of the prior (a Gamma distribution) and a direct numerical integration.
 * [edge] anchors with one star, non-positive or imprecise means; negative parallaxes kept.
 * [reference] zero-point sign and the rank-one zero-point covariance between anchors.
 */
import { describe, expect, it } from 'vitest';
import { DEFAULT_ANALYSIS, type AnalysisChoices } from '../../src/types/analysis.ts';
import { AnalysisError } from '../../src/types/issues.ts';
import type { CepheidRow, ParallaxRow, Release, SystemRow } from '../../src/types/release.ts';
import { fitParallaxRung, LOW_SIGNIFICANCE_PARALLAX_SNR } from '../../src/ladder/parallax.ts';
import {
  DEFAULT_EDSD_LENGTH_KPC,
  edsdCubicPositiveRoots,
  edsdLogPosterior,
  edsdModeCubic,
  edsdPosteriorMode,
  edsdPosteriorSummary,
} from '../../src/ladder/parallaxPosterior.ts';
import { absErr, relErr, REL_1E9, REL_1E12, REL_GRID_QUANTILE, REL_GRID_SEARCH } from '../tolerances.ts';

const L = DEFAULT_EDSD_LENGTH_KPC;

/** Brute force: the r maximising ln P on a fine log grid, refined once around the best point. */
function gridArgmax(w: number, s: number, lo: number, hi: number): number {
  let best = lo;
  for (const [a, b] of [[lo, hi]] as [number, number][]) {
    let bestLp = -Infinity;
    const n = 200_000;
    for (let k = 0; k <= n; k++) {
      const r = a * (b / a) ** (k / n);
      const lp = edsdLogPosterior(r, w, s, L);
      if (lp > bestLp) [bestLp, best] = [lp, r];
    }
  }
  return best;
}

/** Local maxima of ln P found by scanning a log grid (independent of the cubic). */
function gridLocalMaxima(w: number, s: number, lo: number, hi: number, n = 100_000): number[] {
  const r = Array.from({ length: n + 1 }, (_, k) => lo * (hi / lo) ** (k / n));
  const lp = r.map((x) => edsdLogPosterior(x, w, s, L));
  return r.filter((_, k) => k > 0 && k < n && lp[k] > lp[k - 1] && lp[k] > lp[k + 1]);
}

describe('EDSD posterior mode [reference: Bailer-Jones 2015, PASP 127, 994, the mode cubic]', () => {
  const cases: [number, number][] = [
    [1, 0.1],
    [1, 0.5],
    [0.3, 0.25],
    [2, 1],
    [0.05, 0.02],
    [10, 0.5],
    [-0.5, 1],
    [0, 0.3],
  ];
  it.each(cases)('parallax %f mas, error %f mas: the mode is a root of r^3/L - 2r^2 + (w/s^2) r - 1/s^2', (w, s) => {
    const { modeKpc } = edsdPosteriorMode(w, s, L);
    // Scale of the cubic's terms at the root, for a relative residual.
    const scale = modeKpc ** 3 / L + 2 * modeKpc ** 2 + (Math.abs(w) * modeKpc + 1) / s ** 2;
    expect(Math.abs(edsdModeCubic(modeKpc, w, s, L)) / scale).toBeLessThan(REL_1E12);
  });

  it.each(cases)('parallax %f mas, error %f mas: the mode agrees with a brute-force grid maximisation of ln P', (w, s) => {
    const { modeKpc } = edsdPosteriorMode(w, s, L);
    const grid = gridArgmax(w, s, 1e-3, 1e3);
    // Grid spacing in ln r is ln(1e6)/2e5 = 6.9e-5; the argmax is within one step.
    expect(relErr(grid, modeKpc)).toBeLessThan(REL_GRID_SEARCH);
  });

  it('a non-positive parallax gives exactly one positive root (Descartes: coefficient signs +, -, -, -)', () => {
    for (const [w, s] of [
      [0, 0.1],
      [-0.2, 0.1],
      [-3, 0.5],
      [-0.01, 2],
    ]) {
      const roots = edsdCubicPositiveRoots(w, s, L);
      expect(roots).toHaveLength(1);
      // Independent count: sign changes of the cubic on a dense grid.
      const r = Array.from({ length: 20001 }, (_, k) => 1e-4 * 1e8 ** (k / 20000));
      const g = r.map((x) => edsdModeCubic(x, w, s, L));
      expect(g.filter((v, k) => k > 0 && Math.sign(v) !== Math.sign(g[k - 1])).length).toBe(1);
      expect(edsdPosteriorMode(w, s, L)).toEqual({ modeKpc: roots[0], bimodal: false });
    }
  });

  it('sigma -> 0 gives 1/parallax and sigma -> infinity gives the prior mode 2L [algebra; mode 2L of the exponentially decreasing space density prior, Bailer-Jones 2015, PASP 127, 994]', () => {
    for (const w of [0.1, 1, 25]) {
      expect(relErr(edsdPosteriorMode(w, w * 1e-7, L).modeKpc, 1 / w)).toBeLessThan(REL_1E9);
    }
    for (const w of [-1, 0.5, 3]) {
      expect(relErr(edsdPosteriorMode(w, 1e7, L).modeKpc, 2 * L)).toBeLessThan(REL_1E9);
    }
  });

  it('three positive roots: both maxima found, the higher one returned, bimodal flagged', () => {
    // Found by a scan of (parallax, error): two maxima, the higher at the LARGER root,
    // so a rule "take the smallest root" would return the lower peak.
    const [w, s] = [6.31, 2.29];
    const roots = edsdCubicPositiveRoots(w, s, L);
    expect(roots).toHaveLength(3);
    const maxima = gridLocalMaxima(w, s, 1e-3, 1e3);
    expect(maxima).toHaveLength(2);
    expect(relErr(maxima[0], roots[0])).toBeLessThan(REL_GRID_SEARCH * 2);
    expect(relErr(maxima[1], roots[2])).toBeLessThan(REL_GRID_SEARCH * 2);
    const mode = edsdPosteriorMode(w, s, L);
    expect(mode.bimodal).toBe(true);
    expect(mode.modeKpc).toBe(roots[2]);
    expect(edsdLogPosterior(roots[2], w, s, L)).toBeGreaterThan(edsdLogPosterior(roots[0], w, s, L));
    // And a case where the smaller maximum is the higher one.
    const other = edsdPosteriorMode(10, 3.02, L);
    expect(other.bimodal).toBe(true);
    expect(other.modeKpc).toBe(edsdCubicPositiveRoots(10, 3.02, L)[0]);
  });

  it('refuses a non-positive error or length scale', () => {
    expect(() => edsdPosteriorMode(1, 0, L)).toThrow(RangeError);
    expect(() => edsdPosteriorMode(1, 0.1, -1)).toThrow(RangeError);
  });
});

describe('EDSD posterior quantiles [reference]', () => {
  it('an uninformative parallax returns the quantiles of the prior r^2 exp(-r/L), a Gamma(3, L) law', () => {
    // Gamma(shape 3) quantiles 0.05/0.50/0.95 = 0.81769145, 2.67406031, 6.29579362:
    // SciPy scipy.stats.gamma.ppf (Debian python3-scipy), equal to half the chi-square
    // (6 degrees of freedom) table values 1.635, 5.348, 12.592.
    const q = edsdPosteriorSummary(0.5, 1e9, L);
    expect(relErr(q.q05Kpc, 0.81769145 * L)).toBeLessThan(REL_GRID_QUANTILE);
    expect(relErr(q.q50Kpc, 2.67406031 * L)).toBeLessThan(REL_GRID_QUANTILE);
    expect(relErr(q.q95Kpc, 6.29579362 * L)).toBeLessThan(REL_GRID_QUANTILE);
  });

  it.each([
    [1, 0.1],
    [0.4, 0.2],
    [-0.3, 0.5],
    [6.31, 2.29],
  ])('parallax %f, error %f: quantiles equal a direct integration of P(r) on a uniform grid', (w, s) => {
    const q = edsdPosteriorSummary(w, s, L);
    const n = 400_000;
    const hi = 60;
    const dr = hi / n;
    const dens = Array.from({ length: n + 1 }, (_, k) => (k === 0 ? 0 : Math.exp(edsdLogPosterior(k * dr, w, s, L) - edsdLogPosterior(q.modeKpc, w, s, L))));
    const cdf = [0];
    for (let k = 1; k <= n; k++) cdf.push(cdf[k - 1] + 0.5 * (dens[k] + dens[k - 1]) * dr);
    const at = (p: number) => {
      const want = p * cdf[n];
      const k = cdf.findIndex((c) => c >= want);
      return (k - 1 + (want - cdf[k - 1]) / (cdf[k] - cdf[k - 1])) * dr;
    };
    expect(relErr(q.q05Kpc, at(0.05))).toBeLessThan(REL_GRID_QUANTILE);
    expect(relErr(q.q50Kpc, at(0.5))).toBeLessThan(REL_GRID_QUANTILE);
    expect(relErr(q.q95Kpc, at(0.95))).toBeLessThan(REL_GRID_QUANTILE);
    expect(q.q05Kpc).toBeLessThan(q.q50Kpc);
    expect(q.q50Kpc).toBeLessThan(q.q95Kpc);
  });

  it('the default length scale is 1.35 kpc (Astraatmadja & Bailer-Jones 2016, ApJ 832, 137; from memory)', () => {
    expect(DEFAULT_EDSD_LENGTH_KPC).toBe(1.35);
  });
});

// ---------------------------------------------------------------- rung on small releases

function release(systems: SystemRow[], parallax: ParallaxRow[], cepheids: CepheidRow[] = []): Release {
  return {
    manifest: { id: 'test', title: 'test', date: '2026-01-01', previous: null, blinded: false },
    analysis: { ...DEFAULT_ANALYSIS },
    analysisKeysSet: [],
    variants: [],
    systems,
    parallax,
    mainSequence: [],
    cepheids,
    snCalibrators: [],
    snHubbleFlow: [],
    absentTables: [],
    inputs: [],
    notes: null,
    dir: '/nonexistent',
  };
}
const sys = (system: string, kind: SystemRow['kind'] = 'cluster'): SystemRow => ({ system, kind, line: 2 });
let lineNo = 2;
const star = (system: string, id: string, parallaxMas: number, parallaxErrMas: number): ParallaxRow => ({
  star: id,
  system,
  parallaxMas,
  parallaxErrMas,
  line: lineNo++,
});
const cepheid = (id: string, system: string): CepheidRow => ({
  star: id,
  system,
  periodDays: 10,
  mH: 5,
  mHErr: 0.02,
  mV: 6,
  mVErr: 0.02,
  mI: 5.5,
  mIErr: 0.02,
  oh: 0,
  line: 2,
});
const analysis = (over: Partial<AnalysisChoices> = {}): AnalysisChoices => ({ ...DEFAULT_ANALYSIS, ...over });

describe('geometric anchors', () => {
  // Two clusters; values chosen so the arithmetic can be followed by hand.
  const rel = release(
    [sys('kestrel'), sys('osprey')],
    [
      star('kestrel', 'k1', 10.0, 0.1),
      star('kestrel', 'k2', 10.1, 0.2),
      star('kestrel', 'k3', 9.9, 0.1),
      star('osprey', 'o1', 4.0, 0.05),
      star('osprey', 'o2', 4.6, 0.05),
      star('osprey', 'o3', 4.3, 0.1),
    ],
  );
  const an = analysis({ parallax_zero_point: -0.03, parallax_zero_point_err: 0.01, parallax_floor: 0.004 });
  const res = fitParallaxRung(rel, an);

  it('weighted mean of the corrected parallaxes, floor in quadrature, mu = 10 - 5 log10(mean) [reference: content/methods/parallax.md]', () => {
    // kestrel: weights 100, 25, 100; corrected = measured + 0.03.
    const mean = (100 * 10.03 + 25 * 10.13 + 100 * 9.93) / 225;
    const chi2 = 100 * (10.03 - mean) ** 2 + 25 * (10.13 - mean) ** 2 + 100 * (9.93 - mean) ** 2;
    expect(chi2 / 2).toBeLessThan(1); // no scaling for this anchor
    const err = Math.hypot(Math.sqrt(1 / 225), 0.004);
    const a = res.anchors[0];
    expect(a.system).toBe('kestrel');
    expect(relErr(a.mean_parallax_mas, mean)).toBeLessThan(REL_1E12);
    expect(relErr(a.mean_parallax_err_mas, err)).toBeLessThan(REL_1E12);
    expect(a.error_scale).toBe(1);
    // Not linearised (src/ladder/parallaxAnchors.ts, parallaxModulus): with f = err/mean, the bias of
    // -5 log10 of a Gaussian parallax is (5/ln 10)(f^2/2 + 3f^4/4 + O(f^6)) and its SD
    // (5/ln 10) f sqrt(1 + 5f^2/2) + O(f^5) (Taylor series of ln(1 + f z), z ~ N(0, 1), re-derived);
    // here f = 0.007, so the terms left out are below 1e-12 mag in mu and 1e-5 relative in its error.
    const f = err / mean;
    expect(relErr(a.mu, 10 - 5 * Math.log10(mean) - (5 / Math.LN10) * (f ** 2 / 2 + (3 * f ** 4) / 4))).toBeLessThan(REL_1E12);
    expect(relErr(a.mu_err_stat, (5 / Math.LN10) * f * Math.sqrt(1 + 2.5 * f ** 2))).toBeLessThan(1e-7);
    // K = d mu / d Z: (5/ln 10)/mean to first order; the bias term adds a relative O(f^2) ~ 1e-4.
    expect(relErr(a.dmu_dzp, 5 / Math.LN10 / mean)).toBeLessThan(5 * f ** 2);
    expect(relErr(a.mu_err, Math.hypot(a.mu_err_stat, a.dmu_dzp * 0.01))).toBeLessThan(REL_1E12);
  });

  it('scales the error by sqrt(chi2/(N-1)) when the members scatter more than their errors', () => {
    const w = [400, 400, 100];
    const x = [4.03, 4.63, 4.33];
    const mean = (w[0] * x[0] + w[1] * x[1] + w[2] * x[2]) / 900;
    const chi2 = w.reduce((s, wi, i) => s + wi * (x[i] - mean) ** 2, 0);
    const a = res.anchors[1];
    expect(relErr(a.error_scale, Math.sqrt(chi2 / 2))).toBeLessThan(REL_1E12);
    expect(relErr(a.mean_parallax_err_mas, Math.hypot(Math.sqrt(1 / 900) * Math.sqrt(chi2 / 2), 0.004))).toBeLessThan(REL_1E12);
    const check = res.checks.find((c) => c.id === 'parallax-anchor-error-scaling')!;
    expect(check.passed).toBe(false);
    expect(check.detail).toContain('osprey');
    expect(check.detail).not.toContain('kestrel');
  });

  it('zero-point sign: a more negative zero point raises the corrected parallax and shortens the distance', () => {
    const lower = fitParallaxRung(rel, { ...an, parallax_zero_point: -0.05 });
    expect(lower.anchors[0].mean_parallax_mas - res.anchors[0].mean_parallax_mas).toBeCloseTo(0.02, 12);
    expect(lower.anchors[0].mu).toBeLessThan(res.anchors[0].mu);
  });

  it('K = d mu / d Z equals a finite difference of the whole rung in the zero point', () => {
    const h = 1e-6;
    const up = fitParallaxRung(rel, { ...an, parallax_zero_point: an.parallax_zero_point + h });
    const dn = fitParallaxRung(rel, { ...an, parallax_zero_point: an.parallax_zero_point - h });
    res.anchors.forEach((a, i) => {
      const fd = (up.anchors[i].mu - dn.anchors[i].mu) / (2 * h);
      expect(fd).toBeGreaterThan(0);
      expect(relErr(a.dmu_dzp, fd)).toBeLessThan(REL_GRID_SEARCH);
    });
  });

  it('anchor covariance: diagonal stat^2 + sigma_Z^2 K^2, off-diagonal exactly sigma_Z^2 K_i K_j', () => {
    const [a, b] = res.anchors;
    const sz2 = 0.01 ** 2;
    expect(relErr(res.anchorCovariance[0][1], sz2 * a.dmu_dzp * b.dmu_dzp)).toBeLessThan(REL_1E12);
    expect(res.anchorCovariance[1][0]).toBe(res.anchorCovariance[0][1]);
    expect(relErr(res.anchorCovariance[0][0], a.mu_err ** 2)).toBeLessThan(REL_1E12);
    expect(relErr(res.anchorCovariance[1][1], b.mu_err_stat ** 2 + sz2 * b.dmu_dzp ** 2)).toBeLessThan(REL_1E12);
    expect(res.anchorStatCovariance).toEqual([
      [a.mu_err_stat ** 2, 0],
      [0, b.mu_err_stat ** 2],
    ]);
  });
});

describe('anchor errors [edge]', () => {
  const expectAnalysisError = (fn: () => unknown, text: string) => {
    try {
      fn();
    } catch (e) {
      expect(e).toBeInstanceOf(AnalysisError);
      expect((e as AnalysisError).message).toContain(text);
      expect((e as AnalysisError).hint).toMatch(/field|members/);
      return;
    }
    throw new Error('expected an AnalysisError');
  };
  it('one star only', () => {
    expectAnalysisError(() => fitParallaxRung(release([sys('lonely')], [star('lonely', 'l1', 5, 0.1)]), analysis()), '"lonely" has 1 parallax star');
  });
  it('non-positive mean parallax', () => {
    const rel = release([sys('faraway')], [star('faraway', 'f1', -0.05, 0.02), star('faraway', 'f2', -0.01, 0.02)]);
    expectAnalysisError(() => fitParallaxRung(rel, analysis()), 'is not positive');
  });
  it('fractional error above 0.2', () => {
    const rel = release([sys('hazy')], [star('hazy', 'h1', 0.5, 0.2), star('hazy', 'h2', 0.6, 0.2)]);
    expectAnalysisError(() => fitParallaxRung(rel, analysis()), 'fractional error');
  });
  it('a field system with one star is not an anchor and raises nothing', () => {
    const res = fitParallaxRung(release([sys('loose', 'field')], [star('loose', 'x1', 1, 0.1)]), analysis());
    expect(res.anchors).toEqual([]);
    expect(res.anchorCovariance).toEqual([]);
  });
});

describe('stars and field stars', () => {
  const rel = release(
    [sys('wren'), sys('scatter', 'field')],
    [
      star('wren', 'w1', 3.0, 0.1),
      star('wren', 'w2', 3.1, 0.1),
      star('scatter', 'cep1', 0.5, 0.05),
      star('scatter', 'cep2', -0.1, 0.2),
      star('scatter', 'plain', 0.05, 0.1),
    ],
    [cepheid('cep1', 'scatter'), cepheid('cep2', 'scatter'), cepheid('w1', 'wren')],
  );
  const an = analysis({ parallax_zero_point: -0.02, parallax_floor: 0.03 });
  const res = fitParallaxRung(rel, an);

  it('every parallax row gets a star result, negative ones kept with no inverse distance', () => {
    expect(res.stars.map((s) => s.star)).toEqual(['w1', 'w2', 'cep1', 'cep2', 'plain']);
    const neg = res.stars.find((s) => s.star === 'cep2')!;
    expect(neg.parallax_corr_mas).toBeCloseTo(-0.08, 12);
    expect(neg.dist_inverse_pc).toBeNull();
    expect(neg.low_significance).toBe(true);
    expect(neg.dist_mode_pc).toBeGreaterThan(0);
    const good = res.stars.find((s) => s.star === 'w1')!;
    expect(relErr(good.dist_inverse_pc!, 1000 / 3.02)).toBeLessThan(REL_1E12);
    expect(relErr(good.frac_err, Math.hypot(0.1, 0.03) / 3.02)).toBeLessThan(REL_1E12);
    expect(good.low_significance).toBe(false);
    // EDSD mode of the star equals the mode function in pc.
    expect(relErr(good.dist_mode_pc, 1000 * edsdPosteriorMode(3.02, Math.hypot(0.1, 0.03), L).modeKpc)).toBeLessThan(REL_1E12);
  });

  it('flags parallax / error below the named threshold and reports non-positive ones kept', () => {
    expect(LOW_SIGNIFICANCE_PARALLAX_SNR).toBe(5);
    const low = res.checks.find((c) => c.id === 'parallax-low-significance')!;
    expect(low.passed).toBe(false);
    expect(low.detail).toContain('2 of 5');
    expect(low.detail).toContain('cep2');
    expect(low.detail).toContain('plain');
    const kept = res.checks.find((c) => c.id === 'parallax-nonpositive-kept')!;
    expect(kept.detail).toContain('cep2');
  });

  it('field stars: only stars of field systems that are also Cepheids, error with the floor in quadrature', () => {
    expect(res.fieldStars.map((f) => f.star)).toEqual(['cep1', 'cep2']);
    const f = res.fieldStars[0];
    expect(f.parallaxCorrMas).toBeCloseTo(0.52, 12);
    expect(absErr(f.parallaxErrMas, Math.hypot(0.05, 0.03))).toBeLessThan(REL_1E12);
  });
});
