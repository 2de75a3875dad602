/**
 * The two-component model of a main-sequence star's magnitude residual
 * r = observed - single-star locus prediction (mag):
 *   single stars   N(r | 0, v)          with weight 1 - f
 *   binaries       N(r | -delta, v)     with weight f
 * delta = 2.5 log10 2 = 0.753 mag (an unresolved equal-mass pair, twice the flux at
 * the same colour), v = photometric variance + intrinsic scatter^2, f = binary
 * fraction. Fitted by expectation-maximisation (EM); uncertainties from the
 * observed information of the mixture likelihood (Louis 1982, JRSS B 44, 226;
 * from memory), which accounts for the uncertain membership of each star.
 * Symmetric sigma clipping is deliberately not offered: it leaves binaries that
 * are not far enough from the locus and biases distances by about half a sigma.
 */
import { cholesky, spdInverse, subMatrix, zeros, type Matrix } from '../math/matrix.ts';

/** f this close to 0 or 1 is on the boundary: it is then left out of the information matrix. */
const FRACTION_EDGE = 1e-6;

function logistic(x: number): number {
  return x >= 0 ? 1 / (1 + Math.exp(-x)) : Math.exp(x) / (1 + Math.exp(x));
}

/**
 * Posterior probability that a star is a binary (the EM responsibility):
 *   logit q = ln(f/(1-f)) - [(r+delta)^2 - r^2] / (2v).  Cost O(1).
 */
export function binaryProbability(residual: number, variance: number, fraction: number, offset: number): number {
  if (fraction <= 0) return 0;
  if (fraction >= 1) return 1;
  return logistic(Math.log(fraction / (1 - fraction)) - (offset * (2 * residual + offset)) / (2 * variance));
}

/** ln L = sum_i ln[(1-f) N(r_i|0,v_i) + f N(r_i|-delta,v_i)], with log-sum-exp. Cost O(n). */
export function mixtureLogLikelihood(residuals: readonly number[], variances: readonly number[], fraction: number, offset: number): number {
  let ll = 0;
  for (let i = 0; i < residuals.length; i++) {
    const r = residuals[i];
    const v = variances[i];
    const a = fraction < 1 ? Math.log(1 - fraction) - (r * r) / (2 * v) : -Infinity;
    const b = fraction > 0 ? Math.log(fraction) - ((r + offset) * (r + offset)) / (2 * v) : -Infinity;
    const m = Math.max(a, b);
    ll += m + Math.log(Math.exp(a - m) + Math.exp(b - m)) - 0.5 * Math.log(2 * Math.PI * v);
  }
  return ll;
}

/** E[(residual about the star's component)^2] = (1-q) r^2 + q (r + delta)^2. */
export function expectedSquaredResidual(residual: number, q: number, offset: number): number {
  return (1 - q) * residual * residual + q * (residual + offset) * (residual + offset);
}

/**
 * EM update of the intrinsic scatter: the t = scatter^2 >= 0 maximising
 *   Q(t) = sum_i [-ln(s_i^2 + t) - e_i / (s_i^2 + t)] / 2
 * (s_i^2 photometric variance, e_i expected squared residual), by bisection on
 * dQ/dt = sum_i (e_i - s_i^2 - t) / (2 (s_i^2 + t)^2), which is negative for
 * t > max e_i. Cost O(100 n).
 */
export function scatterSquaredUpdate(photVariances: readonly number[], expectedSq: readonly number[]): number {
  const slope = (t: number) => {
    let d = 0;
    for (let i = 0; i < photVariances.length; i++) {
      const v = photVariances[i] + t;
      d += (expectedSq[i] - v) / (v * v);
    }
    return d;
  };
  if (slope(0) <= 0) return 0;
  let lo = 0;
  let hi = Math.max(...expectedSq);
  for (let it = 0; it < 100; it++) {
    const mid = 0.5 * (lo + hi);
    if (slope(mid) > 0) lo = mid;
    else hi = mid;
  }
  return 0.5 * (lo + hi);
}

