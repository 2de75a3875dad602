/**
 * Interstellar extinction law of Cardelli, Clayton & Mathis (1989, ApJ 345, 245;
 * "CCM89"), infrared and optical/near-infrared branches, and the Wesenheit
 * coefficient built from it.
 *
 *   A_lambda / A_V = a(x) + b(x) / R_V,   x = 1 / lambda[um],   R_V = A_V / E(B-V)
 *
 * Only 0.3 <= x <= 3.3 um^-1 (lambda from 0.303 to 3.33 um) is implemented: the
 * paper's ultraviolet branches are not, and such wavelengths are refused rather
 * than extrapolated. Monochromatic: a band's effective wavelength only
 * approximates its extinction (which depends on the spectrum and on A_V).
 */

import { CEPHEID_BAND_WAVELENGTH_UM } from '../constants/index.ts';

/** Name recorded in reports for this law and coefficient set. */
export const EXTINCTION_LAW_NAME = 'CCM89 (Cardelli, Clayton & Mathis 1989, ApJ 345, 245), IR + optical/NIR branches';

/** Implemented range of inverse wavelength x, in um^-1 (CCM89 eqs. 2 and 3). */
export const CCM89_X_MIN_PER_UM = 0.3;
export const CCM89_X_MAX_PER_UM = 3.3;
/** Boundary between the infrared and the optical/NIR branch, um^-1. */
const CCM89_X_OPTICAL_PER_UM = 1.1;
/** Centre of the optical polynomial, um^-1 (y = x - 1.82; lambda = 0.54945 um, the V band). */
const CCM89_X_V_PER_UM = 1.82;

/**
 * Optical/NIR polynomial coefficients in y = x - 1.82, constant term first
 * (CCM89 eq. 3a and 3b).
 */
const OPTICAL_A = [1, 0.17699, -0.50447, -0.02427, 0.72085, 0.01979, -0.7753, 0.32999] as const;
const OPTICAL_B = [0, 1.41338, 2.28305, 1.07233, -5.38434, -0.62251, 5.3026, -2.09002] as const;

/** The two terms of the law at one inverse wavelength. */
export interface Ccm89Terms {
  a: number;
  b: number;
}

/** Horner evaluation of sum c_k y^k (coefficients constant term first). */
function polynomial(coefficients: readonly number[], y: number): number {
  let sum = 0;
  for (let k = coefficients.length - 1; k >= 0; k--) sum = sum * y + coefficients[k];
  return sum;
}

/**
 * a(x) and b(x) of CCM89 at inverse wavelength x (um^-1).
 *
 *   infrared, 0.3 <= x < 1.1 (eq. 2):  a = 0.574 x^1.61,  b = -0.527 x^1.61
 *   optical/NIR, 1.1 <= x <= 3.3 (eq. 3), y = x - 1.82:
 *     a = 1 + 0.17699y - 0.50447y^2 - 0.02427y^3 + 0.72085y^4 + 0.01979y^5 - 0.77530y^6 + 0.32999y^7
 *     b = 1.41338y + 2.28305y^2 + 1.07233y^3 - 5.38434y^4 - 0.62251y^5 + 5.30260y^6 - 2.09002y^7
 *
 * Source: Cardelli, Clayton & Mathis 1989, ApJ 345, 245, eqs. 2-3.
 * Cost: O(1). Throws a RangeError for x outside [0.3, 3.3] um^-1 or non-finite x.
 */
export function ccm89Terms(xPerUm: number): Ccm89Terms {
  if (!Number.isFinite(xPerUm) || xPerUm < CCM89_X_MIN_PER_UM || xPerUm > CCM89_X_MAX_PER_UM) {
    const lambda = Number.isFinite(xPerUm) && xPerUm > 0 ? ` (wavelength ${(1 / xPerUm).toPrecision(4)} um)` : '';
    throw new RangeError(
      `CCM89 extinction law: inverse wavelength x = ${xPerUm} um^-1${lambda} is outside the implemented range; ` +
        `expected ${CCM89_X_MIN_PER_UM} <= x <= ${CCM89_X_MAX_PER_UM} um^-1 ` +
        `(wavelength 0.303 to 3.33 um; the ultraviolet branches are not implemented)`,
    );
  }
  if (xPerUm < CCM89_X_OPTICAL_PER_UM) {
    const power = xPerUm ** 1.61;
    return { a: 0.574 * power, b: -0.527 * power };
  }
  const y = xPerUm - CCM89_X_V_PER_UM;
  return { a: polynomial(OPTICAL_A, y), b: polynomial(OPTICAL_B, y) };
}

