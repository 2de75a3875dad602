// Exactness of blinding and unblinding on number texts: shifting as decimals and adding
// the offset back to the double read from the blinded text gives the very double the
// original text reads as. Kind: exhaustive sweep over written precisions.
import { describe, expect, it } from 'vitest';
import { restoreHubbleFlowMagnitudes } from '../../src/blinding/apply.ts';
import { addDecimal, formatDecimal, parseDecimal, rescale } from '../../src/blinding/decimal.ts';
import { offsetDecimal } from '../../src/blinding/scheme.ts';
import type { SnHubbleFlowRow } from '../../src/types/release.ts';

/** Blinded text of an original text, as blindFiles.ts writes it. */
function blindText(text: string, units: number): string {
  const d = parseDecimal(text)!;
  return formatDecimal(rescale(addDecimal(d, offsetDecimal(-units)), Math.max(d.scale, 4)));
}

const row = (mB: number): SnHubbleFlowRow => ({
  sn: 'x',
  mB,
  mBErr: 0.05,
  x1: 0,
  x1Err: 0.1,
  c: 0,
  cErr: 0.03,
  covMbX1: 0,
  covMbC: 0,
  covX1C: 0,
  z: 0.05,
  zErr: 0.001,
  line: 1,
});

describe('decimal texts', () => {
  it('parses plain and exponent forms to exact decimals', () => {
    expect(parseDecimal('16.094')).toEqual({ units: 16094n, scale: 3 });
    expect(parseDecimal('-0.5')).toEqual({ units: -5n, scale: 1 });
    expect(parseDecimal('1.6094e1')).toEqual({ units: 16094n, scale: 3 });
    expect(parseDecimal('1e+2')).toEqual({ units: 100n, scale: 0 });
    expect(parseDecimal('+.25')).toEqual({ units: 25n, scale: 2 });
    expect(parseDecimal('nan')).toBeNull();
    expect(parseDecimal('.')).toBeNull();
    expect(formatDecimal({ units: -1234n, scale: 4 })).toBe('-0.1234');
    expect(formatDecimal({ units: 7n, scale: 3 })).toBe('0.007');
  });

  it('every 3-decimal magnitude from 10.000 to 25.000 comes back as the same double, for offsets at both ends and inside the range', () => {
    const offsets = [-2500, -1764, -500, 500, 1237, 2500];
    let checked = 0;
    for (let i = 10000; i <= 25000; i++) {
      const text = `${Math.floor(i / 1000)}.${String(i % 1000).padStart(3, '0')}`;
      for (const u of offsets) {
        const blinded = Number(blindText(text, u));
        const back = restoreHubbleFlowMagnitudes([row(blinded)], u)[0]!.mB;
        if (!Object.is(back, Number(text))) throw new Error(`${text} with offset ${u}: got ${back}`);
        checked++;
      }
    }
    expect(checked).toBe(15001 * 6);
  });

  it('values written with 0 to 7 decimals come back exactly (20,000 pseudo-random cases)', () => {
    // A fixed linear congruential sequence (Numerical Recipes constants) for reproducible cases.
    let s = 12345;
    const next = () => (s = (Math.imul(s, 1664525) + 1013904223) >>> 0);
    let checked = 0;
    for (let k = 0; k < 20000; k++) {
      const decimals = next() % 8;
      const whole = 8 + (next() % 20);
      const frac = decimals === 0 ? '' : '.' + String(next() % 10 ** decimals).padStart(decimals, '0');
      const text = `${whole}${frac}`;
      const u = (next() % 2 === 0 ? -1 : 1) * (500 + (next() % 2001));
      const back = restoreHubbleFlowMagnitudes([row(Number(blindText(text, u)))], u)[0]!.mB;
      if (!Object.is(back, Number(text))) throw new Error(`${text} with offset ${u}: got ${back}`);
      checked++;
    }
    expect(checked).toBe(20000);
  });
});
