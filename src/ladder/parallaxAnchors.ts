/**
 * Geometric anchors: a cluster's or galaxy's distance modulus from the weighted
 * mean of its members' zero-point corrected parallaxes.
 */
import { FIVE_OVER_LN10 } from '../constants/index.ts';
import { AnalysisError, type AnalysisProblem } from '../types/issues.ts';
import type { ParallaxRow } from '../types/release.ts';
import type { AnchorResult } from '../types/results.ts';
import { distanceModulusFromParallaxMas } from './distance.ts';
import { outer, diag, addMatrices, scaleMatrix, type Matrix } from '../math/matrix.ts';

/**
 * Largest fractional error of an anchor's mean parallax that is turned into a distance modulus:
 * beyond f ~ 0.2 inverting a parallax is unreliable (Bailer-Jones 2015, PASP 127, 994), and the
 * chance of a non-positive mean (where no modulus exists) is no longer negligible.
 */
export const MAX_ANCHOR_FRACTIONAL_ERROR = 0.2;

/** Points of the Simpson rule over the standardised parallax error z in parallaxModulus (odd). */
const MODULUS_QUADRATURE_POINTS = 4001;
/** The quadrature runs over |z| <= this, and stops short of 1 + f z = 0 (see parallaxModulus). */
const MODULUS_QUADRATURE_HALF_WIDTH = 10;

export interface ParallaxModulus {
  /** Distance modulus, corrected to be unbiased for the given fractional error. */
  mu: number;
  /** Its standard deviation (not the first-order (5/ln 10) f). */
  muErr: number;
  /** Bias removed from 10 - 5 log10(parallax), mag. */
  bias: number;
}

/**
 * Distance modulus from a mean parallax w (mas) with Gaussian error s, without linearisation.
 * With w = w_true (1 + f z), z ~ N(0, 1), f = s / w_true, the naive modulus 10 - 5 log10 w is off
 * by g(z) = -5 log10(1 + f z), whose mean b(f) = (5/ln 10)(f^2/2 + 3 f^4/4 + ...) is about
 * 1.086 f^2 mag (0.043 mag at f = 0.2) and whose spread is wider than the linear (5/ln 10) f. So
 *   mu = 10 - 5 log10 w - b(f),   mu_err = SD[g(z)],
 * with f estimated as s / w (the difference is of order f^4). b and SD by Simpson's rule on
 * N(0, 1) over |z| <= 10, cut where 1 + f z < 0.05: for f <= 0.2 (MAX_ANCHOR_FRACTIONAL_ERROR)
 * the cut leaves out a probability below 3e-6, where the expectation of ln w does not exist
 * (w <= 0). Checked against scipy quadrature and by simulation (tests/ladder/parallaxModulus.test.ts).
 * Cost O(MODULUS_QUADRATURE_POINTS).
 */
export function parallaxModulus(parallaxMas: number, errMas: number): ParallaxModulus {
  if (!(parallaxMas > 0) || !(errMas >= 0)) throw new RangeError(`parallaxModulus: parallax ${parallaxMas} mas, error ${errMas} mas`);
  const f = errMas / parallaxMas;
  const naive = distanceModulusFromParallaxMas(parallaxMas);
  if (f === 0) return { mu: naive, muErr: 0, bias: 0 };
  const lo = Math.max(-MODULUS_QUADRATURE_HALF_WIDTH, (0.05 - 1) / f);
  const hi = MODULUS_QUADRATURE_HALF_WIDTH;
  const n = MODULUS_QUADRATURE_POINTS;
  const h = (hi - lo) / (n - 1);
  let m0 = 0;
  let m1 = 0;
  let m2 = 0;
  for (let k = 0; k < n; k++) {
    const z = lo + k * h;
    const w = (k === 0 || k === n - 1 ? 1 : k % 2 === 1 ? 4 : 2) * Math.exp(-0.5 * z * z);
    const g = -5 * Math.log10(1 + f * z);
    m0 += w;
    m1 += w * g;
    m2 += w * g * g;
  }
  const bias = m1 / m0;
  return { mu: naive - bias, muErr: Math.sqrt(Math.max(0, m2 / m0 - bias * bias)), bias };
}

export interface AnchorFit {
  result: AnchorResult;
  /** chi^2 of the members about their mean, before any error scaling. */
  chi2: number;
  dof: number;
  fractionalError: number;
}

interface AnchorMean {
  mean: number;
  errTot: number;
  scale: number;
  chi2: number;
  dof: number;
  frac: number;
}

/** The weighted mean corrected parallax of an anchor's members and its error (formulas at fitAnchorParallax). */
function anchorMean(rows: readonly ParallaxRow[], zeroPointMas: number, floorMas: number): AnchorMean {
  let sw = 0;
  let swx = 0;
  for (const r of rows) {
    const w = 1 / (r.parallaxErrMas * r.parallaxErrMas);
    sw += w;
    swx += w * (r.parallaxMas - zeroPointMas);
  }
  const mean = swx / sw;
  let chi2 = 0;
  for (const r of rows) {
    const d = r.parallaxMas - zeroPointMas - mean;
    chi2 += (d * d) / (r.parallaxErrMas * r.parallaxErrMas);
  }
  const dof = rows.length - 1;
  const scale = chi2 / dof > 1 ? Math.sqrt(chi2 / dof) : 1;
  const errTot = Math.hypot(Math.sqrt(1 / sw) * scale, floorMas);
  return { mean, errTot, scale, chi2, dof, frac: errTot / mean };
}

