/**
 * Supernova standardisation (Tripp 1998, A&A 331, 815):
 *   m_corr = m_B + alpha x1 - beta c
 * and the variance of m_corr from the light-curve fit's covariance, which depends on
 * alpha and beta. Keeping that dependence inside the fitted objective is what keeps
 * alpha and beta free of the bias that frozen weights give them (content/methods/supernovae.md, global-fit.md).
 */
import type { SupernovaLightCurve } from '../types/release.ts';

export function correctedMagnitude(sn: SupernovaLightCurve, alpha: number, beta: number): number {
  return sn.mB + alpha * sn.x1 - beta * sn.c;
}

/**
 * Measurement variance of m_corr:
 *   s_mB^2 + a^2 s_x1^2 + b^2 s_c^2 + 2a C(mB,x1) - 2b C(mB,c) - 2ab C(x1,c).
 */
export function correctedMagnitudeVariance(sn: SupernovaLightCurve, alpha: number, beta: number): number {
  return sn.mBErr ** 2 + alpha ** 2 * sn.x1Err ** 2 + beta ** 2 * sn.cErr ** 2 + 2 * alpha * sn.covMbX1 - 2 * beta * sn.covMbC - 2 * alpha * beta * sn.covX1C;
}

/** d variance / d alpha and d variance / d beta (for the sandwich covariance of alpha, beta). */
export function correctedMagnitudeVarianceGradient(sn: SupernovaLightCurve, alpha: number, beta: number): [number, number] {
  return [2 * alpha * sn.x1Err ** 2 + 2 * sn.covMbX1 - 2 * beta * sn.covX1C, 2 * beta * sn.cErr ** 2 - 2 * sn.covMbC - 2 * alpha * sn.covX1C];
}

/** Start values for alpha and beta when they are fitted (Betoule et al. 2014, A&A 568, A22; from memory). */
export const TYPICAL_ALPHA = 0.14;
export const TYPICAL_BETA = 3.1;
