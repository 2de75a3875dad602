/**
 * One-sided contamination of the Cepheid period-luminosity relation. A Cepheid blended with an
 * unresolved neighbour is too bright in every band, never too faint, so symmetric clipping of
 * the residuals keeps such rows (about 2 sigma bright where the errors are large) and pushes the
 * zero point, and with it H0, upwards. The global fit instead gives each Cepheid row a mixture
 * likelihood: a Gaussian core (the period-luminosity relation with its intrinsic scatter) plus a
 * contaminating component with a fitted fraction f, as in the mixture model for outliers of
 * Hogg, Bovy & Lang (2010, arXiv:1008.4686, section 3). Here the contaminating component is the
 * same relation plus a one-sided offset: a blend is brighter by u >= 0 with an exponential
 * distribution of fitted mean lambda (the exponentially modified Gaussian),
 *   L_i = (1 - f) N(r_i; 0, v_i) + f g(r_i; v_i),
 *   g(r; v) = integral_0^inf (1/lambda) e^(-u/lambda) N(r + u; 0, v) du
 *           = (1/lambda) exp(r/lambda + v/(2 lambda^2)) Phi(m/s),   m = -(r + v/lambda),
 * with r_i = W_i - model_i, v_i = s_i^2 = measurement variance + intrinsic scatter^2.
 * Because the blend component depends on the model too, a blend still measures its host's
 * distance once its offset is taken out. Expectation-maximisation (Dempster, Laird & Rubin 1977,
 * JRSS B 39, 1) on the latent blend indicator z_i and offset u_i:
 *   E-step: core membership p_i = (1 - f) N / L_i; given a blend, u_i is N(m_i, v_i) truncated to
 *           u >= 0 (mean m + s k, variance v (1 - k (k + m/s)), k = phi(m/s)/Phi(m/s));
 *   M-step: the linear parameters by least squares on W_i + E[z_i u_i] (the expected blend
 *           light taken out, globalModel.ts), f = 1 - mean p_i, lambda = sum (1-p_i) E[u_i|blend]
 *           / sum (1 - p_i); the intrinsic scatter from the moment equation with E[(r - z u)^2]
 *           = (r + E[z u])^2 + Var(z u) in place of r^2 (globalFit.ts).
 * Rows with p_i below MIXTURE.reportBelow are listed with the rejected rows (as probable blends,
 * kept with their offset estimated, not dropped). Too-faint outliers have no model here: they
 * are still clipped at clip_sigma (globalFit.ts).
 */
import { upperRegularizedGamma } from '../math/special.ts';

export const MIXTURE = {
  /** Start value of the fraction (a few per cent of blends, common practice, no source). */
  startFraction: 0.02,
  /** Start value of the mean blend offset lambda (mag; blends are reported at a few tenths of a magnitude, from memory, no source). */
  startMeanOffsetMag: 0.5,
  /**
   * Bounds of the fitted fraction: the lower keeps EM from sticking at exactly 0 (an absorbing
   * value of the iteration); the upper says a table that is half contamination is not a
   * relation (numerical choices).
   */
  minFraction: 1e-4,
  maxFraction: 0.5,
  /** Bounds of lambda (mag): below 0.05 a blend is not told from the scatter, above 3 it is no longer the same star (numerical choices). */
  minMeanOffsetMag: 0.05,
  maxMeanOffsetMag: 3,
  /** Rows with a core membership below this are listed with the rejected rows (as probable blends). */
  reportBelow: 0.5,
} as const;

const LOG_SQRT_2PI = 0.5 * Math.log(2 * Math.PI);

