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
 * Largest fractional error of an anchor's mean parallax for which the
 * linearised modulus mu = 10 - 5 log10(parallax) is used: beyond f ~ 0.2 naive
 * inversion is unreliable (Bailer-Jones 2015, PASP 127, 994).
 */
export const MAX_ANCHOR_FRACTIONAL_ERROR = 0.2;

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
      message: `anchor "${system}": mean corrected parallax ${mean.toPrecision(4)} ± ${errTot.toPrecision(3)} mas ${what}; its distance modulus would be unreliable (parallax lines ${rows.map((r) => r.line).slice(0, 3).join(', ')}${rows.length > 3 ? ', ...' : ''})`,
      hint: 'use more members, or make the system kind "field" so that its stars enter the global fit in parallax space',
    };
  }
  return null;
}

/**
 * Weighted mean parallax of one anchor and its distance modulus.
 *   corr_i = measured_i - Z0,  w_i = 1/sigma_i^2,  mean = sum w corr / sum w,
 *   err = (sum w)^-1/2 * max(1, sqrt(chi2/(N-1))),  err_tot = sqrt(err^2 + floor^2),
 *   mu = 10 - 5 log10(mean),  mu_err_stat = (5/ln 10) err_tot / mean,
 *   K = d mu / d Z = (5/ln 10) / mean  (mag per mas; a larger Z lowers the corrected parallax),
 *   mu_err = sqrt(mu_err_stat^2 + K^2 sigma_Z^2).
 * Common practice for the mean and the chi^2 scaling; the modulus error is first order.
 * Throws AnalysisError (with a hint) for one member, a non-positive mean, or f > 0.2
 * (anchorParallaxProblem). Cost O(N).
 */
export function fitAnchorParallax(
  system: string,
  rows: readonly ParallaxRow[],
  zeroPointMas: number,
  zeroPointErrMas: number,
  floorMas: number,
): AnchorFit {
  const problem = anchorParallaxProblem(system, rows, zeroPointMas, floorMas);
  if (problem !== null) throw AnalysisError.of(problem);
  const n = rows.length;
  const { mean, errTot, scale, chi2, dof, frac } = anchorMean(rows, zeroPointMas, floorMas);
  const mu = distanceModulusFromParallaxMas(mean);
  const muErrStat = (FIVE_OVER_LN10 * errTot) / mean;
  const k = FIVE_OVER_LN10 / mean;
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
