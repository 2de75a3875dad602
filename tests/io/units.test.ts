import { describe, expect, test } from 'vitest';
import { checkUnit, describeAccepted, JULIAN_YEAR_DAYS, type ContractUnit } from '../../src/io/units.ts';
import { EXACT_DEFINITION, REL_1E15, relErr } from '../tolerances.ts';
import { astropy } from './astropy-tables.ts';

function convert(target: ContractUnit | null, given: string | undefined, x: number): number {
  const u = checkUnit(target, given);
  if (!u.ok) throw new Error(`refused: ${u.expected} / ${u.found}`);
  return u.convert(x);
}

describe('unit conversion: edge cases', () => {
  test('no unit, an empty unit or the contract unit itself leaves the value untouched', () => {
    for (const given of [undefined, '', '  ', 'mas']) {
      const u = checkUnit('mas', given);
      expect(u.ok && u.identity).toBe(true);
      expect(convert('mas', given, 0.1 + 0.2)).toBe(0.1 + 0.2);
    }
  });

  test('dimensionless columns (x1, z) take no unit or an empty one and refuse any other', () => {
    expect(convert('', undefined, 0.03)).toBe(0.03);
    expect(convert('', '', 0.03)).toBe(0.03);
    const r = checkUnit('', 'mag');
    expect(r.ok).toBe(false);
    if (!r.ok) {
      expect(r.expected).toBe('no unit (a dimensionless column)');
      expect(r.found).toBe('"mag"');
    }
  });

  test('text columns refuse a unit', () => {
    const r = checkUnit(null, 'deg');
    expect(r.ok).toBe(false);
  });

  test('magnitudes only as mag, metallicities only as dex, covariance of m_b and c as mag^2 spellings', () => {
    for (const [target, bad] of [
      ['mag', 'mmag'],
      ['mag', 'Jy'],
      ['mag', 'mag2'],
      ['dex', 'mag'],
      ['dex', '[Fe/H]'],
      ['mag2', 'mag'],
    ] as [ContractUnit, string][]) {
      const r = checkUnit(target, bad);
      expect(r.ok, `${bad} -> ${target}`).toBe(false);
      if (!r.ok) expect(r.found).toBe(JSON.stringify(bad));
    }
    for (const spelling of ['mag2', 'mag^2', 'mag**2']) expect(convert('mag2', spelling, 1e-4)).toBe(1e-4);
  });

  test('angles are not times, ages are not angles, names are case-sensitive', () => {
    for (const [target, bad] of [
      ['mas', 'd'],
      ['mas', 'pc'],
      ['mas', 'MAS'],
      ['mas', 'µas'],
      ['d', 'deg'],
      ['d', 's'],
      ['d', 'Gyr'],
      ['Gyr', 'd'],
      ['Gyr', 'gyr'],
      ['deg', 'hourangle'],
    ] as [ContractUnit, string][]) {
      expect(checkUnit(target, bad).ok, `${bad} -> ${target}`).toBe(false);
    }
  });

  test('the expected text lists the contract unit first, then the accepted ones', () => {
    expect(describeAccepted('mas')).toBe('mas (or uas, arcsec, deg, rad)');
    expect(describeAccepted('d')).toBe('d (or day, h, yr)');
    expect(describeAccepted('Gyr')).toBe('Gyr (or Myr, yr)');
    expect(describeAccepted('mag')).toBe('mag');
  });
});

describe('unit conversion: definitions', () => {
  // Factors from the definitions: 1 arcsec = 1000 mas, 1 deg = 3600 arcsec, 1 d = 24 h,
  // Julian year = 365.25 d (IAU), 1 Gyr = 1000 Myr = 1e9 yr. The decimal results below are
  // exact in the sense that the double nearest to the true quotient is the literal.
  test.each([
    ['mas', 'uas', 1234, 1.234],
    ['mas', 'arcsec', 0.0215, 21.5],
    ['mas', 'deg', 0.25, 900_000],
    ['deg', 'arcsec', 36, 0.01],
    ['deg', 'mas', 3_600_000, 1],
    ['d', 'h', 36, 1.5],
    ['d', 'day', 9.8, 9.8],
    ['d', 'yr', 0.5, 182.625],
    ['Gyr', 'Myr', 600, 0.6],
    ['Gyr', 'yr', 1.2e9, 1.2],
  ] as [ContractUnit, string, number, number][])('%s <- %s: %s gives %s', (target, given, x, want) => {
    expect(relErr(convert(target, given, x), want)).toBeLessThanOrEqual(EXACT_DEFINITION);
  });

  test('yr is the Julian year of 365.25 days', () => {
    expect(JULIAN_YEAR_DAYS).toBe(365.25);
  });
});

describe('unit conversion: compared with astropy.units (Debian python3-astropy)', () => {
  test('every accepted angle, time and age unit matches astropy to a few ulp', () => {
    const cases: [ContractUnit, string, number][] = [
      ['mas', 'uas', 987.5],
      ['mas', 'arcsec', 0.0123],
      ['mas', 'deg', 2.5e-6],
      ['mas', 'rad', 1e-8],
      ['deg', 'mas', 123456.0],
      ['deg', 'rad', 0.75],
      ['deg', 'uas', 5e9],
      ['d', 'h', 77],
      ['d', 'yr', 0.0421],
      ['Gyr', 'Myr', 321],
      ['Gyr', 'yr', 4.5e8],
    ];
    const ref = astropy<{ values: number[] }>({ op: 'units', items: cases.map(([to, from, x]) => [x, from, to]) });
    cases.forEach(([to, from, x], i) => {
      // REL_1E15: astropy multiplies by float factors (e.g. 1 deg -> 3599999.9999999995 mas); ours are exact fractions.
      expect(relErr(convert(to, from, x), ref.values[i]), `${x} ${from} -> ${to}`).toBeLessThanOrEqual(REL_1E15);
    });
  });
});
