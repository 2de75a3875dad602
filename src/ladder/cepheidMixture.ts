/**
 * One-sided contamination of the Cepheid period-luminosity relation. A Cepheid blended with an
 * unresolved neighbour is too bright in every band, never too faint, so symmetric clipping of
 * the residuals keeps such rows (about 2 sigma bright where the errors are large) and pushes the
 * zero point, and with it H0, upwards. The global fit instead gives each Cepheid row in a galaxy
 * a mixture likelihood: a Gaussian core (the period-luminosity relation with its intrinsic
 * scatter) plus a contaminating component with a fitted fraction f, as in the mixture model for
 * outliers of Hogg, Bovy & Lang (2010, arXiv:1008.4686, section 3). Here the contaminating
 * component is the same relation plus a one-sided offset: a blend is brighter by u, uniformly
 * distributed between a and b (MIXTURE.offsetRangeMag), so
 *   L_i = (1 - f) N(r_i; 0, v_i) + f g(r_i; v_i),
 *   g(r; v) = (1/(b - a)) integral_a^b N(r + u; 0, v) du = [Phi((r + b)/s) - Phi((r + a)/s)] / (b - a),
 * with r_i = W_i - model_i, v_i = s_i^2 = measurement variance + intrinsic scatter^2.
 * Because the blend component depends on the model too, a blend still measures its host's
 * distance once its offset is taken out. Expectation-maximisation (Dempster, Laird & Rubin 1977,
 * JRSS B 39, 1) on the latent blend indicator z_i and offset u_i:
 *   E-step: core membership p_i = (1 - f) N / L_i; given a blend, u_i is N(-r_i, v_i) truncated
 *           to [a, b] (its mean and variance: the truncated normal's);
 *   M-step: the linear parameters by least squares on W_i + E[z_i u_i] (the expected blend
 *           light taken out, globalModel.ts), f = 1 - mean p_i, and the intrinsic scatter from
 *           the moment equation with E[(r - z u)^2] = (r + E[z u])^2 + Var(z u) in place of r^2
 *           (globalFit.ts).
 * The offset distribution is stated, not fitted: fitted (an exponential of free mean was tried),
 * the blend component took the bright tail of the Gaussian core itself (the two are not
 * identifiable when blends as small as the scatter are allowed), which biased M_W and the scatter.
 * Rows with p_i below MIXTURE.reportBelow are listed with the rejected rows (as probable blends,
 * kept with their offset estimated, not dropped).
 */
import { upperRegularizedGamma } from '../math/special.ts';

export const MIXTURE = {
  /** Start value of the fraction (a few per cent of blends, common practice, no source). */
  startFraction: 0.02,
  /**
   * Range [a, b] of a blend's brightening (mag). Blends in crowded extragalactic fields are
   * reported a few tenths of a magnitude to about one magnitude too bright (from memory, no single
   * source). A blend outside the range is still told from the core; its expected light is then
   * b, and the clipping rule deals with what is left.
   */
  offsetRangeMag: [0.3, 1.0] as readonly [number, number],
  /**
   * Bounds of the fitted fraction: the lower keeps EM from sticking at exactly 0 (an absorbing
   * value of the iteration); the upper says a table that is half contamination is not a
   * relation (numerical choices).
   */
  minFraction: 1e-4,
  maxFraction: 0.5,
  /** Rows with a core membership below this are listed with the rejected rows (as probable blends). */
  reportBelow: 0.5,
} as const;

const LOG_SQRT_2PI = 0.5 * Math.log(2 * Math.PI);

/** ln Phi(z), the standard normal CDF, accurate in the far lower tail (asymptotic series there). */
export function logNormalCdf(z: number): number {
  // Phi(z) = Q(1/2, z^2/2) / 2 for z <= 0 (Q: regularised upper incomplete gamma, erfc(x) = Q(1/2, x^2))
  if (z < -35) {
    // Phi(z) = phi(z)/(-z) (1 - 1/z^2 + 3/z^4 - 15/z^6 + 105/z^8 ...) (Abramowitz & Stegun 26.2.12)
    const x = 1 / (z * z);
    return -0.5 * z * z - Math.log(-z) - LOG_SQRT_2PI + Math.log1p(x * (-1 + x * (3 + x * (-15 + x * 105))));
  }
  if (z <= 0) return Math.log(0.5 * upperRegularizedGamma(0.5, 0.5 * z * z));
  return Math.log1p(-0.5 * upperRegularizedGamma(0.5, 0.5 * z * z));
}

