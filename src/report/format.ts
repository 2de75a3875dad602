/**
 * Number formatting for the report: one policy, used by every table, caption
 * and text alternative so that the same value always reads the same way.
 *
 * Policy (common practice, no source): an uncertainty is quoted to two
 * significant digits and its value to the same decimal place. Negative numbers
 * use the Unicode minus sign (U+2212) in text meant for reading; the CSV and
 * ECSV downloads keep plain machine numbers.
 */

const MINUS = '\u2212';

/** Decimal places that show `err` with `sig` significant digits (never negative, at most 8). */
export function decimalsForError(err: number, sig = 2): number {
  if (!Number.isFinite(err) || err <= 0) return 3;
  const exponent = Math.floor(Math.log10(err));
  return Math.min(8, Math.max(0, sig - 1 - exponent));
}

/** Fixed-point text with a typographic minus; "−0.00" is written "0.00". */
export function fixed(x: number, decimals: number): string {
  if (!Number.isFinite(x)) return Number.isNaN(x) ? 'NaN' : x > 0 ? '∞' : `${MINUS}∞`;
  const s = x.toFixed(decimals);
  if (/^-0(?:\.0+)?$/.test(s)) return s.slice(1);
  return s.startsWith('-') ? MINUS + s.slice(1) : s;
}

/** Value and error rounded together: { value: "73.04", err: "0.98" }. */
export function valueErr(value: number, err: number): { value: string; err: string } {
  const d = decimalsForError(err);
  return { value: fixed(value, d), err: fixed(err, d) };
}

/** "73.04 ± 0.98" (with an optional unit after it). */
export function pm(value: number | null, err: number | null, unit = ''): string {
  if (value === null || !Number.isFinite(value)) return '—';
  if (err === null || !Number.isFinite(err)) return `${sig(value, 4)}${unit ? ` ${unit}` : ''}`;
  const f = valueErr(value, err);
  return `${f.value} ± ${f.err}${unit ? ` ${unit}` : ''}`;
}

/** A number with `digits` significant digits, in plain (not exponential) notation where reasonable. */
export function sig(x: number | null, digits = 3): string {
  if (x === null) return '—';
  if (!Number.isFinite(x)) return fixed(x, 0);
  if (x === 0) return '0';
  const exponent = Math.floor(Math.log10(Math.abs(x)));
  if (exponent >= 6 || exponent < -4) {
    const [m, e] = x.toExponential(digits - 1).split('e');
    const mant = m!.startsWith('-') ? MINUS + m!.slice(1) : m!;
    const ex = Number(e);
    return `${mant}×10${superscript(ex)}`;
  }
  const decimals = Math.max(0, digits - 1 - exponent);
  return fixed(x, decimals);
}

const SUPERSCRIPT_DIGITS = '⁰¹²³⁴⁵⁶⁷⁸⁹';
function superscript(n: number): string {
  const s = String(Math.abs(n))
    .split('')
    .map((c) => SUPERSCRIPT_DIGITS[Number(c)])
    .join('');
  return n < 0 ? `⁻${s}` : s;
}

/** Fixed decimals, or an em dash for null. */
export function num(x: number | null | undefined, decimals: number): string {
  return x === null || x === undefined ? '—' : fixed(x, decimals);
}

/** Integer with thin-space thousands separators: "12 345". */
export function int(n: number): string {
  const s = String(Math.round(Math.abs(n))).replace(/\B(?=(\d{3})+(?!\d))/g, '\u2009');
  return n < 0 ? MINUS + s : s;
}

/** A fraction (0..1) as a percentage with one decimal: "12.3 %". */
export function percent(fraction: number): string {
  return `${fixed(fraction * 100, 1)} %`;
}

/** Distance in the most readable unit: pc below 1 kpc, kpc below 1 Mpc, else Mpc. */
export function distanceText(mpc: number | null): string {
  if (mpc === null || !Number.isFinite(mpc)) return '—';
  if (mpc < 1e-3) return `${sig(mpc * 1e6, 3)} pc`;
  if (mpc < 1) return `${sig(mpc * 1e3, 3)} kpc`;
  return `${sig(mpc, 3)} Mpc`;
}

/** Tick labels on a log distance axis: 10 pc, 1 kpc, 10 Mpc (only at powers of ten). */
export function distanceTickText(mpc: number): string {
  const e = Math.round(Math.log10(mpc));
  if (Math.abs(Math.log10(mpc) - e) > 1e-9) return '';
  return distanceText(10 ** e).replace(/\.0+ /, ' ');
}

/** A JSON-ish rendering of an analysis value for tables: arrays as "[a, b]", null as "null (fitted)" etc. */
export function analysisValueText(v: unknown): string {
  if (v === null) return 'null';
  if (Array.isArray(v)) return `[${v.map((x) => analysisValueText(x)).join(', ')}]`;
  if (typeof v === 'number') return String(v).replace(/^-/, MINUS);
  if (typeof v === 'boolean') return v ? 'true' : 'false';
  return String(v);
}
