/**
 * Seeded pseudo-random numbers for the demo-data generator (never Math.random).
 *
 * Generator: xoshiro128** (Blackman & Vigna 2018, "Scrambled linear pseudorandom
 * number generators"), 128-bit state of four 32-bit words, seeded through
 * splitmix32-style mixing so that nearby seeds give unrelated streams.
 * Streams are named: `createRng(seed, 'parallax', 'A')` gives the same sequence
 * every time and a stream unrelated to any other name, which is how a table keeps
 * its noise while another table is redrawn.
 *
 * Uniform doubles use 53 random bits; normal deviates use the Box-Muller
 * transform (Box & Muller 1958), both values of each pair used in turn.
 * Cost: a few integer operations per 32-bit word.
 */

export interface Rng {
  /** Uniform on [0, 1). */
  uniform(): number;
  /** Uniform on [lo, hi). */
  between(lo: number, hi: number): number;
  /** Integer uniform on [lo, hi], both ends included. */
  int(lo: number, hi: number): number;
  /** Standard normal deviate (mean 0, standard deviation 1). */
  normal(): number;
  /** Normal deviate with the given mean and standard deviation. */
  gauss(mean: number, sd: number): number;
  /** true with probability p. */
  chance(p: number): boolean;
}

/** Finaliser of MurmurHash3 (Appleby, public domain): a bijective 32-bit mix. */
function fmix32(h: number): number {
  h ^= h >>> 16;
  h = Math.imul(h, 0x85ebca6b);
  h ^= h >>> 13;
  h = Math.imul(h, 0xc2b2ae35);
  h ^= h >>> 16;
  return h >>> 0;
}

/** 32-bit hash of a seed (any safe integer) and a list of labels. */
export function hashSeed(seed: number, labels: readonly string[]): number {
  if (!Number.isSafeInteger(seed)) throw new RangeError(`seed must be a safe integer, found ${seed}`);
  const lo = seed >>> 0;
  const hi = Math.floor(seed / 4294967296) >>> 0;
  let h = fmix32(lo ^ 0x9e3779b9);
  h = fmix32(h ^ fmix32(hi + 0x7f4a7c15));
  for (const label of labels) {
    for (let i = 0; i < label.length; i++) h = fmix32(Math.imul(h ^ label.charCodeAt(i), 0x01000193) + 0x6d2b79f5);
    h = fmix32(h ^ 0x2f); // label separator, so ['ab','c'] differs from ['a','bc']
  }
  return h;
}

/** A named, reproducible stream. */
export function createRng(seed: number, ...labels: string[]): Rng {
  // splitmix32-style expansion of the hash into the four state words (never all zero).
  let x = hashSeed(seed, labels);
  const next32 = (): number => {
    x = (x + 0x9e3779b9) >>> 0;
    return fmix32(x);
  };
  let s0 = next32();
  let s1 = next32();
  let s2 = next32();
  let s3 = next32();
  if ((s0 | s1 | s2 | s3) === 0) s0 = 1;

  const nextU32 = (): number => {
    const result = Math.imul(rotl(Math.imul(s1, 5), 7), 9) >>> 0;
    const t = (s1 << 9) >>> 0;
    s2 ^= s0;
    s3 ^= s1;
    s1 ^= s2;
    s0 ^= s3;
    s2 ^= t;
    s3 = rotl(s3, 11);
    s0 >>>= 0;
    s1 >>>= 0;
    s2 >>>= 0;
    return result;
  };

  const uniform = (): number => {
    const a = nextU32() >>> 5; // 27 bits
    const b = nextU32() >>> 6; // 26 bits
    return (a * 67108864 + b) / 9007199254740992;
  };

  let spare: number | null = null;
  const normal = (): number => {
    if (spare !== null) {
      const v = spare;
      spare = null;
      return v;
    }
    const u1 = 1 - uniform(); // (0, 1]: log is finite
    const u2 = uniform();
    const r = Math.sqrt(-2 * Math.log(u1));
    const theta = 2 * Math.PI * u2;
    spare = r * Math.sin(theta);
    return r * Math.cos(theta);
  };

  return {
    uniform,
    between: (lo, hi) => lo + (hi - lo) * uniform(),
    int: (lo, hi) => lo + Math.floor(uniform() * (hi - lo + 1)),
    normal,
    gauss: (mean, sd) => mean + sd * normal(),
    chance: (p) => uniform() < p,
  };
}

function rotl(v: number, k: number): number {
  return ((v << k) | (v >>> (32 - k))) >>> 0;
}
