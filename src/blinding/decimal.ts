/**
 * Exact decimal arithmetic on number texts, so that blinding and unblinding never
 * round: a magnitude written "16.094" is shifted as the integer 160940 (in units of
 * 1e-4 mag) and written back as a decimal text. Adding the offset back and reading
 * the text gives the same double as reading the original text, because both texts
 * name the same rational number and reading picks the double nearest to it.
 */

/** A decimal number: value = units * 10^-scale, scale >= 0. */
export interface Decimal {
  units: bigint;
  scale: number;
}

const DECIMAL_TEXT = /^([+-]?)(\d*)(?:\.(\d*))?(?:[eE]([+-]?\d+))?$/;

/** Parse a plain or exponent decimal text ("16.094", "-0.5", "1.6094e1"); null if it is not one. */
export function parseDecimal(text: string): Decimal | null {
  const m = DECIMAL_TEXT.exec(text.trim());
  if (!m) return null;
  const [, sign, int = '', frac = '', exp] = m;
  if (int.length + frac.length === 0) return null;
  let units = BigInt(int + frac || '0');
  if (sign === '-') units = -units;
  let scale = frac.length - (exp === undefined ? 0 : Number(exp));
  if (!Number.isSafeInteger(scale) || Math.abs(scale) > 400) return null;
  if (scale < 0) {
    units *= 10n ** BigInt(-scale);
    scale = 0;
  }
  return { units, scale };
}

/** The same number with `scale` decimals (scale must not be smaller than d.scale). */
export function rescale(d: Decimal, scale: number): Decimal {
  if (scale < d.scale) throw new RangeError(`cannot rescale ${d.scale} decimals to ${scale} without rounding`);
  return { units: d.units * 10n ** BigInt(scale - d.scale), scale };
}

/** Drop trailing zero decimals: one canonical form per rational number. */
export function normalise(d: Decimal): Decimal {
  let { units, scale } = d;
  while (scale > 0 && units % 10n === 0n) {
    units /= 10n;
    scale--;
  }
  return { units, scale };
}

export function sameDecimal(a: Decimal, b: Decimal): boolean {
  const x = normalise(a);
  const y = normalise(b);
  return x.units === y.units && x.scale === y.scale;
}

/** Plain decimal text with exactly d.scale decimals ("-0.1234", "16.0920"). */
export function formatDecimal(d: Decimal): string {
  const negative = d.units < 0n;
  const digits = (negative ? -d.units : d.units).toString().padStart(d.scale + 1, '0');
  const int = digits.slice(0, digits.length - d.scale);
  const frac = digits.slice(digits.length - d.scale);
  return `${negative ? '-' : ''}${int}${d.scale > 0 ? '.' + frac : ''}`;
}

/**
 * a + b exactly, written with max(a.scale, b.scale) decimals.
 */
export function addDecimal(a: Decimal, b: Decimal): Decimal {
  const scale = Math.max(a.scale, b.scale);
  return { units: rescale(a, scale).units + rescale(b, scale).units, scale };
}

/**
 * The exact decimal a double was read from, when the double came from a text of at most
 * 15 significant digits: JavaScript writes the shortest text that reads back to the same
 * double, and for such texts that is the original number.
 */
export function decimalOfDouble(x: number): Decimal {
  if (!Number.isFinite(x)) throw new RangeError(`not a finite number: ${x}`);
  const d = parseDecimal(String(x));
  if (!d) throw new RangeError(`cannot write ${x} as a decimal`);
  return d;
}

/** True when reading `text` and writing the double back gives the same number (no digits lost). */
export function survivesDouble(d: Decimal): boolean {
  return sameDecimal(decimalOfDouble(Number(formatDecimal(d))), d);
}