/** ln(Phi(hi) - Phi(lo)) for hi > lo, without cancellation in either tail. */
export function logNormalProbability(lo: number, hi: number): number {
  if (lo > 0) {
    // both in the upper tail: Phi(hi) - Phi(lo) = Phi(-lo) - Phi(-hi)
    const top = logNormalCdf(-lo);
    return top + Math.log1p(-Math.exp(logNormalCdf(-hi) - top));
  }
  const top = logNormalCdf(hi);
  return top + Math.log1p(-Math.exp(logNormalCdf(lo) - top));
}

/** ln N(r; 0, v). */
export function logCoreDensity(r: number, v: number): number {
  return (-0.5 * (r * r)) / v - 0.5 * Math.log(v) - LOG_SQRT_2PI;
}

/** ln g(r; v): the blend component, a Gaussian convolved with a uniform brightening in [a, b]. */
export function logBlendDensity(r: number, v: number, range: readonly [number, number] = MIXTURE.offsetRangeMag): number {
  const s = Math.sqrt(v);
  return logNormalProbability((r + range[0]) / s, (r + range[1]) / s) - Math.log(range[1] - range[0]);
}

export interface BlendPosterior {
  /** Probability that the row belongs to the Gaussian core. */
  membership: number;
  /** E[u | blend, r] and Var[u | blend, r] of the brightening u (mag, mag^2). */
  offsetMean: number;
  offsetVariance: number;
}

/** E-step for one row. */
export function blendPosterior(r: number, v: number, fraction: number, range: readonly [number, number] = MIXTURE.offsetRangeMag): BlendPosterior {
  const logCore = Math.log1p(-fraction) + logCoreDensity(r, v);
  const logBlend = Math.log(fraction) + logBlendDensity(r, v, range);
  // 1 / (1 + exp(logBlend - logCore)), safe for any difference
  const d = logBlend - logCore;
  const membership = d > 0 ? Math.exp(-d) / (1 + Math.exp(-d)) : 1 / (1 + Math.exp(d));
  // u | blend ~ N(-r, v) truncated to [a, b]: standardised bounds lo, hi
  const s = Math.sqrt(v);
  const lo = (range[0] + r) / s;
  const hi = (range[1] + r) / s;
  const logZ = logNormalProbability(lo, hi);
  const pLo = Math.exp(logCoreDensity(lo, 1) - logZ);
  const pHi = Math.exp(logCoreDensity(hi, 1) - logZ);
  const mean = -r + s * (pLo - pHi);
  const variance = v * (1 + lo * pLo - hi * pHi - (pLo - pHi) ** 2);
  const width = range[1] - range[0];
  return {
    membership,
    // rounding in the far tails can step outside what a truncated normal allows: keep it inside
    offsetMean: Math.min(range[1], Math.max(range[0], mean)),
    offsetVariance: Math.min((width * width) / 4, Math.max(0, variance)),
  };
}

export interface MixtureStep {
  membership: Float64Array;
  /** E[z u] and Var(z u) per row: the expected blend light and its variance (mag, mag^2). */
  shift: Float64Array;
  shiftVariance: Float64Array;
  fraction: number;
}

/** One expectation-maximisation step at residuals r (of the data without any shift) and variances v. */
export function mixtureStep(residuals: ArrayLike<number>, variances: ArrayLike<number>, fraction: number): MixtureStep {
  const n = residuals.length;
  const membership = new Float64Array(n);
  const shift = new Float64Array(n);
  const shiftVariance = new Float64Array(n);
  let sumP = 0;
  for (let i = 0; i < n; i++) {
    const post = blendPosterior(residuals[i]!, variances[i]!, fraction);
    const q = 1 - post.membership;
    membership[i] = post.membership;
    shift[i] = q * post.offsetMean;
    shiftVariance[i] = q * (post.offsetVariance + post.offsetMean ** 2) - shift[i]! ** 2;
    sumP += post.membership;
  }
  const f = n > 0 ? 1 - sumP / n : fraction;
  return { membership, shift, shiftVariance, fraction: Math.min(MIXTURE.maxFraction, Math.max(MIXTURE.minFraction, f)) };
}

/**
 * EM at fixed residuals: the fraction is iterated with the memberships until it settles (the
 * linear parameters move little between the fit's solves, while f alone converges slowly), at
 * most maxSteps steps. Returns the last step.
 */
export function mixtureAtResiduals(residuals: ArrayLike<number>, variances: ArrayLike<number>, fraction: number, maxSteps = 50): MixtureStep {
  let step = mixtureStep(residuals, variances, fraction);
  for (let k = 1; k < maxSteps; k++) {
    const next = mixtureStep(residuals, variances, step.fraction);
    const settled = Math.abs(next.fraction - step.fraction) < 1e-7;
    step = next;
    if (settled) break;
  }
  return step;
}
