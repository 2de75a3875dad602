/**
 * The blinding scheme: how one secret key and a public blinding id give the hidden
 * magnitude offset, the salt and the commitment. Pure functions of their inputs.
 *
 *   h      = HMAC-SHA256(key, "rungbook-blinding/offset/" + blinding_id)
 *   n      = first 8 bytes of h, big-endian, as an unsigned integer
 *   units  = (n mod 5001) - 2500                          (1 unit = 0.0001 mag)
 *   offset = units * 0.0001 mag, uniform on -0.25 ... +0.25 mag in steps of 0.0001, zero included
 *
 *   salt       = HMAC-SHA256(key, "rungbook-blinding/salt/" + blinding_id)       (32 bytes)
 *   commitment = SHA-256(salt || "rungbook-blinding-offset:" + offset written with 4 decimals)
 *   key_check  = HMAC-SHA256(key, "rungbook-blinding/key-check")
 *
 * H0 is multiplied by 10^(offset/5), between 0.891 and 1.122. Every offset of the range is
 * equally likely, zero and the small ones included: an earlier scheme excluded |offset| <
 * 0.05 mag so that the blinded value was never the true one, and that exclusion itself told
 * the analyst that the truth was not within 2.3 % of the blinded H0. Now the blinded value
 * says nothing about where in the range the truth lies; that it may sit near the truth is
 * harmless, since nobody can know it does. The range is wide compared with the few-per-cent
 * precision a release reaches.
 *
 * HMAC (RFC 2104) with SHA-256 (FIPS 180-4) is used as a keyed pseudo-random function:
 * without the key, the offset and the salt are unpredictable, and the commitment cannot be
 * checked against the 5001 candidate offsets. The same key and blinding id always give
 * the same offset, so releases blinded alike carry the same hidden factor. The modulo
 * bias of 2^64 mod 5001 over 2^64 (below 1e-15) is negligible. Cost: three HMACs.
 */
import { createHash, createHmac } from 'node:crypto';
import { formatDecimal, type Decimal } from './decimal.ts';

/** Decimals of the offset: it is a whole number of 0.0001 mag, so shifts are exact in the 4th decimal. */
export const OFFSET_DECIMALS = 4;
export const OFFSET_STEP_MAG = 1e-4;
/** Smallest and largest |offset| in steps of 0.0001 mag (0 and 0.25 mag): zero is a possible offset. */
export const OFFSET_MIN_ABS_UNITS = 0;
export const OFFSET_MAX_ABS_UNITS = 2500;
/** Candidates -2500 ... +2500, equally likely. */
export const OFFSET_CANDIDATES = 2 * OFFSET_MAX_ABS_UNITS + 1;

/** A key shorter than this is refused: it could be guessed by trying keys against key_check. */
export const MIN_KEY_BYTES = 16;

const OFFSET_LABEL = 'rungbook-blinding/offset/';
const SALT_LABEL = 'rungbook-blinding/salt/';
const KEY_CHECK_LABEL = 'rungbook-blinding/key-check';
const COMMITMENT_PREFIX = 'rungbook-blinding-offset:';

/** Public text that describes the scheme, written into blinding.json. */
export const SCHEME_DESCRIPTION =
  'offset = u * 0.0001 mag with u from HMAC-SHA256(key, "rungbook-blinding/offset/" + blinding_id) ' +
  '(first 8 bytes, big-endian, mod 5001, minus 2500: uniform on -2500..2500, zero included); ' +
  'm_b of every Hubble-flow supernova is written as m_b - offset, so H0 is multiplied by 10^(offset/5); ' +
  'salt = HMAC-SHA256(key, "rungbook-blinding/salt/" + blinding_id); ' +
  'commitment = SHA-256(salt || "rungbook-blinding-offset:" + offset with 4 decimals); ' +
  'key_check = HMAC-SHA256(key, "rungbook-blinding/key-check"); all hashes in lower-case hex.';

/** Allowed blinding ids: short, printable, safe in file names and messages. */
export const BLINDING_ID_PATTERN = /^[A-Za-z0-9][A-Za-z0-9._-]{0,63}$/;

