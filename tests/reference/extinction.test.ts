/**
 * Reference tests: CCM89 extinction law (src/ladder/extinction.ts).
 * Source of the law: Cardelli, Clayton & Mathis 1989, ApJ 345, 245 (eqs. 1-3).
 * Expected ratios: computed by hand from those equations when this test was
 * written and tabulated to 4 decimals, so the tolerance is
 * half a unit in the 4th decimal. astropy itself (Debian python3-astropy) has
 * no CCM89 law, so there is no astropy comparison here.
 */
import { describe, expect, it } from 'vitest';
import { ccm89Terms, extinctionRatio, wesenheitCoefficient } from '../../src/ladder/extinction.ts';
import { EXACT_DEFINITION, HALF_UNIT_4TH_DECIMAL, REL_1E12, absErr, relErr } from '../tolerances.ts';

const R_V = 3.1;

/** [band, effective wavelength in um, A_lambda / A_V at R_V = 3.1] computed from CCM89 eqs. 1-3 (see the header). */
const TABULATED: [string, number, number][] = [
  ['B', 0.44, 1.3245],
  ['V', 0.54945, 1.0],
  ['V', 0.55, 0.9989],
  ['R', 0.7, 0.7502],
  ['I', 0.8, 0.5975],
  ['I', 0.9, 0.4788],
  ['J', 1.25, 0.2821],
  ['H', 1.65, 0.1804],
  ['K', 2.2, 0.1135],
];

describe('reference: CCM89 A_lambda/A_V at R_V = 3.1 (Cardelli, Clayton & Mathis 1989; values computed from its eqs. 1-3)', () => {
  for (const [band, wavelengthUm, expected] of TABULATED) {
    it(`${band} at ${wavelengthUm} um: ${expected.toFixed(4)}`, () => {
      expect(absErr(extinctionRatio(wavelengthUm, R_V), expected)).toBeLessThanOrEqual(HALF_UNIT_4TH_DECIMAL);
    });
  }

  // CCM89 eq. 3: at y = x - 1.82 = 0 the optical polynomials give a = 1, b = 0 exactly.
  it('a = 1 and b = 0 exactly at x = 1.82 um^-1 (V, 0.54945 um), for every R_V', () => {
    const { a, b } = ccm89Terms(1.82);
    expect(absErr(a, 1)).toBe(EXACT_DEFINITION);
    expect(absErr(b, 0)).toBe(EXACT_DEFINITION);
    for (const rV of [2.1, 3.1, 5.0]) {
      expect(absErr(a + b / rV, 1)).toBe(EXACT_DEFINITION);
    }
  });

  // CCM89 eq. 2 (infrared): a = 0.574 x^1.61, b = -0.527 x^1.61, so b/a = -0.527/0.574 at every x.
  it('infrared branch: b / a = -0.527 / 0.574 (CCM89 eq. 2)', () => {
    for (const x of [0.3, 0.5, 0.8, 1.09]) {
      const { a, b } = ccm89Terms(x);
      expect(relErr(b / a, -0.527 / 0.574)).toBeLessThanOrEqual(REL_1E12);
    }
  });
});

describe('reference: Wesenheit coefficient R = A1 / (A2 - A3) from the tabulated ratios', () => {
  /** Bound on R from 4-decimal rounding of A1, A2, A3 (each off by at most h): (h + 2 h R) / (A2 - A3). */
  function roundingBound(r: number, colour: number): number {
    return (HALF_UNIT_4TH_DECIMAL * (1 + 2 * Math.abs(r))) / colour;
  }

  it('H with V - I (1.65; 0.54945, 0.80 um): 0.1804 / (1.0000 - 0.5975)', () => {
    const expected = 0.1804 / (1.0 - 0.5975);
    const r = wesenheitCoefficient(R_V, 1.65, 0.54945, 0.8);
    expect(absErr(r, expected)).toBeLessThanOrEqual(roundingBound(expected, 1.0 - 0.5975));
  });

  it('V with V - I (0.54945; 0.54945, 0.90 um): 1.0000 / (1.0000 - 0.4788)', () => {
    const expected = 1.0 / (1.0 - 0.4788);
    const r = wesenheitCoefficient(R_V, 0.54945, 0.54945, 0.9);
    expect(absErr(r, expected)).toBeLessThanOrEqual(roundingBound(expected, 1.0 - 0.4788));
  });

  it('K with J - K (2.20; 1.25, 2.20 um): 0.1135 / (0.2821 - 0.1135)', () => {
    const expected = 0.1135 / (0.2821 - 0.1135);
    const r = wesenheitCoefficient(R_V, 2.2, 1.25, 2.2);
    expect(absErr(r, expected)).toBeLessThanOrEqual(roundingBound(expected, 0.2821 - 0.1135));
  });
});

describe('edge cases: CCM89 range and arguments', () => {
  it('accepts both ends of the implemented range, x = 0.3 and x = 3.3 um^-1', () => {
    expect(Number.isFinite(ccm89Terms(0.3).a)).toBe(true);
    expect(Number.isFinite(ccm89Terms(3.3).a)).toBe(true);
  });

  it('refuses x outside [0.3, 3.3] um^-1 with a message naming the value and the range', () => {
    expect(() => ccm89Terms(0.29)).toThrow(/x = 0\.29 um\^-1.*outside the implemented range.*0\.3 <= x <= 3\.3/);
    expect(() => ccm89Terms(3.31)).toThrow(/outside the implemented range/);
    expect(() => ccm89Terms(Number.NaN)).toThrow(RangeError);
    // 0.25 um is ultraviolet (x = 4), 5 um is mid-infrared (x = 0.2): both refused, not extrapolated.
    expect(() => extinctionRatio(0.25, R_V)).toThrow(/ultraviolet branches are not implemented/);
    expect(() => extinctionRatio(5, R_V)).toThrow(/outside the implemented range/);
  });

  it('refuses a non-positive wavelength or R_V', () => {
    expect(() => extinctionRatio(0, R_V)).toThrow(/wavelength = 0 um/);
    expect(() => extinctionRatio(0.55, 0)).toThrow(/R_V = 0/);
    expect(() => extinctionRatio(0.55, -3.1)).toThrow(/R_V = -3\.1/);
  });

  it('refuses a Wesenheit colour from two bands of equal wavelength', () => {
    expect(() => wesenheitCoefficient(R_V, 1.65, 0.8, 0.8)).toThrow(/same extinction/);
  });
});
