/**
 * Physical and astronomical constants, each once, with its unit and source.
 * Derived constants are computed from their definitions, never retyped.
 */
export interface Constant {
  value: number;
  unit: string;
  /** Standard uncertainty; 0 for exact (defined) values. */
  uncertainty: number;
  reference: string;
}

function defined(value: number, unit: string, reference: string): Constant {
  return Object.freeze({ value, unit, uncertainty: 0, reference });
}

/** Astronomical unit, exact by definition (IAU 2012 Resolution B2). */
export const AU: Constant = defined(149_597_870_700, 'm', 'IAU 2012 Resolution B2');

/** Arcseconds per radian, 648000/pi (follows from the definition of the arcsecond). */
export const ARCSEC_PER_RADIAN: Constant = defined(648_000 / Math.PI, 'arcsec/rad', 'definition of the arcsecond');

/** Parsec = (648000/pi) au exactly (IAU 2015 Resolution B2). */
export const PARSEC: Constant = defined(ARCSEC_PER_RADIAN.value * AU.value, 'm', 'IAU 2015 Resolution B2');

/** Speed of light in vacuum, exact (SI definition of the metre). */
export const SPEED_OF_LIGHT: Constant = defined(299_792_458, 'm/s', 'SI definition of the metre (1983)');

/** Speed of light in km/s, the unit used with H0 in km/s/Mpc. */
export const C_KM_S = SPEED_OF_LIGHT.value / 1000;

/** Megaparsec in km. */
export const MPC_KM = (PARSEC.value * 1e6) / 1000;

/** 5 / ln 10: d(mu) per unit fractional distance change (follows from mu = 5 log10 d - 5). */
export const FIVE_OVER_LN10 = 5 / Math.LN10;

/** Magnitude offset of an unresolved equal-mass binary: 2.5 log10 2 (follows from flux addition). */
export const EQUAL_MASS_BINARY_OFFSET_MAG = 2.5 * Math.log10(2);

/**
 * Effective wavelengths of the Cepheid bands (V, I and H of W = m_H - R (m_V - m_I)), um,
 * rounded: Johnson V 0.55, Cousins I 0.80, H 1.65 (Bessell 2005, ARA&A 43, 293, table 1;
 * from memory). Used only to carry a change of R_V to the Wesenheit coefficient through the
 * extinction law (src/ladder/extinction.ts): the ratio of two coefficients, so the rounding
 * of a band's wavelength moves little.
 */
export const CEPHEID_BAND_WAVELENGTH_UM = Object.freeze({ V: 0.55, I: 0.8, H: 1.65 });
