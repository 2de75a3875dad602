/**
 * The unevolved main-sequence locus P(c), absolute V at [Fe/H] = 0 against
 * intrinsic B-V, fitted on the geometric anchors' members only.
 *
 * Per star of anchor a (distance modulus mu_a, reddening E_a, metallicity feh_a):
 *   c0 = color - E_a,   y = V - mu_a - R_V E_a + s feh_a      (s = ms_feh_slope)
 * so that y = P(c0) for a single star and P(c0) - 0.753 for an equal-mass binary.
 * P is a polynomial of the given degree in (c0 - pivot), fitted with the binary
 * mixture of mainSequenceMixture.ts by EM, together with the intrinsic scatter.
 */
import { EQUAL_MASS_BINARY_OFFSET_MAG } from '../constants/index.ts';
import { cholesky, choleskySolve, zeros, type Matrix } from '../math/matrix.ts';
import { polyDerivative, polyValue, powerBasis } from '../math/polynomial.ts';
import {
  binaryProbability,
  expectedSquaredResidual,
  mixtureCurvature,
  mixtureLogLikelihood,
  mixtureSensitivity,
  scatterSquaredUpdate,
} from './mainSequenceMixture.ts';

/** EM stops when ln L changes by less than this and coefficients by less than COEFF_TOL. */
const LOGLIK_TOL = 1e-10;
const COEFF_TOL = 1e-10;
export const MAX_EM_ITERATIONS = 5000;

export interface LocusStarInput {
  /** Index of the anchor in the parallax rung's anchor list. */
  anchor: number;
  color0: number;
  /** V - mu - R_V E + s feh of the star (absolute V normalised to [Fe/H] = 0). */
  absMagFeh0: number;
  magErr: number;
  colorErr: number;
}

export interface LocusFitOptions {
  degree: number;
  pivot: number;
  rV: number;
  fehSlope: number;
  /** Number of parallax anchors (columns of the Jacobians). */
  nAnchors: number;
}

export interface LocusFit {
  coeffs: number[];
  scatter: number;
  binaryFraction: number;
  /** Statistical covariance of the coefficients (anchor stars' photometry and membership). */
  covStat: Matrix;
  /**
   * Statistical covariance of (coefficients, binary fraction), (degree+2) square; the fraction's
   * row and column are zero when it sits on a boundary (0 or 1) and is not part of the information.
   */
  covCoeffsFraction: Matrix;
  /** Standard error of the intrinsic scatter (mag), from its Fisher information; 0 when the scatter is 0. */
  scatterErr: number;
  /** d coeffs / d mu_anchor, d coeffs / d E_anchor, d coeffs / d feh_anchor: (degree+1) x nAnchors. */
  dCoeffsDMu: Matrix;
  dCoeffsDEbv: Matrix;
  dCoeffsDFeh: Matrix;
  pBinary: number[];
  iterations: number;
  converged: boolean;
}

/** Weighted least squares (X^T W X) a = X^T W t by Cholesky. Cost O(n p^2 + p^3). */
function weightedLeastSquares(x: readonly number[][], t: readonly number[], w: readonly number[]): number[] {
  const p = x[0].length;
  const a = zeros(p, p);
  const rhs = new Array<number>(p).fill(0);
  x.forEach((row, i) => {
    for (let j = 0; j < p; j++) {
      rhs[j] += w[i] * row[j] * t[i];
      for (let k = 0; k < p; k++) a[j][k] += w[i] * row[j] * row[k];
    }
  });
  const l = cholesky(a);
  if (l === null) throw new RangeError('locus normal matrix is singular: the colour range is too narrowly sampled for the degree');
  return choleskySolve(l, rhs);
}

function median(values: readonly number[]): number {
  const s = [...values].sort((a, b) => a - b);
  const m = s.length >> 1;
  return s.length % 2 ? s[m] : 0.5 * (s[m - 1] + s[m]);
}

