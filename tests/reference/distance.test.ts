/**
 * Reference tests: distance modulus and parallax relations (src/ladder/distance.ts).
 * Kind: comparisons to the defining relations of the trade, worked by hand:
 *   mu = 5 log10 d_pc - 5 = 5 log10 d_Mpc + 25, d_pc = 1000 / parallax_mas,
 *   mu = 10 - 5 log10 parallax_mas
 * (definition of the distance modulus and of the parsec; common practice, no source).
 */
import { describe, expect, it } from 'vitest';
import {
  distanceModulusFromMpc,
  distanceModulusFromParallaxMas,
  distanceModulusFromPc,
  distanceMpcFromModulus,
  distancePcFromModulus,
  modulusErrorFromParallax,
  parallaxMasFromModulus,
} from '../../src/ladder/distance.ts';
import { HALF_UNIT_4TH_DECIMAL, MAG_1E9, REL_1E12, absErr, relErr } from '../tolerances.ts';

describe('reference: distance modulus (definition, common practice, no source)', () => {
  it('10 pc has distance modulus 0', () => {
    expect(absErr(distanceModulusFromPc(10), 0)).toBeLessThanOrEqual(MAG_1E9);
  });

  it('1 Mpc has distance modulus 25, from pc and from Mpc', () => {
    expect(absErr(distanceModulusFromPc(1e6), 25)).toBeLessThanOrEqual(MAG_1E9);
    expect(absErr(distanceModulusFromMpc(1), 25)).toBeLessThanOrEqual(MAG_1E9);
  });

  it('a factor 10 in distance is 5 mag (inverse-square law: m2 - m1 = 5 log10(d2/d1))', () => {
    expect(absErr(distanceModulusFromPc(1000) - distanceModulusFromPc(100), 5)).toBeLessThanOrEqual(MAG_1E9);
    expect(absErr(distanceModulusFromMpc(20) - distanceModulusFromMpc(2), 5)).toBeLessThanOrEqual(MAG_1E9);
  });

  it('pc and Mpc forms agree: 5 log10 d_pc - 5 = 5 log10 d_Mpc + 25', () => {
    for (const dMpc of [0.05, 1, 7.3, 42, 640]) {
      expect(absErr(distanceModulusFromPc(dMpc * 1e6), distanceModulusFromMpc(dMpc))).toBeLessThanOrEqual(MAG_1E9);
    }
  });

  it('inverse functions return the distance', () => {
    expect(relErr(distancePcFromModulus(0), 10)).toBeLessThanOrEqual(REL_1E12);
    expect(relErr(distancePcFromModulus(5), 100)).toBeLessThanOrEqual(REL_1E12);
    expect(relErr(distanceMpcFromModulus(25), 1)).toBeLessThanOrEqual(REL_1E12);
    expect(relErr(distanceMpcFromModulus(30), 10)).toBeLessThanOrEqual(REL_1E12);
  });
});

describe('reference: parallax (d_pc = 1000 / parallax_mas; common practice, no source)', () => {
  it('100 mas is 10 pc, mu = 0; 1 mas is 1 kpc, mu = 10; 0.1 mas is 10 kpc, mu = 15', () => {
    expect(absErr(distanceModulusFromParallaxMas(100), 0)).toBeLessThanOrEqual(MAG_1E9);
    expect(absErr(distanceModulusFromParallaxMas(1), 10)).toBeLessThanOrEqual(MAG_1E9);
    expect(absErr(distanceModulusFromParallaxMas(0.1), 15)).toBeLessThanOrEqual(MAG_1E9);
  });

  it('mu = 10 - 5 log10 parallax_mas equals 5 log10(1000 / parallax_mas) - 5', () => {
    for (const parallaxMas of [0.37, 2.5, 7.9, 21.4, 130]) {
      const viaDistance = distanceModulusFromPc(1000 / parallaxMas);
      expect(absErr(distanceModulusFromParallaxMas(parallaxMas), viaDistance)).toBeLessThanOrEqual(MAG_1E9);
      expect(relErr(parallaxMasFromModulus(viaDistance), parallaxMas)).toBeLessThanOrEqual(REL_1E12);
    }
  });

  it('a 10 % parallax error is (5 / ln 10) * 0.1 = 0.2171 mag to first order', () => {
    // 5 / ln 10 = 2.171472... (ln 10 = 2.302585...), worked by hand: 0.2171 to 4 decimals.
    expect(absErr(modulusErrorFromParallax(4, 0.4), 0.2171)).toBeLessThanOrEqual(HALF_UNIT_4TH_DECIMAL);
  });
});
