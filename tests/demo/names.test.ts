/**
 * Demo data and the generator use invented names only: no real cluster, galaxy,
 * star, supernova, survey, satellite or telescope. [edge] The list below is a
 * sample of real names likely to slip into astronomy examples (common practice,
 * no source); the scanner is itself checked on strings that must be caught.
 */
import { readFileSync, readdirSync, statSync } from 'node:fs';
import { dirname, join, relative } from 'node:path';
import { fileURLToPath } from 'node:url';
import { describe, expect, it } from 'vitest';
import { ANCHOR_NAMES, COLLABORATION, FIELD_NAME, GALAXY_NAME, HOST_NAMES, MS_TARGET_NAMES } from '../../src/demo/names.ts';

const ROOT = join(dirname(fileURLToPath(import.meta.url)), '..', '..');

const REAL_NAMES = [
  'Hyades', 'Pleiades', 'Praesepe', 'Coma Berenices', 'Magellanic', 'LMC', 'SMC', 'Gaia', 'Hipparcos', 'Tycho',
  'Hubble Space', 'HST', 'JWST', 'Webb', 'Spitzer', 'Kepler', 'TESS', 'SDSS', '2MASS', 'Pan-STARRS', 'ZTF',
  'SH0ES', 'Pantheon', 'NGC', 'Messier', 'M31', 'M33', 'M101', 'M106', 'Andromeda', 'Triangulum', 'Cepheus',
  'Polaris', 'Delta Cephei', 'Betelgeuse', 'Virgo', 'Fornax', 'OGLE', 'Carina', 'Orion',
];

/** Real names found in a text (whole words, any case). */
function realNamesIn(text: string): string[] {
  return REAL_NAMES.filter((name) => new RegExp(`(^|[^A-Za-z0-9])${name.replace(/[-]/g, '\\-')}([^A-Za-z0-9]|$)`, 'i').test(text));
}

function filesUnder(dir: string): string[] {
  return readdirSync(dir).flatMap((entry) => {
    const path = join(dir, entry);
    return statSync(path).isDirectory() ? filesUnder(path) : [path];
  });
}

describe('invented names [edge]', () => {
  it('the scanner catches real names as whole words and ignores look-alikes', () => {
    expect(realNamesIn('members of the Pleiades cluster')).toEqual(['Pleiades']);
    expect(realNamesIn('host NGC 4258, like M31')).toEqual(['NGC', 'M31']);
    expect(realNamesIn('from gaia dr3')).toEqual(['Gaia']);
    expect(realNamesIn('Cepheid photometry, comma-separated, M310 star, hf-0031')).toEqual([]);
  });

  it('no committed demo release uses a real name', () => {
    const files = filesUnder(join(ROOT, 'content', 'releases'));
    expect(files.length).toBeGreaterThanOrEqual(24);
    for (const file of files) expect(realNamesIn(readFileSync(file, 'utf8')), relative(ROOT, file)).toEqual([]);
  });

  it('the generator and its names list use none either', () => {
    const all = [COLLABORATION, FIELD_NAME, GALAXY_NAME, ...ANCHOR_NAMES, ...MS_TARGET_NAMES, ...HOST_NAMES];
    expect(realNamesIn(all.join(' '))).toEqual([]);
    for (const file of filesUnder(join(ROOT, 'src', 'demo'))) expect(realNamesIn(readFileSync(file, 'utf8')), relative(ROOT, file)).toEqual([]);
  });
});
