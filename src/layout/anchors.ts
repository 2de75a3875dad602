/**
 * Names in URLs for things a release names: a system's page folder and an object's anchor
 * (the paths they go into are made by src/layout/routes.ts).
 *
 * An id that is already plain (ASCII letters and digits in runs joined by single "-", "." or "_")
 * is used as it is, so the links people paste stay readable (`.../systems/Alder/#Alder-001`).
 * Any other id (spaces, markup, quotes, accents, "#", "/", "%", emoji, a leading dot, ...) gets a
 * readable slug (lower-case ASCII, runs of other characters as one "-") followed by "--" and ten
 * base-32 characters of the SHA-256 of the exact id. A plain id never contains "--", so the two
 * kinds cannot meet; two different non-plain ids meet only if 50 bits of SHA-256 do, and the page
 * data refuse that case by name (`assertUnique`) rather than link to the wrong object.
 *
 * Folders are compared without case as well: two systems whose names differ only in case would
 * share a folder on a case-insensitive disk, so a case-only clash is refused by name too.
 */
import { createHash } from 'node:crypto';

const PLAIN = /^[A-Za-z0-9]+(?:[-._][A-Za-z0-9]+)*$/;
/** Longest id used as it is; longer ids are shortened to their slug and hash. */
const PLAIN_MAX = 64;
const SLUG_MAX = 40;
const BASE32 = 'abcdefghijklmnopqrstuvwxyz234567';

/** Element ids the pages use themselves; an object with one of these names gets the hashed form. */
export const RESERVED_IDS: ReadonlySet<string> = new Set([
  'top',
  'main',
  'results',
  'figures',
  'objects',
  'history',
  'leave-one-out',
  'cautions',
  'cautions-title',
  'method',
  'inputs',
  'pulls',
]);

function hash10(id: string): string {
  const bytes = createHash('sha256').update(id, 'utf8').digest();
  let bits = 0;
  let acc = 0;
  let out = '';
  for (const b of bytes) {
    acc = (acc << 8) | b;
    bits += 8;
    while (bits >= 5 && out.length < 10) {
      out += BASE32[(acc >>> (bits - 5)) & 31];
      bits -= 5;
    }
    if (out.length >= 10) break;
    acc &= (1 << bits) - 1;
  }
  return out;
}

/** Readable part: accents dropped, lower case, other characters as "-". Never empty. */
export function readableSlug(id: string): string {
  const s = id
    .normalize('NFKD')
    .replace(/[\u0300-\u036f]/g, '')
    .toLowerCase()
    .replace(/[^a-z0-9]+/g, '-')
    .replace(/^-+|-+$/g, '')
    .slice(0, SLUG_MAX)
    .replace(/-+$/g, '');
  return s === '' ? 'x' : s;
}

function isPlain(id: string): boolean {
  return id.length <= PLAIN_MAX && PLAIN.test(id) && !RESERVED_IDS.has(id) && !/^(table|figure|fig)-/.test(id);
}

/** The URL-safe name of an id: the id itself when plain, else slug--hash. */
export function urlName(id: string): string {
  return isPlain(id) ? id : `${readableSlug(id)}--${hash10(id)}`;
}

/** Folder of a system's page under its release: releases/<release>/systems/<name>/. */
export function systemSegment(system: string): string {
  return urlName(system);
}

/** Anchor (element id, fragment) of an object's row on its system's page. */
export function objectAnchor(objectId: string): string {
  return urlName(objectId);
}

/** Refuse two ids that would share a name (`fold`: also without case, for folders). */
export function assertUnique(ids: readonly string[], name: (id: string) => string, what: string, fold = false): void {
  const seen = new Map<string, string>();
  for (const id of new Set(ids)) {
    const n = fold ? name(id).toLowerCase() : name(id);
    const other = seen.get(n);
    if (other !== undefined) {
      throw new Error(
        `${what} ${JSON.stringify(other)} and ${JSON.stringify(id)} would share the name ${JSON.stringify(n)} in the report's links; rename one of them`,
      );
    }
    seen.set(n, id);
  }
}
