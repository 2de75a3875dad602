/**
 * Invented names for the demo scenario. None is the name of a real cluster,
 * galaxy, star, supernova, survey, satellite or telescope (tests/demo checks the
 * committed releases against a list of real names).
 */

export const COLLABORATION = 'Lantern Ladder Team';

/** Nearby clusters with trigonometric parallaxes (geometric anchors). */
export const ANCHOR_NAMES = ['Alder', 'Birchmoor', 'Copperwell', 'Dunholt', 'Emberly'] as const;

/** Loose group of Galactic Cepheids, each with its own parallax. */
export const FIELD_NAME = 'Hearthfield';

/** Distant clusters whose distance comes from main-sequence fitting. */
export const MS_TARGET_NAMES = ['Fernhollow', 'Greywick', 'Hollinford'] as const;

/** Nearby galaxy, a main-sequence target with many Cepheids. */
export const GALAXY_NAME = 'Wrenmere';

/** Supernova hosts; beyond the list, names get a numeric suffix. */
export const HOST_NAMES = [
  'Ivyreach',
  'Juniperfold',
  'Kettlemoor',
  'Lindenmarsh',
  'Mossbury',
  'Oakhythe',
  'Pebblerush',
  'Quillbrook',
  'Rowanstead',
  'Saltmarrow',
] as const;

/** Host name for the i-th supernova host (0-based), unique for any i. */
export function hostName(i: number): string {
  const base = HOST_NAMES[i % HOST_NAMES.length]!;
  const round = Math.floor(i / HOST_NAMES.length);
  return round === 0 ? base : `${base}-${round + 1}`;
}

/** Zero-padded running number. */
export function pad(n: number, width: number): string {
  return String(n).padStart(width, '0');
}
