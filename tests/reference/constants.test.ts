/**
 * Reference tests: defined astronomical constants against their definitions.
 * Kind: comparisons to published definitions (source and tolerance beside each check).
 */
import { describe, expect, it } from 'vitest';
import { ARCSEC_PER_RADIAN, AU, C_KM_S, MPC_KM, PARSEC, SPEED_OF_LIGHT } from '../../src/constants/index.ts';
import { EXACT_DEFINITION, REL_1E15, REL_1E6, absErr, relErr } from '../tolerances.ts';

/** pi to 50 decimals (from memory; its first 16 digits agree with Math.PI, checked below). */
const PI_DIGITS = '3.14159265358979323846264338327950288419716939937510';
const PI_SCALE_DECIMALS = 50;
const PI_SCALED = BigInt(PI_DIGITS.replace('.', ''));

/** Decimal digits of numerator / pi to `decimals` places, computed in exact integer arithmetic. */
function digitsOfRatioToPi(numerator: bigint, decimals: number): string {
  const scaled = (numerator * 10n ** BigInt(PI_SCALE_DECIMALS + decimals)) / PI_SCALED;
  const text = scaled.toString();
  return `${text.slice(0, text.length - decimals)}.${text.slice(text.length - decimals)}`;
}

describe('reference: IAU definitions', () => {
  it('pi digits used below agree with Math.PI', () => {
    expect(relErr(Number(PI_DIGITS), Math.PI)).toBeLessThanOrEqual(EXACT_DEFINITION);
  });

  // IAU 2012 Resolution B2: the astronomical unit is 149 597 870 700 m exactly.
  it('au = 149 597 870 700 m exactly (IAU 2012 Resolution B2)', () => {
    expect(absErr(AU.value, 149_597_870_700)).toBe(EXACT_DEFINITION);
    expect(AU.unit).toBe('m');
    expect(AU.uncertainty).toBe(EXACT_DEFINITION);
  });

  // IAU 2015 Resolution B2: parsec = (648 000 / pi) au exactly; the metre value is
  // computed here from that definition in 50-digit integer arithmetic.
  it('parsec = 648000/pi au = 3.085 677 581 491 367e16 m (IAU 2015 Resolution B2, digits from the definition)', () => {
    const parsecMetres = digitsOfRatioToPi(648_000n * 149_597_870_700n, 6);
    expect(parsecMetres.startsWith('30856775814913672.')).toBe(true);
    expect(relErr(PARSEC.value, Number(parsecMetres))).toBeLessThanOrEqual(REL_1E15);
    // The digits quoted in the methods reference (section a) from the same definition.
    expect(relErr(PARSEC.value, 3.085677581491367e16)).toBeLessThanOrEqual(REL_1E15);
    expect(relErr(PARSEC.value / AU.value, 648_000 / Math.PI)).toBeLessThanOrEqual(REL_1E15);
    expect(PARSEC.uncertainty).toBe(EXACT_DEFINITION);
  });

  // Definition of the arcsecond: 1 rad = 180 * 3600 / pi arcsec = 648000/pi.
  it('arcsec per radian = 206 264.806 247 096 355... (definition of the arcsecond)', () => {
    const digits = digitsOfRatioToPi(648_000n, 12);
    expect(digits).toBe('206264.806247096355');
    expect(relErr(ARCSEC_PER_RADIAN.value, Number(digits))).toBeLessThanOrEqual(REL_1E15);
  });

  // Common practice, no source: 206 265 as the rounded number of arcsec per radian.
  it('arcsec per radian rounds to the customary 206 265 (common practice, no source)', () => {
    expect(Math.round(ARCSEC_PER_RADIAN.value)).toBe(206_265);
    // ... and is good to about 1 part per million (9.4e-7).
    expect(relErr(206_265, ARCSEC_PER_RADIAN.value)).toBeLessThan(REL_1E6);
  });

  // SI definition of the metre (from memory): c = 299 792 458 m/s exactly.
  it('speed of light 299 792 458 m/s exactly, 299 792.458 km/s (SI definition of the metre, from memory)', () => {
    expect(absErr(SPEED_OF_LIGHT.value, 299_792_458)).toBe(EXACT_DEFINITION);
    expect(relErr(C_KM_S, 299_792.458)).toBeLessThanOrEqual(REL_1E15);
  });

  // 1 Mpc = 1e6 pc = 3.085 677 581 491 367e19 km (follows from IAU 2015 Resolution B2).
  it('Mpc = 3.085 677 581 491 367e19 km (from the IAU 2015 parsec)', () => {
    const megaparsecKm = digitsOfRatioToPi(648_000n * 149_597_870_700n * 1_000n, 3);
    expect(relErr(MPC_KM, Number(megaparsecKm))).toBeLessThanOrEqual(REL_1E15);
    expect(relErr(MPC_KM, 3.085677581491367e19)).toBeLessThanOrEqual(REL_1E15);
  });
});
