// The message to paste is Markdown that people paste into mail and chat, which render it. Text
// from the data (row ids, column names, units, variant names) must reach the reader as written
// and never become a link, an image, raw HTML, emphasis or an automatic link. Checked by parsing
// the message with a general-purpose CommonMark + GFM parser (micromark / mdast, from the npm
// registry) rather than by looking at the characters. Kind: edge cases (hostile text).
import { fromMarkdown } from 'mdast-util-from-markdown';
import { gfmFromMarkdown } from 'mdast-util-gfm';
import { gfm } from 'micromark-extension-gfm';
import { join } from 'node:path';
import { beforeAll, describe, expect, it } from 'vitest';
import { compareReleaseDirs } from '../../src/diff/compare.ts';
import { mdData, renderMarkdown } from '../../src/diff/render.ts';
import type { DiffReport } from '../../src/diff/types.ts';
import { DEMO_DIR } from './fixtures.ts';

const SITE = 'https://reports.example.org';

/** Strings a data file may hold, each of which some Markdown reader would turn into something. */
const HOSTILE = [
  '[click](javascript:alert(1))',
  '![pixel](https://tracker.example/p.png)',
  '<img src=x onerror=alert(1)>',
  'see https://elsewhere.example/x',
  'www.elsewhere.example',
  'name@elsewhere.example',
  '**loud** _quiet_ ~~gone~~',
  '`tick` and ``two``',
  '` edge `',
  'line one\nline two',
  'a|b|c',
  '&lt;b&gt;',
];

interface MdNode {
  type: string;
  url?: string;
  value?: string;
  children?: MdNode[];
}
const parse = (md: string) => fromMarkdown(md, { extensions: [gfm()], mdastExtensions: [gfmFromMarkdown()] }) as unknown as MdNode;
const walk = (n: MdNode, out: MdNode[] = []): MdNode[] => {
  out.push(n);
  for (const c of n.children ?? []) walk(c, out);
  return out;
};

let base: DiffReport;

beforeAll(async () => {
  base = await compareReleaseDirs(join(DEMO_DIR, '2026.2'), join(DEMO_DIR, '2026.3'), { site: SITE, base: '/', workers: 0 });
}, 120_000);

describe('text from the data in the message to paste', () => {
  it('each hostile string, alone, reads back as the same text and nothing else', () => {
    for (const s of HOSTILE) {
      const nodes = walk(parse(`x ${mdData(s)} y`));
      const kinds = new Set(nodes.map((n) => n.type));
      for (const bad of ['link', 'image', 'html', 'emphasis', 'strong', 'delete', 'table'])
        expect(kinds.has(bad), `${JSON.stringify(s)} gave ${bad}`).toBe(false);
      // the literal text is there: in a code span (inlineCode) or as plain text
      const text = nodes
        .filter((n) => n.type === 'inlineCode' || n.type === 'text')
        .map((n) => n.value)
        .join('');
      expect(text, JSON.stringify(s)).toContain(s.replace(/\n/g, ' '));
    }
  });

  it('leaves plain ids as they are', () => {
    for (const id of ['hf-0187', 'Juniperfold-C001', 'm_h', '2026.3']) expect(mdData(id)).toBe(id);
  });

  it("in a whole message, only the report's own links remain, however the data are named", () => {
    const r = structuredClone(base);
    r.top_objects.forEach((o, i) => (o.id = HOSTILE[i % HOSTILE.length]!));
    const cepheids = r.inputs.find((t) => t.columns.length > 0)!;
    cepheids.columns[0]!.column = HOSTILE[0]!;
    cepheids.columns[0]!.unit = HOSTILE[2]!;
    cepheids.columns[0]!.largest_id = HOSTILE[1]!;
    cepheids.column_changes.push({
      kind: 'added',
      column_a: null,
      column_b: HOSTILE[3]!,
      unit_a: null,
      unit_b: null,
      contract: false,
      detail: `column "${HOSTILE[3]}" added`,
    });
    r.input_changes.variants.push({ kind: 'added', name: HOSTILE[6]!, a: null, b: {} });
    const md = renderMarkdown(r);
    const nodes = walk(parse(md));
    const links = nodes.filter((n) => n.type === 'link');
    expect(links.length).toBeGreaterThanOrEqual(2);
    for (const l of links) expect(l.url!.startsWith(`${SITE}/releases/2026.3/`), l.url).toBe(true);
    expect(nodes.filter((n) => ['image', 'html', 'delete', 'table'].includes(n.type))).toEqual([]);
    // the report's own emphasis only: the bold headline and the italic notice
    expect(nodes.filter((n) => n.type === 'strong').length).toBe(1);
    expect(nodes.filter((n) => n.type === 'emphasis').length).toBe(1);
    // and the hostile ids can be read in it
    const code = nodes.filter((n) => n.type === 'inlineCode').map((n) => n.value);
    expect(code).toContain(HOSTILE[0]);
    expect(code).toContain(HOSTILE[1]);
  });
});