function hmac(key: Uint8Array, message: string): Buffer {
  return createHmac('sha256', key).update(message, 'utf8').digest();
}

/** The hidden offset, in units of 0.0001 mag. */
export function deriveOffsetUnits(key: Uint8Array, blindingId: string): number {
  const h = hmac(key, OFFSET_LABEL + blindingId);
  return Number(h.readBigUInt64BE(0) % BigInt(OFFSET_CANDIDATES)) - OFFSET_MAX_ABS_UNITS;
}

export function deriveSalt(key: Uint8Array, blindingId: string): Buffer {
  return hmac(key, SALT_LABEL + blindingId);
}

export function keyCheck(key: Uint8Array): string {
  return hmac(key, KEY_CHECK_LABEL).toString('hex');
}

/** The offset as the commitment hashes it: 4 decimals, "-" for negative ("-0.1234", "0.0567"). */
export function offsetText(units: number): string {
  return formatDecimal(offsetDecimal(units));
}

export function offsetDecimal(units: number): Decimal {
  if (!Number.isSafeInteger(units)) throw new RangeError(`offset units must be an integer, found ${units}`);
  return { units: BigInt(units), scale: OFFSET_DECIMALS };
}

export function offsetMag(units: number): number {
  return Number(offsetText(units));
}

/** Units of 0.0001 mag of an offset in mag, or null when it is not a whole number of units. */
export function unitsOfOffsetMag(mag: number): number | null {
  if (!Number.isFinite(mag)) return null;
  const units = Math.round(mag * 10 ** OFFSET_DECIMALS);
  return offsetMag(units) === mag ? units : null;
}

export function commitment(salt: Uint8Array, units: number): string {
  return createHash('sha256')
    .update(salt)
    .update(COMMITMENT_PREFIX + offsetText(units), 'utf8')
    .digest('hex');
}

/** Whether an offset lies in the scheme's range (a record claiming another offset is not ours). */
export function offsetInRange(units: number): boolean {
  const a = Math.abs(units);
  return Number.isSafeInteger(units) && a >= OFFSET_MIN_ABS_UNITS && a <= OFFSET_MAX_ABS_UNITS;
}

/** The factor H0 is multiplied by when the Hubble-flow magnitudes carry `units` (m_b -> m_b - offset). */
export function h0Factor(units: number): number {
  return 10 ** (offsetMag(units) / 5);
}

/**
 * The first scheme (before zero was a possible offset): k = n mod 4002, units = -2500 + k for
 * k < 2001, else 500 + (k - 2001), so 0.05 <= |offset| <= 0.25 mag. Never used to blind any
 * more; kept so that a release blinded with it can still be unblinded and read.
 */
export const LEGACY_V1 = Object.freeze({
  description:
    'offset = u * 0.0001 mag with u from HMAC-SHA256(key, "rungbook-blinding/offset/" + blinding_id) ' +
    '(first 8 bytes, big-endian, mod 4002 mapped to -2500..-500 and 500..2500); ' +
    'm_b of every Hubble-flow supernova is written as m_b - offset, so H0 is multiplied by 10^(offset/5); ' +
    'salt = HMAC-SHA256(key, "rungbook-blinding/salt/" + blinding_id); ' +
    'commitment = SHA-256(salt || "rungbook-blinding-offset:" + offset with 4 decimals); ' +
    'key_check = HMAC-SHA256(key, "rungbook-blinding/key-check"); all hashes in lower-case hex.',
  offsetMinAbsUnits: 500,
});

/** The hidden offset of the first scheme, in units of 0.0001 mag (LEGACY_V1). */
export function deriveOffsetUnitsV1(key: Uint8Array, blindingId: string): number {
  const h = hmac(key, OFFSET_LABEL + blindingId);
  const side = OFFSET_MAX_ABS_UNITS - LEGACY_V1.offsetMinAbsUnits + 1;
  const k = Number(h.readBigUInt64BE(0) % BigInt(2 * side));
  return k < side ? -OFFSET_MAX_ABS_UNITS + k : LEGACY_V1.offsetMinAbsUnits + (k - side);
}
