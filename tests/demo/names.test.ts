/**
 * Demo data and the generator use invented names only: no real cluster, galaxy,
 * star, supernova, survey, satellite or telescope. [edge] The scanner knows a
 * sample of real names likely to slip into astronomy examples (common practice,
 * no source) only as salted SHA-256 digests of their normalised form, so the
 * repository never holds the names themselves; it is checked on invented probe
 * words whose digests the same list holds.
 *
 * Normalised form: Unicode compatibility decomposition, diacritics dropped,
 * lower case, words split at every character that is not an ASCII letter or
 * digit and joined by one space ("Ab-cd", "AB  CD" and "ab\ncd" are all "ab cd").
 * A text is scanned as the runs of one to MAX_WORDS consecutive words, both with
 * and without its diacritics dropped: a name is found as a whole word or a run
 * of whole words, in any case, with any separator between its words.
 */
import { execFileSync } from 'node:child_process';
import { createHash } from 'node:crypto';
import { readFileSync, readdirSync, statSync } from 'node:fs';
import { dirname, join, relative } from 'node:path';
import { fileURLToPath } from 'node:url';
import { describe, expect, it } from 'vitest';
import { ANCHOR_NAMES, COLLABORATION, FIELD_NAME, GALAXY_NAME, HOST_NAMES, MS_TARGET_NAMES } from '../../src/demo/names.ts';

const ROOT = join(dirname(fileURLToPath(import.meta.url)), '..', '..');

/** Salt of the digests (fixed: changing it means recomputing every digest from the words, which are kept outside the repository). */
const SALT = 'rungbook.invented-names/1:2ac4976186792bffa8c6b953:';
/** The longest name in the list, in words. */
const MAX_WORDS = 3;

/** SHA-256 of SALT + the normalised name, hex: 40 real names and the 4 probe words below, sorted. */
const FORBIDDEN = new Set([
  '00e2dce88be8393696386cc1a96ae09a997383f0e6c92c0ac4ba6c7d4343d385',
  '0155fb506a315de847cd67fa18502464b3292d09ff6ee60c4c14f0eafae3822c',
  '040b0e4cee8247aed3b3be9877effe4fee091baeece8465b59a31cdd28b32e41',
  '04ff4cf8324b885897feab2cd438b4dca1ed181d2905640a4483369332b80e11',
  '06a2ef78b9bb19c2efab3cb0e08ce69564c1afe90b362ec1728034a6b4604967',
  '0f45bf378548e9faaa999ca8de18bb86c4717b56088d0260a22a673cd7a22c8e',
  '131d421545956ed02b1e92d550696cef19aef46f2876b665aa855277aabaa98e',
  '1b9316a4fb31bd4f3103d00232b5eb1cd130de57389185e4f80671c0f9560dfe',
  '22b9f5180f189f73d51066357a479272597621af35069facc04906da050c16a3',
  '27182e844a755d64af4e8aad987a8ebad15a8913d377ca0b0b04cbf68e2923a4',
  '2cbd3e23d02217f0a9a282b87f7dfe7029d28c932e6886f9acd5495abb6e09df',
  '37c861243dd9185aea7ba8b4fbe5517429aa31b06d5b5403e99f36c956147c46',
  '39a99542a327304ff86df4e7aba4792b11a0e0ff0a517fb83d357c08dea106a4',
  '51f8174b54bc8076b2aa24c9dce02283c776c3260c925626526b2117700cc9bf',
  '54a45708da17813072bde352952c06b642e84ada6668aa914c1b37c5677c0985',
  '5d0e2976c8093769d15e464293b0b740d6b2e4fe612536f5c441f9a34dee6ff7',
  '5e20b2c8724977b5e2b8d3cfaa7057f4df7070513f019f45eed85ffa1646c4d2',
  '5f08efa2caddabc176d5163a9626daa068c041db334e3cfdb9dab61922ed4bae',
  '5f24d7c479b0ae758e9540a584c76d29c1da759824258578899b6cf83c2e0f6b',
  '6dfa7951eb0e631e5a59a611cbd952cfdddbf59c802a96879a1d6e99a60603cc',
  '6e4ac8195f80c9089af41dd4b8098641a0e45148f0785c138fec18cc7a014bf4',
  '7096e2d37c4cde62d5a0e10475539dd0f0b7a559f64caee52a03c0d961317e09',
  '7789608574a6a3c0552c782b1fd986e3c7ca5a3241f0319dba14bc03201e79ee',
  '8026d15e9a31b0fe6bbae0f53924959200bb3a0ee1976c1da36ccd5cdab1273c',
  '8494f3947cecf27193d1d405ceb03354f6abba9303f6aa8bf7595d9cea3558a3',
  '932e596cd1bfd32b1fde3f477e51160c00145939af26f609ed1c5d133a256a9a',
  '945198f29fb8851f1aa80f39156e59c2b98b6b275eb1da78eec01e4b52cc36a5',
  '97be72cc01c542a92e1567d9de09ebabb58fec6ca08d078728e9e3d1c16d6840',
  'b1ef79405115611ea67dbb96b3db024e9c20ed55a6d47c39528e2d471361dc2e',
  'b548946287e3c3969c3c72426587d58511bdab555878baf2c09614f4ed50d248',
  'b9cb992ee36942eeb0e86d230ee937f2b8fbe06f843c1532100545c2c6db6e9f',
  'bf0229699a91ac2c375b42555382e21d5907060c9dc071a5b9eb1bc82d3c7b54',
  'c1b772dd242ddc8255c7f9b869f5f4a9a87101017cd0ba5f973f343dd664642f',
  'c6cfe4e8b36c22281a626cd82ea7f5ac7c427ae0a7a4ea014ff494ee0858aa2a',
  'cfa28871d3622861f1191ffefd18cf7fa53de4d8bee6a65b459109d2c99c21f3',
  'd17a3f871ec2d02ea775780e5c5a50d09246c0062cd6f9bbf9184b308adb754f',
  'd513b31f3c4c271255ffe72f4653cf1cc25f0cae8f3190ab35656d6124e3e677',
  'd76b1d399af35d6649e069533c2ca95e732a0b7fcf4c03ed2acaada4d9378816',
  'd82b27a2d0ac9cb560b6d417277c04ccc8ff76b8015a40c62149c2a97222a647',
  'de08acdaebb2d529efc44e73a9cca21bd57dbc0926343288f2de4f14b361fac8',
  'e53b0f9a0a6ba993e93da1277d750ab27593d450696d5565a033975063160c27',
  'e5e8951885c770e32367a44fcc5ef92865ca54314f20140b0e76159a431bddd4',
  'e8b72b1e53a3612d3095657dafe735f6eed01f5a52c87e5dadfdd4bf51041308',
  'ff41b25aaa0cce4d9ca842d4be85cde4b4c8bf5d70788e2a6ce09a5c9b050bd2',
]);