/**
 * Why an anchor's mean parallax cannot give its distance modulus, or null: fewer than two
 * members, a mean that is not positive, or a fractional error above MAX_ANCHOR_FRACTIONAL_ERROR.
 * The one statement of this rule: the rung refuses with it and `rungbook check` reports it
 * (src/ladder/requirements.ts).
 */
export function anchorParallaxProblem(system: string, rows: readonly ParallaxRow[], zeroPointMas: number, floorMas: number): AnalysisProblem | null {
  if (rows.length < 2) {
    return {
      message: `anchor "${system}" has ${rows.length} parallax star(s) (line ${rows[0]?.line ?? '?'} of parallax); a mean parallax needs at least 2`,
      hint: 'add more members, or make the system kind "field" so that each star enters the fit with its own parallax',
    };
  }
  const { mean, errTot, frac } = anchorMean(rows, zeroPointMas, floorMas);
  if (!(mean > 0) || frac > MAX_ANCHOR_FRACTIONAL_ERROR) {
    const what = mean > 0 ? `fractional error ${frac.toFixed(3)} > ${MAX_ANCHOR_FRACTIONAL_ERROR}` : 'is not positive';
    return {
      message: `anchor "${system}": mean corrected parallax ${mean.toPrecision(4)} ± ${errTot.toPrecision(3)} mas ${what}; its distance modulus would be unreliable (parallax lines ${rows
        .map((r) => r.line)
        .slice(0, 3)
        .join(', ')}${rows.length > 3 ? ', ...' : ''})`,
      hint: 'use more members, or make the system kind "field" so that its stars enter the global fit in parallax space',
    };
  }
  return null;
}

/**
 * Weighted mean parallax of one anchor and its distance modulus.
 *   corr_i = measured_i - Z0,  w_i = 1/sigma_i^2,  mean = sum w corr / sum w,
 *   err = (sum w)^-1/2 * max(1, sqrt(chi2/(N-1))),  err_tot = sqrt(err^2 + floor^2),
 *   mu, mu_err_stat = parallaxModulus(mean, err_tot)  (unbiased, not linearised),
 *   K = d mu / d Z = -d mu / d mean  (mag per mas; a larger Z lowers the corrected parallax;
 *       (5/ln 10) / mean to first order), by a central difference,
 *   mu_err = sqrt(mu_err_stat^2 + K^2 sigma_Z^2).
 * Common practice for the mean and the chi^2 scaling.
 * Throws AnalysisError (with a hint) for one member, a non-positive mean, or f > 0.2
 * (anchorParallaxProblem). Cost O(N).
 */
export function fitAnchorParallax(system: string, rows: readonly ParallaxRow[], zeroPointMas: number, zeroPointErrMas: number, floorMas: number): AnchorFit {
  const problem = anchorParallaxProblem(system, rows, zeroPointMas, floorMas);
  if (problem !== null) throw AnalysisError.of(problem);
  const n = rows.length;
  const { mean, errTot, scale, chi2, dof, frac } = anchorMean(rows, zeroPointMas, floorMas);
  const { mu, muErr: muErrStat } = parallaxModulus(mean, errTot);
  // K from the same conversion (its bias term depends on the mean too); step 1e-6 of the mean.
  const h = 1e-6 * mean;
  const k = errTot > 0 ? -(parallaxModulus(mean + h, errTot).mu - parallaxModulus(mean - h, errTot).mu) / (2 * h) : FIVE_OVER_LN10 / mean;
  return {
    result: {
      system,
      n_stars: n,
      mean_parallax_mas: mean,
      mean_parallax_err_mas: errTot,
      error_scale: scale,
      mu,
      mu_err_stat: muErrStat,
      mu_err: Math.hypot(muErrStat, k * zeroPointErrMas),
      dmu_dzp: k,
    },
    chi2,
    dof,
    fractionalError: frac,
  };
}

/**
 * Covariance of the anchors' moduli: independent statistical parts plus the
 * zero point, one error shared by every parallax:
 *   C = diag(mu_err_stat^2) + sigma_Z^2 K K^T.
 */
export function anchorCovariances(anchors: readonly AnchorResult[], zeroPointErrMas: number): { stat: Matrix; total: Matrix } {
  const stat = diag(anchors.map((a) => a.mu_err_stat * a.mu_err_stat));
  const k = anchors.map((a) => a.dmu_dzp);
  const total = anchors.length === 0 ? [] : addMatrices(stat, scaleMatrix(outer(k, k), zeroPointErrMas * zeroPointErrMas));
  return { stat, total };
}