function checkRV(rV: number): void {
  if (!Number.isFinite(rV) || rV <= 0) {
    throw new RangeError(`CCM89 extinction law: R_V = ${rV} is not valid; expected a finite number > 0 (typically 3.1)`);
  }
}

function checkWavelength(wavelengthUm: number, what: string): void {
  if (!Number.isFinite(wavelengthUm) || wavelengthUm <= 0) {
    throw new RangeError(`CCM89 extinction law: ${what} = ${wavelengthUm} um is not valid; expected a finite number > 0`);
  }
}

/**
 * Extinction ratio A_lambda / A_V at a wavelength (um) for a given R_V:
 * a(1/lambda) + b(1/lambda) / R_V.
 *
 * Source: Cardelli, Clayton & Mathis 1989, ApJ 345, 245, eq. 1. Cost: O(1).
 * Throws a RangeError outside 0.303-3.33 um or for R_V <= 0.
 */
export function extinctionRatio(wavelengthUm: number, rV: number): number {
  checkWavelength(wavelengthUm, 'wavelength');
  checkRV(rV);
  const { a, b } = ccm89Terms(1 / wavelengthUm);
  return a + b / rV;
}

/**
 * Wesenheit coefficient R of W = m1 - R (m2 - m3), the magnitude free of
 * extinction for a given law: R = A1 / (A2 - A3) = (A1/A_V) / (A2/A_V - A3/A_V),
 * each ratio from CCM89 at the band's effective wavelength (um).
 *
 * Source: the definition of the Wesenheit magnitude (Madore 1982, ApJ 253, 575;
 * from memory) with the CCM89 law. Cost: O(1).
 * Throws a RangeError if bands 2 and 3 have the same extinction (no colour excess).
 */
export function wesenheitCoefficient(rV: number, wavelength1Um: number, wavelength2Um: number, wavelength3Um: number): number {
  const a1 = extinctionRatio(wavelength1Um, rV);
  const a2 = extinctionRatio(wavelength2Um, rV);
  const a3 = extinctionRatio(wavelength3Um, rV);
  const colourExcess = a2 - a3;
  if (colourExcess === 0) {
    throw new RangeError(
      `Wesenheit coefficient: bands at ${wavelength2Um} um and ${wavelength3Um} um have the same extinction; ` +
        `expected two bands of different wavelength for the colour`,
    );
  }
  return a1 / colourExcess;
}

/**
 * The Wesenheit coefficient for another R_V, derived from the extinction law: the release's
 * coefficient `baseR` (stated for `baseRV`) times the law's ratio
 *   R(rV) = baseR * R_CCM89(rV) / R_CCM89(baseRV),
 * with R_CCM89 = A_H / (A_V - A_I) at the Cepheid bands' effective wavelengths
 * (src/constants). Why a ratio and not R_CCM89(rV) itself: a release's coefficient may come
 * from band-integrated extinction or another law at its R_V (0.386 at R_V = 3.1, while the
 * monochromatic CCM89 value is 0.448); what the law adds is how R changes with R_V, so a
 * variant that changes only R_V moves R by the law's relative change and leaves the
 * baseline exactly as the release states it. Cost: O(1).
 */
export function wesenheitCoefficientForRV(baseR: number, baseRV: number, rV: number): number {
  if (rV === baseRV) return baseR;
  const { V, I, H } = CEPHEID_BAND_WAVELENGTH_UM;
  return (baseR * wesenheitCoefficient(rV, H, V, I)) / wesenheitCoefficient(baseRV, H, V, I);
}