/** Words split at every character that is not an ASCII letter or digit, lower case, joined by one space. */
function words(text: string): string[] {
  return text
    .toLowerCase()
    .split(/[^a-z0-9]+/)
    .filter((w) => w !== '');
}

/** The text with compatibility forms decomposed and diacritics dropped ("É" -> "e", fullwidth letters -> ASCII). */
function folded(text: string): string {
  return text.normalize('NFKD').replace(/\p{M}+/gu, '');
}

export function normaliseName(name: string): string {
  return words(folded(name)).join(' ');
}

const digestOf = (normalised: string): string =>
  createHash('sha256')
    .update(SALT + normalised)
    .digest('hex');

/** Runs of 1..MAX_WORDS words of the text (as written and with diacritics dropped) whose digest is forbidden, as found. */
export function realNamesIn(text: string): string[] {
  const found: string[] = [];
  const seen = new Map<string, boolean>();
  for (const tokens of [words(text), words(folded(text))]) {
    for (let i = 0; i < tokens.length; i++) {
      for (let n = 1; n <= MAX_WORDS && i + n <= tokens.length; n++) {
        const run = tokens.slice(i, i + n).join(' ');
        let bad = seen.get(run);
        if (bad === undefined) seen.set(run, (bad = FORBIDDEN.has(digestOf(run))));
        if (bad && !found.includes(run)) found.push(run);
      }
    }
  }
  return found;
}

/**
 * Invented probe words, made here from a seed (so they are written nowhere either): pronounceable
 * syllables, one of two words and one like a catalogue number. Their digests are in FORBIDDEN.
 */
function inventedWord(seed: number, syllables: number): string {
  const consonants = 'bdfgklmnprstvz';
  const vowels = 'aeiou';
  const h = createHash('sha256').update(`rungbook probe word ${seed}`).digest();
  let w = '';
  for (let i = 0; i < syllables; i++) w += consonants[h[2 * i]! % consonants.length]! + vowels[h[2 * i + 1]! % vowels.length]!;
  return w[0]!.toUpperCase() + w.slice(1);
}
const PROBE_ONE = inventedWord(1, 4);
const PROBE_TWO = inventedWord(2, 3);
const PROBE_PAIR = `${inventedWord(3, 3)} ${inventedWord(4, 2)}`;
const PROBE_NUMBERED = `${inventedWord(5, 1).toUpperCase()}42`;
const PROBES = [PROBE_ONE, PROBE_TWO, PROBE_PAIR, PROBE_NUMBERED];