/** ln Phi(z), the standard normal CDF, accurate in the far lower tail (asymptotic series there). */
export function logNormalCdf(z: number): number {
  // Phi(z) = Q(1/2, z^2/2) / 2 for z <= 0 (Q: regularised upper incomplete gamma, erfc(x) = Q(1/2, x^2))
  if (z < -35) return -0.5 * z * z - Math.log(-z) - LOG_SQRT_2PI + Math.log1p(-1 / (z * z));
  if (z <= 0) return Math.log(0.5 * upperRegularizedGamma(0.5, 0.5 * z * z));
  return Math.log1p(-0.5 * upperRegularizedGamma(0.5, 0.5 * z * z));
}

/** ln N(r; 0, v). */
export function logCoreDensity(r: number, v: number): number {
  return -0.5 * (r * r) / v - 0.5 * Math.log(v) - LOG_SQRT_2PI;
}

/** ln g(r; v): the blend component, a Gaussian convolved with an exponential brightening of mean lambda. */
export function logBlendDensity(r: number, v: number, lambda: number): number {
  const s = Math.sqrt(v);
  const m = -(r + v / lambda);
  return -Math.log(lambda) + r / lambda + v / (2 * lambda * lambda) + logNormalCdf(m / s);
}

export interface BlendPosterior {
  /** Probability that the row belongs to the Gaussian core. */
  membership: number;
  /** E[u | blend, r] and Var[u | blend, r] of the brightening u >= 0 (mag, mag^2). */
  offsetMean: number;
  offsetVariance: number;
}

/** E-step for one row. */
export function blendPosterior(r: number, v: number, fraction: number, lambda: number): BlendPosterior {
  const logCore = Math.log1p(-fraction) + logCoreDensity(r, v);
  const logBlend = Math.log(fraction) + logBlendDensity(r, v, lambda);
  // 1 / (1 + exp(logBlend - logCore)), safe for any difference
  const d = logBlend - logCore;
  const membership = d > 0 ? Math.exp(-d) / (1 + Math.exp(-d)) : 1 / (1 + Math.exp(d));
  const s = Math.sqrt(v);
  const x = -(r + v / lambda) / s;
  // inverse Mills ratio phi(x)/Phi(x), from logarithms (Phi(x) is tiny for a row far on the faint side)
  const k = Math.exp(logCoreDensity(x, 1) - logNormalCdf(x));
  return {
    membership,
    offsetMean: Math.max(0, s * (x + k)),
    offsetVariance: Math.max(0, v * (1 - k * (k + x))),
  };
}

export interface MixtureStep {
  membership: Float64Array;
  /** E[z u] and Var(z u) per row: the expected blend light and its variance (mag, mag^2). */
  shift: Float64Array;
  shiftVariance: Float64Array;
  fraction: number;
  meanOffset: number;
}

/** One expectation-maximisation step at residuals r (of the data without any shift) and variances v. */
export function mixtureStep(residuals: ArrayLike<number>, variances: ArrayLike<number>, fraction: number, meanOffset: number): MixtureStep {
  const n = residuals.length;
  const membership = new Float64Array(n);
  const shift = new Float64Array(n);
  const shiftVariance = new Float64Array(n);
  let sumP = 0;
  let sumBlend = 0;
  let sumBlendU = 0;
  for (let i = 0; i < n; i++) {
    const post = blendPosterior(residuals[i]!, variances[i]!, fraction, meanOffset);
    const q = 1 - post.membership;
    membership[i] = post.membership;
    shift[i] = q * post.offsetMean;
    shiftVariance[i] = q * (post.offsetVariance + post.offsetMean ** 2) - shift[i]! ** 2;
    sumP += post.membership;
    sumBlend += q;
    sumBlendU += q * post.offsetMean;
  }
  const f = n > 0 ? 1 - sumP / n : fraction;
  const lambda = sumBlend > 0 ? sumBlendU / sumBlend : meanOffset;
  return {
    membership,
    shift,
    shiftVariance,
    fraction: Math.min(MIXTURE.maxFraction, Math.max(MIXTURE.minFraction, f)),
    meanOffset: Math.min(MIXTURE.maxMeanOffsetMag, Math.max(MIXTURE.minMeanOffsetMag, lambda)),
  };
}
