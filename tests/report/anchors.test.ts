/**
 * Kind: edge cases. Object ids and system names with any characters stay valid anchors and links
 * (src/layout/anchors.ts): plain ids are kept as they are, any other id gets a readable slug and a
 * hash, the result is the same every time, two different ids never share a name, and the name
 * needs no escaping in a URL fragment, an HTML id or a CSS selector. The hostile corpus is the one
 * the trust tests use (tests/trust/hostile.ts). Rules from the HTML standard (an id is any
 * non-empty string without ASCII whitespace) and RFC 3986 (fragment characters); common practice.
 */
import { JSDOM } from 'jsdom';
import { describe, expect, it } from 'vitest';
import { assertUnique, objectAnchor, readableSlug, systemSegment } from '../../src/layout/anchors.ts';
import { objectLink, systemPagePath } from '../../src/layout/routes.ts';
import { HOSTILE, LONG_ID } from '../trust/hostile.ts';

/** RFC 3986 unreserved characters: safe in a path segment and a fragment, never percent-encoded. */
const UNRESERVED = /^[A-Za-z0-9._~-]+$/;

const corpus = [
  ...HOSTILE,
  LONG_ID,
  'Alder',
  'alder',
  'ALDER',
  'Alder-001',
  'Alder 001',
  'Alder_001',
  'Alder.001',
  'Ålder',
  'Alder#001',
  'Alder/001',
  'Alder%20001',
  'results',
  'table-cepheids',
  '',
  ' ',
  '-',
  '..',
  '.hidden',
  'a--b',
  'x--aaaaaaaaaa',
];

describe('object anchors and system folders', () => {
  it('keeps plain ids as they are, so pasted links stay readable', () => {
    for (const id of ['Alder', 'Alder-001', 'SN-2026xyz', 'C.12_b', 'Lindenmarsh']) {
      expect(objectAnchor(id)).toBe(id);
      expect(systemSegment(id)).toBe(id);
    }
    expect(objectLink('2026.3', 'Lindenmarsh', 'Lindenmarsh-C07')).toBe('releases/2026.3/systems/Lindenmarsh/#Lindenmarsh-C07');
  });

  it('gives every other id a readable slug and a hash, the same on every call', () => {
    expect(objectAnchor('Alder 001')).toMatch(/^alder-001--[a-z2-7]{10}$/);
    expect(objectAnchor('<script>alert("id")</script>')).toMatch(/^script-alert-id-script--[a-z2-7]{10}$/);
    expect(objectAnchor('Ålder')).toMatch(/^alder--[a-z2-7]{10}$/);
    expect(objectAnchor('')).toMatch(/^x--[a-z2-7]{10}$/);
    // Names the pages use for their own elements are never taken by an object.
    expect(objectAnchor('results')).not.toBe('results');
    expect(objectAnchor('table-cepheids')).not.toBe('table-cepheids');
    // The hash is the first 10 characters of the RFC 4648 base-32 SHA-256 of the id (UTF-8),
    // computed independently with Python: base64.b32encode(hashlib.sha256(id.encode()).digest()).lower()[:10].
    expect(objectAnchor('Alder 001')).toBe('alder-001--hsuihbbrip');
    expect(objectAnchor('<script>alert("id")</script>')).toBe('script-alert-id-script--ooddx7lmva');
    expect(readableSlug(LONG_ID).length).toBeLessThanOrEqual(40);
    expect(objectAnchor(LONG_ID).length).toBeLessThanOrEqual(52);
  });

  it('never gives two different ids the same name, with or without case', () => {
    const names = corpus.map(objectAnchor);
    expect(new Set(names).size).toBe(new Set(corpus).size);
    const folded = [...new Set(corpus)].filter((x) => !['alder', 'ALDER'].includes(x)).map((x) => systemSegment(x).toLowerCase());
    expect(new Set(folded).size).toBe(folded.length);
    // Folders differing only in case are refused by name (they would clash on a case-insensitive disk).
    expect(() => assertUnique(['Alder', 'alder'], systemSegment, 'systems', true)).toThrow(/"Alder" and "alder" would share the name "alder"/);
    expect(() => assertUnique(['Alder', 'alder'], objectAnchor, 'objects')).not.toThrow();
  });

  it('needs no escaping in a URL fragment, a path segment, an HTML id or a CSS selector', () => {
    const dom = new JSDOM('<!doctype html><body></body>');
    const doc = dom.window.document;
    for (const id of corpus) {
      const a = objectAnchor(id);
      expect(a, JSON.stringify(id)).toMatch(UNRESERVED);
      const u = new URL(`https://report.test/${systemPagePath('2026.3', id)}#${a}`);
      expect(u.hash).toBe(`#${a}`);
      expect(u.pathname).toBe(`/releases/2026.3/systems/${systemSegment(id)}/`);
      const row = doc.createElement('tr');
      row.id = a;
      doc.body.append(row);
      expect(doc.getElementById(a)).toBe(row);
      expect(doc.querySelector(`[id="${a}"]`)).toBe(row);
      row.remove();
    }
  });
});