/**
 * Residuals about each anchor's own weighted mean offset. The intrinsic scatter is the
 * star-to-star width of the sequence. Each anchor's stars also share one offset (the errors of
 * its reddening, metallicity and modulus), which is carried to the targets through dCoeffsDEbv,
 * dCoeffsDFeh and dCoeffsDMu; so the scatter is estimated on these residuals, or those common
 * errors would be counted twice (once inside the scatter, once propagated).
 */
function withinAnchor(stars: readonly LocusStarInput[], res: readonly number[], qq: readonly number[], v: readonly number[], delta: number): number[] {
  const sum = new Map<number, [number, number]>();
  stars.forEach((s, i) => {
    const acc = sum.get(s.anchor) ?? [0, 0];
    acc[0] += (res[i] + qq[i] * delta) / v[i];
    acc[1] += 1 / v[i];
    sum.set(s.anchor, acc);
  });
  return res.map((ri, i) => {
    const [a, b] = sum.get(stars[i].anchor)!;
    return ri - a / b;
  });
}

/** The locus problem in the pivot-centred colour: design rows, data, and the model's functions of the coefficients. */
interface LocusProblem {
  stars: readonly LocusStarInput[];
  delta: number;
  dc: number[];
  x: number[][];
  y: number[];
  /** Photometric variance of each star at the current slope (effective variance). */
  phot(coeffs: number[]): number[];
  resid(coeffs: number[]): number[];
  scatterUpdate(ph: readonly number[], res: readonly number[], qq: readonly number[], v: readonly number[]): number;
}

function locusProblem(stars: readonly LocusStarInput[], opts: LocusFitOptions): LocusProblem {
  const delta = EQUAL_MASS_BINARY_OFFSET_MAG;
  const dc = stars.map((s) => s.color0 - opts.pivot);
  const y = stars.map((s) => s.absMagFeh0);
  return {
    stars,
    delta,
    dc,
    x: dc.map((d) => powerBasis(d, opts.degree)),
    y,
    phot: (coeffs) => stars.map((s, i) => s.magErr ** 2 + (polyDerivative(coeffs, dc[i]) * s.colorErr) ** 2),
    resid: (coeffs) => y.map((yi, i) => yi - polyValue(coeffs, dc[i])),
    scatterUpdate: (ph, res, qq, v) => {
      const w = withinAnchor(stars, res, qq, v, delta);
      return scatterSquaredUpdate(
        ph,
        w.map((wi, i) => expectedSquaredResidual(wi, qq[i], delta)),
      );
    },
  };
}

/** Where the expectation-maximisation ended. */
interface LocusEm {
  coeffs: number[];
  tau2: number;
  fraction: number;
  iterations: number;
  converged: boolean;
}

/** Start: unweighted fit, stars far above the median residual taken as binaries; then EM to convergence. */
function locusExpectationMaximisation(lp: LocusProblem): LocusEm {
  const { x, y, delta } = lp;
  const n = y.length;
  const unit = new Array<number>(n).fill(1);
  let coeffs = weightedLeastSquares(x, y, unit);
  let r = lp.resid(coeffs);
  const m0 = median(r);
  let q: number[] = r.map((ri) => (ri < m0 - delta / 2 ? 1 : 0));
  let fraction = Math.min(0.5, Math.max(0.05, q.reduce((a, b) => a + b, 0) / n));
  coeffs = weightedLeastSquares(
    x,
    y.map((yi, i) => yi + q[i] * delta),
    unit,
  );
  r = lp.resid(coeffs);
  let ph = lp.phot(coeffs);
  let tau2 = lp.scatterUpdate(ph, r, q, unit);

  let ll = -Infinity;
  let iterations = 0;
  let converged = false;
  while (iterations < MAX_EM_ITERATIONS) {
    iterations++;
    ph = lp.phot(coeffs);
    let v = ph.map((p) => p + tau2);
    r = lp.resid(coeffs);
    q = r.map((ri, i) => binaryProbability(ri, v[i], fraction, delta));
    fraction = q.reduce((a, b) => a + b, 0) / n;
    const next = weightedLeastSquares(
      x,
      y.map((yi, i) => yi + q[i] * delta),
      v.map((vi) => 1 / vi),
    );
    const change = Math.max(...next.map((c, k) => Math.abs(c - coeffs[k])));
    coeffs = next;
    r = lp.resid(coeffs);
    tau2 = lp.scatterUpdate(ph, r, q, v);
    v = ph.map((p) => p + tau2);
    const llNew = mixtureLogLikelihood(r, v, fraction, delta);
    if (Math.abs(llNew - ll) < LOGLIK_TOL * Math.max(1, Math.abs(llNew)) && change < COEFF_TOL) {
      converged = true;
      break;
    }
    ll = llNew;
  }
  return { coeffs, tau2, fraction, iterations, converged };
}

