/**
 * Interfaces between the rungs and the global fit.
 *
 * The parallax zero point Z is carried as one parameter zeta = Z_true - Z0 of the
 * global fit (Z0 = analysis.parallax_zero_point), with prior N(0, parallax_zero_point_err^2).
 * Every geometric or main-sequence distance computed at Z0 then reads
 *     mu_prior_i = mu_i - K_i * zeta + eps_i,
 * with K_i = d mu_i / d Z (mag per mas) and eps the remaining errors. Marginalising zeta
 * gives exactly the rank-one correlated term sigma_Z^2 K K^T across anchors and targets.
 */

/** Covariance of eps split by independent source (they add up to Cov(eps)). */
export interface CovariancePart {
  source: 'anchors' | 'main_sequence';
  /** Square matrix in the order of DistancePriorBlock.systems. */
  cov: number[][];
}

export interface DistancePriorBlock {
  /** System ids: geometric anchors first, then main-sequence targets. */
  systems: string[];
  method: ('parallax' | 'main_sequence')[];
  /** Prior distance moduli computed with the release's zero point Z0. */
  mu: number[];
  /** K_i = d mu_i / d Z in mag per mas. */
  zpLoading: number[];
  /** Independent parts of Cov(eps) (zero point excluded). */
  parts: CovariancePart[];
}

/** A field star whose own parallax anchors a Cepheid; it enters the global fit in parallax space. */
export interface FieldStarAnchor {
  star: string;
  system: string;
  line: number;
  /** Measured parallax minus Z0 (mas); the model is parallax(mu_star) + zeta. */
  parallaxCorrMas: number;
  /** Parallax error with the floor added in quadrature (mas). */
  parallaxErrMas: number;
}
