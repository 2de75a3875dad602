import { describe, expect, test } from 'vitest';
import { editDistance, nearest } from '../../src/io/suggest.ts';

describe('edit distance (optimal string alignment)', () => {
  test('textbook values: kitten -> sitting is 3 (Levenshtein 1966 example, common practice)', () => {
    expect(editDistance('kitten', 'sitting')).toBe(3);
    expect(editDistance('', 'abc')).toBe(3);
    expect(editDistance('abc', 'abc')).toBe(0);
  });

  test('a swap of neighbours counts once (Damerau 1964), unlike plain Levenshtein (2)', () => {
    expect(editDistance('ca', 'ac')).toBe(1);
    expect(editDistance('cepehids', 'cepheids')).toBe(1);
  });

  test('symmetric', () => {
    for (const [a, b] of [
      ['blinding', 'blinded'],
      ['parralax', 'parallax'],
      ['sn_hubbleflow', 'sn_hubble_flow'],
    ]) {
      expect(editDistance(a, b)).toBe(editDistance(b, a));
    }
  });
});

describe('nearest known name', () => {
  test('suggests the intended key for the contract examples', () => {
    expect(nearest('clip_sigmaa', ['clip_sigma', 'z_min', 'z_max'])).toBe('clip_sigma');
    expect(nearest('blinding', ['id', 'title', 'date', 'previous', 'blinded', 'analysis'])).toBe('blinded');
  });

  test('suggests nothing when nothing is close', () => {
    expect(nearest('photometry', ['id', 'title', 'date', 'previous', 'blinded', 'analysis'])).toBeUndefined();
  });
});