/** One star at the fitted parameters: residual, variance, responsibility, d residual / d theta. */
export interface MixtureStar {
  residual: number;
  variance: number;
  q: number;
  grad: readonly number[];
}

export interface MixtureCurvature {
  /** Covariance of theta (the fraction marginalised when it is free). */
  covTheta: Matrix;
  /** Inverse information over (theta, f) or theta alone. */
  covFull: Matrix;
  /** Per star b_i: information = sum_i b_i grad_i^T in the theta columns. */
  b: number[][];
  /** false when the observed information was not positive definite and the complete-data one was used. */
  observed: boolean;
}

/**
 * Observed information of the mixture log-likelihood in (theta, f), to first
 * order in the residuals (Gauss-Newton: second derivatives of r are dropped):
 *   -d2 lnL/dr2   = (1 - q(1-q) delta^2 / v) / v              =: wt_i
 *   -d2 lnL/dr df = delta q (1-q) / (v f (1-f))
 *   -d2 lnL/df2   = (q/f - (1-q)/(1-f))^2
 * so I_theta,theta = sum wt_i g_i g_i^T, I_f,theta = sum delta q(1-q)/(v f(1-f)) g_i^T.
 * `priorInformation` (e.g. 1/sigma_E^2) is added to the theta block. Falls back to
 * the complete-data weights 1/v (no f coupling) if the result is not positive
 * definite. Cost O(n p^2 + p^3).
 */
export function mixtureCurvature(stars: readonly MixtureStar[], fraction: number, offset: number, priorInformation?: Matrix): MixtureCurvature {
  const p = stars.length === 0 ? 0 : stars[0].grad.length;
  const attempt = (observed: boolean): MixtureCurvature | null => {
    const withF = observed && fraction > FRACTION_EDGE && fraction < 1 - FRACTION_EDGE;
    const m = withF ? p + 1 : p;
    const info = zeros(m, m);
    const b: number[][] = [];
    for (const s of stars) {
      const qq = s.q * (1 - s.q);
      const wt = observed ? (1 - (qq * offset * offset) / s.variance) / s.variance : 1 / s.variance;
      const bi = s.grad.map((g) => g * wt);
      if (withF) bi.push((offset * qq) / (s.variance * fraction * (1 - fraction)));
      for (let i = 0; i < m; i++) for (let j = 0; j < p; j++) info[i][j] += bi[i] * s.grad[j];
      if (withF) {
        const sf = s.q / fraction - (1 - s.q) / (1 - fraction);
        info[p][p] += sf * sf;
      }
      b.push(bi);
    }
    if (withF) for (let j = 0; j < p; j++) info[j][p] = info[p][j];
    if (priorInformation) for (let i = 0; i < p; i++) for (let j = 0; j < p; j++) info[i][j] += priorInformation[i][j];
    if (cholesky(info) === null) return null;
    const covFull = spdInverse(info)!;
    const idx = Array.from({ length: p }, (_, i) => i);
    return { covTheta: subMatrix(covFull, idx), covFull, b, observed };
  };
  const result = attempt(true) ?? attempt(false);
  if (result === null) throw new RangeError('mixture information matrix is singular: the parameters are not constrained by the data');
  return result;
}

/**
 * First-order change of the fitted theta when an outside quantity eta moves the
 * residuals by dr_i = d r_i / d eta (implicit-function theorem on the score):
 *   d theta / d eta = -[I^-1 sum_i b_i dr_i]_theta.  Cost O(n p + p^2).
 */
export function mixtureSensitivity(curv: MixtureCurvature, dResidual: readonly number[]): number[] {
  const m = curv.covFull.length;
  const p = curv.covTheta.length;
  const s = new Array<number>(m).fill(0);
  curv.b.forEach((bi, i) => {
    if (dResidual[i] !== 0) for (let k = 0; k < m; k++) s[k] += bi[k] * dResidual[i];
  });
  const out = new Array<number>(p).fill(0);
  for (let i = 0; i < p; i++) for (let k = 0; k < m; k++) out[i] -= curv.covFull[i][k] * s[k];
  return out;
}
