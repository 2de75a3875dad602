// The blinding scheme: offset range, commitment, and an independent implementation.
// Kind: unit tests plus an external check (Python's hmac and hashlib modules, standard
// library, implementing RFC 2104 and FIPS 180-4) of the derivation written in blinding.json.
import { execFileSync } from 'node:child_process';
import { describe, expect, it } from 'vitest';
import { commitment, deriveOffsetUnits, deriveSalt, h0Factor, keyCheck, OFFSET_CANDIDATES, offsetMag, offsetText } from '../../src/blinding/scheme.ts';
import { OTHER_KEY, TEST_KEY } from './helpers.ts';

const key = Buffer.from(TEST_KEY);
const other = Buffer.from(OTHER_KEY);

describe('offset range', () => {
  const ids = Array.from({ length: 4000 }, (_, i) => `id-${i}`);
  const units = ids.map((id) => deriveOffsetUnits(key, id));

  it('every offset is a whole number of 0.0001 mag with |offset| <= 0.25 mag', () => {
    for (const u of units) {
      expect(Number.isInteger(u)).toBe(true);
      expect(Math.abs(u)).toBeLessThanOrEqual(2500);
    }
  });

  it('covers the whole range -0.25 ... +0.25 mag evenly, zero and small offsets included (4000 ids, binomial spreads)', () => {
    expect(OFFSET_CANDIDATES).toBe(5001);
    // 5001 equally likely values: P(u < 0) = 2500/5001; expected count 1999.6 with sigma = sqrt(4000/4) = 31.6.
    const negative = units.filter((u) => u < 0).length;
    expect(Math.abs(negative - 4000 * (2500 / 5001))).toBeLessThan(5 * 31.6);
    // Each tenth of the signed range (500.1 values of 5001) holds about 400 with sigma ~ 19.
    const bins = new Array(10).fill(0);
    for (const u of units) bins[Math.min(9, Math.floor(((u + 2500) / 5001) * 10))]++;
    for (const b of bins) expect(Math.abs(b - 400)).toBeLessThan(5 * 19);
    // The band the previous scheme excluded, |offset| < 0.05 mag (999 of 5001 values), now
    // holds its share: expected 4000 * 999 / 5001 = 799 with sigma = sqrt(799 * (1 - 0.2)) = 25.3.
    const small = units.filter((u) => Math.abs(u) < 500).length;
    expect(Math.abs(small - (4000 * 999) / 5001)).toBeLessThan(5 * 25.3);
  });

  it('zero is a possible offset: some blinding id of the test key gives exactly 0', () => {
    // P(no zero in n ids) = (5000/5001)^n: about 1e-9 for n = 100000 ids.
    let found = false;
    for (let i = 0; i < 100000 && !found; i++) found = deriveOffsetUnits(key, `zero-${i}`) === 0;
    expect(found).toBe(true);
  });

  it('H0 factor 10^(offset/5): 0.891-1.122, 1 included', () => {
    expect(h0Factor(2500)).toBeCloseTo(1.12202, 5);
    expect(h0Factor(-2500)).toBeCloseTo(0.891251, 6);
    expect(h0Factor(0)).toBe(1);
    expect(h0Factor(500)).toBeCloseTo(1.023293, 6);
  });

  it('the offset text has 4 decimals and reads back to the offset', () => {
    expect(offsetText(-1234)).toBe('-0.1234');
    expect(offsetText(567)).toBe('0.0567');
    expect(offsetText(2500)).toBe('0.2500');
    expect(offsetMag(-1764)).toBe(-0.1764);
  });
});

describe('commitment', () => {
  const id = 'season-x';
  const u = deriveOffsetUnits(key, id);
  const c = commitment(deriveSalt(key, id), u);

  it('is reproduced by the right key and id', () => {
    expect(commitment(deriveSalt(key, id), deriveOffsetUnits(key, id))).toBe(c);
  });

  it('does not verify with a wrong key, even when the offset is guessed right', () => {
    expect(keyCheck(other)).not.toBe(keyCheck(key));
    expect(commitment(deriveSalt(other, id), deriveOffsetUnits(other, id))).not.toBe(c);
    // Without the salt, trying all 5001 candidate offsets finds nothing.
    for (let v = -2500; v <= 2500; v++) {
      expect(commitment(deriveSalt(other, id), v) === c).toBe(false);
    }
  });

  it('changes with the blinding id (another id, another offset and salt)', () => {
    expect(commitment(deriveSalt(key, 'season-y'), deriveOffsetUnits(key, 'season-y'))).not.toBe(c);
  });
});

describe('the scheme as described in blinding.json, implemented again in Python (hmac, hashlib)', () => {
  it('gives the same offset, salt, commitment and key check for 20 ids', () => {
    const ids = Array.from({ length: 20 }, (_, i) => `check-${i}`);
    const py = `
import hmac, hashlib, json, sys
key = sys.argv[1].encode()
out = []
for bid in json.loads(sys.argv[2]):
    h = hmac.new(key, ("rungbook-blinding/offset/" + bid).encode(), hashlib.sha256).digest()
    u = int.from_bytes(h[:8], "big") % 5001 - 2500
    salt = hmac.new(key, ("rungbook-blinding/salt/" + bid).encode(), hashlib.sha256).digest()
    text = ("-" if u < 0 else "") + "%d.%04d" % (abs(u) // 10000, abs(u) % 10000)
    c = hashlib.sha256(salt + ("rungbook-blinding-offset:" + text).encode()).hexdigest()
    out.append([u, salt.hex(), c])
print(json.dumps({"rows": out, "check": hmac.new(key, b"rungbook-blinding/key-check", hashlib.sha256).hexdigest()}))
`;
    const got = JSON.parse(execFileSync('python3', ['-c', py, TEST_KEY, JSON.stringify(ids)], { encoding: 'utf8' })) as {
      rows: [number, string, string][];
      check: string;
    };
    expect(got.check).toBe(keyCheck(key));
    ids.forEach((id, i) => {
      const [u, salt, c] = got.rows[i]!;
      expect(deriveOffsetUnits(key, id)).toBe(u);
      expect(deriveSalt(key, id).toString('hex')).toBe(salt);
      expect(commitment(deriveSalt(key, id), u)).toBe(c);
    });
  });
});