function filesUnder(dir: string): string[] {
  return readdirSync(dir).flatMap((entry) => {
    const path = join(dir, entry);
    return statSync(path).isDirectory() ? filesUnder(path) : [path];
  });
}

describe('invented names [edge]', () => {
  it('the list holds digests only, of 40 real names and the probe words', () => {
    expect(FORBIDDEN.size).toBe(44);
    for (const d of FORBIDDEN) expect(d).toMatch(/^[0-9a-f]{64}$/);
    for (const p of PROBES) expect(FORBIDDEN.has(digestOf(normaliseName(p))), 'a probe word').toBe(true);
  });

  it('the scanner catches probe words as whole words and ignores look-alikes', () => {
    const [pair1, pair2] = PROBE_PAIR.split(' ');
    const one = normaliseName(PROBE_ONE);
    expect(realNamesIn(`members of the ${PROBE_ONE} cluster`)).toEqual([one]);
    expect(realNamesIn(`host ${PROBE_PAIR} 4258, like ${PROBE_NUMBERED}`)).toEqual([normaliseName(PROBE_PAIR), normaliseName(PROBE_NUMBERED)]);
    expect(realNamesIn(`from ${PROBE_TWO.toLowerCase()} dr3`)).toEqual([normaliseName(PROBE_TWO)]);
    // Any case, any separator between the words of a name, diacritics and compatibility forms.
    expect(realNamesIn(`the ${PROBE_ONE.toUpperCase()} stars`)).toEqual([one]);
    expect(realNamesIn(`${pair1}-${pair2}`)).toEqual([normaliseName(PROBE_PAIR)]);
    expect(realNamesIn(`${pair1}\n  ${pair2!.toUpperCase()}`)).toEqual([normaliseName(PROBE_PAIR)]);
    expect(realNamesIn(`(${PROBE_ONE.replace(/[aeiou]/, (v) => `${v}\u0308`)})`)).toEqual([one]);
    expect(realNamesIn(PROBE_ONE.replace(/./g, (c) => String.fromCodePoint(c.codePointAt(0)! + 0xfee0)))).toEqual([one]);
    expect(realNamesIn(`${PROBE_NUMBERED}_b, ${PROBE_ONE}.`)).toEqual([normaliseName(PROBE_NUMBERED), one]);
    // Not inside a longer word or number, and not half of a two-word name.
    expect(realNamesIn(`Cepheid photometry, comma-separated, ${PROBE_NUMBERED}0 star, x${PROBE_ONE}, ${PROBE_ONE}s, ${pair1} alone, hf-0031`)).toEqual([]);
    // A clean text.
    expect(realNamesIn('Lantern Ladder Team: Alder, Birchmoor and Wrenmere; hf-0001 at z = 0.0288.')).toEqual([]);
  });

  it('no committed demo release uses a real name', () => {
    const files = filesUnder(join(ROOT, 'content', 'releases'));
    expect(files.length).toBeGreaterThanOrEqual(24);
    for (const file of files) expect(realNamesIn(readFileSync(file, 'utf8')), relative(ROOT, file)).toEqual([]);
  });

  it('no file of the repository holds one (this test file included: the list is of digests)', () => {
    const files = execFileSync('git', ['ls-files', '--cached', '--others', '--exclude-standard'], { cwd: ROOT, encoding: 'utf8' })
      .split('\n')
      .filter((f) => f !== '');
    expect(files.length).toBeGreaterThan(200);
    expect(files).toContain('tests/demo/names.test.ts');
    for (const f of files) {
      const path = join(ROOT, f);
      if (!statSync(path, { throwIfNoEntry: false })?.isFile()) continue;
      const bytes = readFileSync(path);
      if (bytes.includes(0)) continue; // binary: fonts, images
      expect(realNamesIn(bytes.toString('utf8')), f).toEqual([]);
    }
  });

  it('the generator and its names list use none either', () => {
    const all = [COLLABORATION, FIELD_NAME, GALAXY_NAME, ...ANCHOR_NAMES, ...MS_TARGET_NAMES, ...HOST_NAMES];
    expect(realNamesIn(all.join(' '))).toEqual([]);
    for (const file of filesUnder(join(ROOT, 'src', 'demo'))) expect(realNamesIn(readFileSync(file, 'utf8')), relative(ROOT, file)).toEqual([]);
  });
});
