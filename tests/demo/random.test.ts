/**
 * Seeded random streams (src/demo/random.ts).
 * [edge] reproducibility and separation of named streams;
 * [statistics] moments of the uniform and normal deviates against their exact
 * values (uniform: mean 1/2, variance 1/12; normal: mean 0, variance 1, kurtosis 3),
 * each within STAT_SIGMAS standard errors.
 */
import { describe, expect, it } from 'vitest';
import { createRng, hashSeed } from '../../src/demo/random.ts';
import { STAT_SIGMAS } from '../tolerances.ts';
import { mean } from './ecsvText.ts';

const N = 200_000;

describe('createRng [edge]', () => {
  it('gives the same sequence for the same seed and labels', () => {
    const a = createRng(42, 'x', 'y');
    const b = createRng(42, 'x', 'y');
    for (let i = 0; i < 1000; i++) expect(a.uniform()).toBe(b.uniform());
  });

  it('gives unrelated sequences for another seed, another label or another split of the labels', () => {
    const first = (rng: ReturnType<typeof createRng>): number[] => Array.from({ length: 8 }, () => rng.uniform());
    const base = first(createRng(42, 'ab', 'c'));
    for (const other of [createRng(43, 'ab', 'c'), createRng(42, 'ab', 'd'), createRng(42, 'a', 'bc'), createRng(42, 'abc')]) {
      const seq = first(other);
      expect(seq.filter((x, i) => x === base[i]).length).toBe(0);
    }
    expect(hashSeed(2 ** 40, [])).not.toBe(hashSeed(0, []));
    expect(() => hashSeed(1.5, [])).toThrow(RangeError);
  });

  it('keeps uniforms in [0, 1) and integers within both ends, reaching both', () => {
    const rng = createRng(7, 'range');
    const seen = new Set<number>();
    for (let i = 0; i < 10_000; i++) {
      const u = rng.uniform();
      expect(u >= 0 && u < 1).toBe(true);
      const k = rng.int(-2, 3);
      expect(Number.isInteger(k) && k >= -2 && k <= 3).toBe(true);
      seen.add(k);
    }
    expect([...seen].sort((a, b) => a - b)).toEqual([-2, -1, 0, 1, 2, 3]);
  });
});

describe('createRng [statistics]', () => {
  it('uniform deviates have mean 1/2 and variance 1/12', () => {
    const rng = createRng(1, 'uniform');
    const xs = Array.from({ length: N }, () => rng.uniform());
    const m = mean(xs);
    const v = mean(xs.map((x) => (x - 0.5) ** 2));
    expect(Math.abs(m - 0.5)).toBeLessThan(STAT_SIGMAS * Math.sqrt(1 / 12 / N));
    // Var of (U - 1/2)^2 is 1/80 - 1/144.
    expect(Math.abs(v - 1 / 12)).toBeLessThan(STAT_SIGMAS * Math.sqrt((1 / 80 - 1 / 144) / N));
  });

  it('normal deviates have mean 0, variance 1, fourth moment 3 and the right tail fraction', () => {
    const rng = createRng(1, 'normal');
    const xs = Array.from({ length: N }, () => rng.normal());
    expect(Math.abs(mean(xs))).toBeLessThan(STAT_SIGMAS / Math.sqrt(N));
    expect(Math.abs(mean(xs.map((x) => x * x)) - 1)).toBeLessThan(STAT_SIGMAS * Math.sqrt(2 / N));
    // E x^4 = 3, Var x^4 = 105 - 9 = 96.
    expect(Math.abs(mean(xs.map((x) => x ** 4)) - 3)).toBeLessThan(STAT_SIGMAS * Math.sqrt(96 / N));
    // P(|x| > 2) = 0.0455003 (standard normal table).
    const p = 0.0455003;
    const tail = xs.filter((x) => Math.abs(x) > 2).length / N;
    expect(Math.abs(tail - p)).toBeLessThan(STAT_SIGMAS * Math.sqrt((p * (1 - p)) / N));
  });

  it('gauss and chance scale and threshold as stated', () => {
    const rng = createRng(3, 'gauss');
    const xs = Array.from({ length: N }, () => rng.gauss(10, 0.5));
    expect(Math.abs(mean(xs) - 10)).toBeLessThan((STAT_SIGMAS * 0.5) / Math.sqrt(N));
    const hits = Array.from({ length: N }, () => rng.chance(0.25)).filter(Boolean).length / N;
    expect(Math.abs(hits - 0.25)).toBeLessThan(STAT_SIGMAS * Math.sqrt((0.25 * 0.75) / N));
  });
});