/**
 * EM fit of the locus. Start: unweighted fit, stars brighter than the median
 * residual by more than delta/2 taken as binaries. Then repeat
 *   E-step: v_i = mag_err^2 + P'(c0)^2 color_err^2 + scatter^2, q_i = binary probability;
 *   M-step: f = mean q; P by weighted least squares on y_i + q_i delta with weights 1/v_i
 *           (the expected complete-data chi^2); scatter by scatterSquaredUpdate;
 * until ln L and the coefficients settle. The colour-error term uses the current
 * slope (effective variance), as is common practice.
 * Cost O(iterations n p^2); a few hundred iterations for well separated binaries.
 */
export function fitLocus(stars: readonly LocusStarInput[], opts: LocusFitOptions): LocusFit {
  const n = stars.length;
  const lp = locusProblem(stars, opts);
  const { delta, dc, x } = lp;
  const { coeffs, tau2, fraction, iterations, converged } = locusExpectationMaximisation(lp);

  // Final state and its curvature: d r_i / d coeffs = -x_i.
  const v = lp.phot(coeffs).map((p) => p + tau2);
  const r = lp.resid(coeffs);
  const q = r.map((ri, i) => binaryProbability(ri, v[i], fraction, delta));
  const curv = mixtureCurvature(
    stars.map((_, i) => ({ residual: r[i], variance: v[i], q: q[i], grad: x[i].map((xk) => -xk) })),
    fraction,
    delta,
  );
  // Outside quantities of anchor a move the residuals of its members only:
  //   d r / d mu_a = -1,  d r / d E_a = P'(c0) - R_V,  d r / d feh_a = +s.
  const column = (a: number, dr: (i: number) => number) =>
    mixtureSensitivity(
      curv,
      stars.map((s, i) => (s.anchor === a ? dr(i) : 0)),
    );
  const byAnchor = (dr: (i: number) => number): Matrix => {
    const cols = Array.from({ length: opts.nAnchors }, (_, a) => column(a, dr));
    return coeffs.map((_, k) => cols.map((c) => c[k]));
  };
  const p = coeffs.length;
  const covCoeffsFraction = zeros(p + 1, p + 1);
  curv.covFull.forEach((row, i) => row.forEach((c, j) => (covCoeffsFraction[i][j] = c)));
  // Scatter: Fisher information of t = scatter^2 in the Gaussian part of the likelihood,
  // I(t) = sum_i 1 / (2 v_i^2), less one degree of freedom per anchor offset and coefficient
  // (var t = 2 / sum v^-2 * n / (n - k)); var(scatter) = var(t) / (4 t). Common practice, no
  // source; the mixture's membership uncertainty is neglected here (binaries are far off).
  const k = new Set(stars.map((st) => st.anchor)).size + p;
  const sumInvV2 = v.reduce((acc, vi) => acc + 1 / (vi * vi), 0);
  const scatterErr = tau2 > 0 && n > k ? Math.sqrt(((2 / sumInvV2) * n) / (n - k) / (4 * tau2)) : 0;
  return {
    coeffs,
    scatter: Math.sqrt(tau2),
    covCoeffsFraction,
    scatterErr,
    binaryFraction: fraction,
    covStat: curv.covTheta,
    dCoeffsDMu: byAnchor(() => -1),
    dCoeffsDEbv: byAnchor((i) => polyDerivative(coeffs, dc[i]) - opts.rV),
    dCoeffsDFeh: byAnchor(() => opts.fehSlope),
    pBinary: q,
    iterations,
    converged,
  };
}
