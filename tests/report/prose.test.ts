/**
 * Generated prose as sanitised HTML (src/report/prose.ts), without a build
 * (kind: edge cases; the policy is the module's own, common practice for HTML
 * output, no outside source). The HTML is parsed back with jsdom: only the
 * elements and attributes of the allow-list, ids of ours, links to safe schemes,
 * and math only where the summary put it, from numbers.
 */
import { JSDOM } from 'jsdom';
import type { Root } from 'mdast';
import { describe, expect, it } from 'vitest';
import { notesHtml, proseHtml, summaryHtml } from '../../src/report/prose.ts';
import { calibrateFixture } from '../fixtures/report/syntheticResults.ts';
import { FIXTURE_RELEASES } from './fixtureBuild.ts';

const ALLOWED = new Set([
  'p',
  'br',
  'hr',
  'em',
  'strong',
  'del',
  'code',
  'pre',
  'blockquote',
  'ul',
  'ol',
  'li',
  'a',
  'sup',
  'h3',
  'h4',
  'h5',
  'h6',
  'table',
  'thead',
  'tbody',
  'tr',
  'th',
  'td',
  'section',
]);

function fragment(html: string): DocumentFragment {
  return JSDOM.fragment(html);
}

describe('release notes as HTML', () => {
  it('keeps Markdown structure, shows raw HTML and code-like text as text, and gives ids of its own', () => {
    const html = notesHtml(
      [
        '# main',
        '',
        "import fs from 'node:fs'",
        '',
        '<script>alert(1)</script> and <b onclick="x()">bold</b>',
        '',
        '- [x] done',
        '- [ ] open',
        '',
        'See[^<evil>"id] and [a](javascript:alert(1)) and [b](https://example.org/b).',
        '',
        '[^<evil>"id]: the note',
        '',
        '```js {run}',
        'export const x = 1',
        '```',
      ].join('\n'),
    )!;
    const f = fragment(html);
    const tags = new Set(Array.from(f.querySelectorAll('*')).map((e) => e.tagName.toLowerCase()));
    expect([...tags].filter((t) => !ALLOWED.has(t))).toEqual([]);
    expect(f.textContent).toContain("import fs from 'node:fs'");
    expect(f.textContent).toContain('<script>alert(1)</script> and <b onclick="x()">bold</b>');
    expect(f.textContent).toContain('[x] done');
    expect(f.textContent).toContain('[ ] open');
    expect(f.querySelector('pre code')?.textContent).toBe('export const x = 1\n');
    expect(f.querySelector('pre code')?.getAttribute('class')).toBeNull();
    expect(Array.from(f.querySelectorAll('a[href]')).map((a) => a.getAttribute('href'))).toEqual(['#notes-fn-1', 'https://example.org/b', '#notes-fnref-1']);
    expect(Array.from(f.querySelectorAll('[id]')).map((e) => e.id)).toEqual(['notes-heading-1', 'notes-fnref-1', 'notes-footnote-label', 'notes-fn-1']);
    expect(f.querySelector('h3')?.textContent).toBe('main');
  });

  it('is null for empty notes', () => {
    expect(notesHtml('\uFEFF \n\n')).toBeNull();
  });

  it('drops anything outside the allow-list, even from a tree built by hand', () => {
    const tree = {
      type: 'root',
      children: [
        { type: 'html', value: '<img src=x onerror=alert(1)>' },
        { type: 'paragraph', children: [{ type: 'inlineMath', value: '\\href{javascript:x}{y}' }] },
      ],
    } as unknown as Root;
    const f = fragment(proseHtml(tree, 'notes', { math: false }));
    expect(f.querySelectorAll('img, span, .katex').length).toBe(0);
    expect(f.textContent).toBe('\\href{javascript:x}{y}');
  });
});

describe('the summary as HTML', () => {
  it('typesets its formulas with KaTeX and holds nothing else beyond the allow-list', async () => {
    const r = await calibrateFixture(`${FIXTURE_RELEASES}2026.1`);
    const f = fragment(summaryHtml(r));
    expect(f.querySelectorAll('.katex').length).toBeGreaterThanOrEqual(2);
    expect(Array.from(f.querySelectorAll('annotation')).map((a) => a.textContent)).toContainEqual(expect.stringMatching(/^H_0 = \d+\.\d+ \\pm /));
    const outside = Array.from(f.querySelectorAll('*')).filter(
      (e) => !e.closest('.katex') && !ALLOWED.has(e.tagName.toLowerCase()) && !e.classList.contains('katex'),
    );
    expect(outside.map((e) => e.tagName)).toEqual([]);
    expect(f.querySelectorAll('script, [onclick], [onerror]').length).toBe(0);
  });
});
