/**
 * Basic distance relations (all follow from the definition of the parsec and
 * of the magnitude scale; see the method notes).
 *   mu = 5 log10(d / 10 pc) = 5 log10 d_pc - 5 = 5 log10 d_Mpc + 25
 *   d_pc = 1000 / parallax_mas, so mu = 10 - 5 log10 parallax_mas
 */
import { FIVE_OVER_LN10 } from '../constants/index.ts';

export function distanceModulusFromPc(distancePc: number): number {
  return 5 * Math.log10(distancePc) - 5;
}

export function distancePcFromModulus(mu: number): number {
  return 10 ** (0.2 * mu + 1);
}

export function distanceMpcFromModulus(mu: number): number {
  return 10 ** (0.2 * (mu - 25));
}

export function distanceModulusFromMpc(distanceMpc: number): number {
  return 5 * Math.log10(distanceMpc) + 25;
}

/** Distance modulus of a (positive, zero-point corrected) parallax in mas. */
export function distanceModulusFromParallaxMas(parallaxMas: number): number {
  return 10 - 5 * Math.log10(parallaxMas);
}

/** Parallax in mas predicted by a distance modulus: 10^(-0.2 (mu - 10)). */
export function parallaxMasFromModulus(mu: number): number {
  return 10 ** (-0.2 * (mu - 10));
}

/** First-order error of mu from a parallax error: (5 / ln 10) sigma / parallax. */
export function modulusErrorFromParallax(parallaxMas: number, parallaxErrMas: number): number {
  return (FIVE_OVER_LN10 * parallaxErrMas) / parallaxMas;
}
