/**
 * Unit conversion at the door: every value a reader hands on is in the
 * contract's unit for its column (mas, deg, d, Gyr, mag, mag^2, dex or none).
 * A unit given in a file header is converted with an exact factor or refused;
 * nothing is guessed. Unit names are matched exactly (case-sensitive), as in
 * the IVOA and astropy unit grammars (`Mas` or `MAS` is not a unit).
 */
import { ARCSEC_PER_RADIAN } from '../constants/index.ts';
import type { ContractUnit } from '../registry/tables.ts';

export type { ContractUnit };

/** value in the family's base unit = x * mul / div (kept as a fraction so exact factors stay exact). */
interface Factor {
  mul: number;
  div: number;
}

/**
 * Julian year in days: 365.25 d of 86400 s, the year of astronomy
 * (the IAU's definition of the Julian year, IAU Style Manual, Wilkins 1989; from memory).
 * `yr` in an input file is read as this year, never as a Gregorian or tropical one.
 */
export const JULIAN_YEAR_DAYS = 365.25;

/** Angles, base unit mas. 1 deg = 3600 arcsec, 1 arcsec = 1000 mas (definitions). */
const ANGLE: Record<string, Factor> = {
  uas: { mul: 1, div: 1000 },
  mas: { mul: 1, div: 1 },
  arcsec: { mul: 1000, div: 1 },
  deg: { mul: 3_600_000, div: 1 },
  rad: { mul: ARCSEC_PER_RADIAN.value * 1000, div: 1 },
};

/** Time, base unit day (86400 s). */
const TIME: Record<string, Factor> = {
  d: { mul: 1, div: 1 },
  day: { mul: 1, div: 1 },
  h: { mul: 1, div: 24 },
  yr: { mul: JULIAN_YEAR_DAYS, div: 1 },
};

/** Ages, base unit Gyr; `yr` is the Julian year as above. */
const AGE: Record<string, Factor> = {
  Gyr: { mul: 1, div: 1 },
  Myr: { mul: 1, div: 1000 },
  yr: { mul: 1, div: 1e9 },
};

const ONE: Factor = { mul: 1, div: 1 };
const MAGNITUDE: Record<string, Factor> = { mag: ONE };
/** Spellings of mag^2 used by astropy (`mag2`), plain text (`mag^2`) and VOUnit (`mag**2`). */
const MAGNITUDE_SQUARED: Record<string, Factor> = { mag2: ONE, 'mag^2': ONE, 'mag**2': ONE };
const METALLICITY: Record<string, Factor> = { dex: ONE };

const FAMILY: Record<Exclude<ContractUnit, ''>, Record<string, Factor>> = {
  mas: ANGLE,
  deg: ANGLE,
  d: TIME,
  Gyr: AGE,
  mag: MAGNITUDE,
  mag2: MAGNITUDE_SQUARED,
  dex: METALLICITY,
};

export type UnitCheck = { ok: true; convert: (x: number) => number; identity: boolean } | { ok: false; expected: string; found: string };

const IDENTITY = (x: number): number => x;

function gcd(a: number, b: number): number {
  while (b) [a, b] = [b, a % b];
  return a;
}

/**
 * How to bring a value given in unit `given` to the contract unit `target`.
 * `given` undefined or empty (no unit declared) means the value is already in
 * the contract unit. `target` null is a text column, which takes no unit.
 * The factor is reduced as a fraction first, so arcsec -> deg divides by 3600
 * once rather than multiplying by 1000 and dividing by 3.6e6.
 */
export function checkUnit(target: ContractUnit | null, given: string | undefined): UnitCheck {
  const found = given?.trim() ?? '';
  if (found === '') return { ok: true, convert: IDENTITY, identity: true };
  if (target === null) return { ok: false, expected: 'no unit (a text column)', found: JSON.stringify(found) };
  if (target === '') return { ok: false, expected: 'no unit (a dimensionless column)', found: JSON.stringify(found) };
  const family = FAMILY[target];
  const from = family[found];
  if (from === undefined) return { ok: false, expected: describeAccepted(target), found: JSON.stringify(found) };
  if (found === target) return { ok: true, convert: IDENTITY, identity: true };
  const to = family[target];
  let mul = from.mul * to.div;
  let div = from.div * to.mul;
  if (Number.isSafeInteger(mul) && Number.isSafeInteger(div)) {
    const g = gcd(mul, div);
    mul /= g;
    div /= g;
  }
  if (mul === 1 && div === 1) return { ok: true, convert: IDENTITY, identity: true };
  if (div === 1) return { ok: true, convert: (x) => x * mul, identity: false };
  if (mul === 1) return { ok: true, convert: (x) => x / div, identity: false };
  return { ok: true, convert: (x) => (x * mul) / div, identity: false };
}

/** "mas (or uas, arcsec, deg, rad)": the contract unit first, then what converts to it. */
export function describeAccepted(target: ContractUnit): string {
  if (target === '') return 'no unit';
  const others = Object.keys(FAMILY[target]).filter((u) => u !== target);
  return others.length ? `${target} (or ${others.join(', ')})` : target;
}
