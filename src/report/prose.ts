/**
 * Generated prose as HTML: the summary paragraph of a release and its release
 * notes, each built as a Markdown syntax tree (mdast), turned into an HTML tree
 * (hast, mdast-util-to-hast), cleaned with an allow-list (hast-util-sanitize)
 * and written out as an HTML string (hast-util-to-html), which the build stores
 * as data (JSON) and a page inserts as it is.
 *
 * Nothing here is ever compiled: no string of a release reaches MDX, a template
 * or an expression (a paragraph that begins with `import` or `export` in MDX is
 * an ES module statement and runs when the site is built; DEVELOPERS.md, "Data
 * never becomes code"). Math in the summary is typeset here with KaTeX, from
 * numbers only.
 *
 * Release notes are authored Markdown from the release folder. They are parsed
 * (CommonMark + GFM, no math: a "$5" stays a dollar sign), then made safe:
 * raw HTML becomes visible text, links keep only http(s), mailto and relative
 * targets, images become links (a report page loads nothing from elsewhere),
 * task-list boxes become the text "[x] " or "[ ] ", headings move two levels
 * down to sit under the page's own headings, and every id is ours
 * ("notes-heading-1", "notes-fn-1"): an id made from the text could repeat an
 * id of the page itself ("main", "top") and break its links.
 */
import type { Element, ElementContent, Root as HastRoot, RootContent as HastContent } from 'hast';
import { sanitize, type Schema } from 'hast-util-sanitize';
import { toHtml } from 'hast-util-to-html';
import katex from 'katex';
import type { FootnoteDefinition, FootnoteReference, Heading, Link, Parent, PhrasingContent, Root, RootContent, Text } from 'mdast';
import { fromMarkdown } from 'mdast-util-from-markdown';
import { gfmFromMarkdown } from 'mdast-util-gfm';
import { toHast, type Handlers } from 'mdast-util-to-hast';
import { gfm } from 'micromark-extension-gfm';
import type { Results } from '../types/results.ts';
import { valueErr } from './format.ts';

// ---------------------------------------------------------------------------
// Syntax tree to HTML.

/** An inline formula of the summary (mdast-util-math's node, built here from numbers only). */
interface InlineMath {
  type: 'inlineMath';
  value: string;
}

/** Class of the placeholder an inline formula becomes before it is typeset (as remark-math's). */
const MATH_CLASS = 'math-inline';

/**
 * What generated prose may contain: the elements Markdown makes, links to safe schemes, table
 * alignment, list start numbers, and the footnote structure of GFM (with ids of ours, checked
 * below). No style, no class (but the formula placeholder where math is allowed), no script,
 * no embedded content, no comments. Every top-level key is given (a missing one would fall
 * back to the library's default).
 */
function proseSchema(math: boolean): Schema {
  return {
    allowComments: false,
    allowDoctypes: false,
    ancestors: { tbody: ['table'], td: ['table'], th: ['table'], thead: ['table'], tr: ['table'] },
    attributes: {
      a: ['href', 'id', 'dataFootnoteRef', 'dataFootnoteBackref', 'ariaDescribedBy', 'ariaLabel'],
      ol: ['start'],
      li: ['id'],
      td: ['align'],
      th: ['align'],
      h3: ['id'],
      section: ['dataFootnotes'],
      ...(math ? { span: [['className', MATH_CLASS]] } : {}),
    },
    clobber: [],
    clobberPrefix: '',
    protocols: { href: ['http', 'https', 'mailto'] },
    required: {},
    strip: ['script', 'style'],
    tagNames: [
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
      ...(math ? ['span'] : []),
    ],
  };
}

const isElement = (n: HastContent | ElementContent | HastRoot): n is Element => n.type === 'element';

function walk(node: HastRoot | Element, visit: (e: Element) => void): void {
  for (const child of node.children) {
    if (!isElement(child)) continue;
    visit(child);
    walk(child, visit);
  }
}

/**
 * Ids of our own on every heading ("<prefix>-heading-<n>", in order) and the footnote label;
 * footnote ids are "<prefix>-fn-<n>" already (footnotes renumbered, clobberPrefix).
 */
function ourIds(tree: HastRoot, prefix: string): void {
  let n = 0;
  const label = `${prefix}-footnote-label`;
  walk(tree, (e) => {
    if (/^h[1-6]$/.test(e.tagName)) e.properties = { ...e.properties, id: e.properties.id === 'footnote-label' ? label : `${prefix}-heading-${(n += 1)}` };
    if (e.properties.ariaDescribedBy !== undefined) e.properties.ariaDescribedBy = [label];
  });
}

/** Options of KaTeX as for the method notes (astro.config.mjs): errors stop the build. */
const KATEX_OPTIONS = { throwOnError: true, strict: 'ignore', output: 'htmlAndMathml', displayMode: false } as const;

/**
 * KaTeX's HTML for a formula of ours (numbers and fixed commands only, see tex()), put in place of
 * the placeholders after sanitising; the tree then holds it as one raw node, written verbatim.
 */
function typesetMath(tree: HastRoot): void {
  const replace = (parent: HastRoot | Element): void => {
    parent.children = parent.children.map((child) => {
      if (!isElement(child)) return child;
      const cls = child.properties.className;
      if (child.tagName === 'span' && Array.isArray(cls) && cls.includes(MATH_CLASS)) {
        const tex = child.children.map((c) => (c.type === 'text' ? c.value : '')).join('');
        return { type: 'raw', value: katex.renderToString(tex, KATEX_OPTIONS) } as unknown as ElementContent;
      }
      replace(child);
      return child;
    }) as typeof parent.children;
  };
  replace(tree);
}

/**
 * HTML of a prose tree: mdast to hast (raw HTML never passed through), sanitised with the
 * allow-list, ids of ours, math typeset when allowed (the summary's own formulas). `prefix`
 * names the prose ("notes", "summary") in its ids.
 */
export function proseHtml(tree: Root, prefix: string, options: { math: boolean }): string {
  const hast = toHast(tree, {
    allowDangerousHtml: false,
    clobberPrefix: `${prefix}-`,
    footnoteLabelTagName: 'h3',
    footnoteLabelProperties: {},
    // A formula of the summary becomes a placeholder holding its TeX as text (the node type is mdast-util-math's).
    handlers: {
      inlineMath: (_state: unknown, node: InlineMath): Element => ({
        type: 'element',
        tagName: 'span',
        properties: { className: [MATH_CLASS] },
        children: [{ type: 'text', value: node.value }],
      }),
    } as unknown as Handlers,
  }) as HastRoot;
  const clean = sanitize(hast, proseSchema(options.math)) as HastRoot;
  ourIds(clean, prefix);
  if (options.math) typesetMath(clean);
  // Raw nodes exist only where typesetMath put KaTeX's output; sanitize removed any other.
  return toHtml(clean, { allowDangerousHtml: options.math });
}

// ---------------------------------------------------------------------------
// Summary paragraph of a release.

const t = (value: string): Text => ({ type: 'text', value });
const m = (value: string): PhrasingContent => ({ type: 'inlineMath', value }) as unknown as PhrasingContent;
const strong = (value: string): PhrasingContent => ({ type: 'strong', children: [t(value)] });

/** A number for LaTeX: ASCII digits, point and minus only. */
function tex(x: string): string {
  const s = x.replace('\u2212', '-');
  if (!/^-?\d+(?:\.\d+)?$/.test(s)) throw new Error(`not a plain number for math: ${JSON.stringify(x)}`);
  return s;
}

const H0_UNIT = String.raw`\,\mathrm{km\,s^{-1}\,Mpc^{-1}}`;

function count(n: number, one: string, many: string): string {
  return `${n} ${n === 1 ? one : many}`;
}

/** The summary of a release as an mdast tree: headline H0 in math, what it rests on, the fit quality. */
export function summaryTree(r: Results): Root {
  const children: RootContent[] = [];
  const anchors = r.rungs.parallax.anchors.length;
  const targets = r.rungs.main_sequence.targets.length;
  const cepheids = r.rungs.cepheids.filter((c) => !c.rejected).length;
  const cepSystems = new Set(r.rungs.cepheids.map((c) => c.system)).size;
  const cal = r.rungs.supernovae.calibrators.filter((s) => !s.rejected).length;
  const flow = r.rungs.supernovae.hubble_flow.filter((s) => s.in_sample && !s.rejected).length;

  if (r.h0 === null) {
    children.push({
      type: 'paragraph',
      children: [
        t(`This release stops at the ${rungName(r.reached)} rung, so it gives no value of `),
        m('H_0'),
        t('. The rungs it reaches are reported in full below.'),
      ],
    });
  } else {
    const v = valueErr(r.h0.value, r.h0.stat);
    const sys = valueErr(r.h0.value, r.h0.sys);
    const tot = valueErr(r.h0.value, r.h0.total);
    const percent = ((100 * r.h0.total) / r.h0.value).toFixed(1);
    const pmStat = String.raw`\pm ${tex(v.err)}\,(\mathrm{stat})`;
    const pmSys = String.raw`\pm ${tex(sys.err)}\,(\mathrm{sys})`;
    if (r.blinded) {
      children.push({
        type: 'paragraph',
        children: [
          strong('BLINDED.'),
          t(' The Hubble-flow magnitudes of this release carry a hidden offset, which scales '),
          m('H_0'),
          t(
            ' and its errors by one unknown factor, so the number below is not the measurement; only relative errors and ratios between variants can be read: ',
          ),
          m(String.raw`H_0^{\mathrm{blinded}} = ${tex(v.value)} ${pmStat} ${pmSys}${H0_UNIT}`),
          t(`, a relative uncertainty of ${percent} %.`),
        ],
      });
    } else {
      children.push({
        type: 'paragraph',
        children: [
          t('This release measures '),
          m(String.raw`H_0 = ${tex(v.value)} ${pmStat} ${pmSys}${H0_UNIT}`),
          t(`, a total uncertainty of ${tot.err.replace('\u2212', '-')} km/s/Mpc (${percent} %).`),
        ],
      });
    }
  }

  const parts = [
    count(anchors, 'geometric anchor', 'geometric anchors'),
    count(targets, 'main-sequence target', 'main-sequence targets'),
    `${count(cepheids, 'Cepheid', 'Cepheids')} in ${count(cepSystems, 'system', 'systems')}`,
  ];
  if (r.rungs.supernovae.calibrators.length > 0) parts.push(count(cal, 'calibrator supernova', 'calibrator supernovae'));
  if (r.rungs.supernovae.hubble_flow.length > 0) parts.push(count(flow, 'Hubble-flow supernova', 'Hubble-flow supernovae'));
  const fit = r.fit;
  children.push({
    type: 'paragraph',
    children: [
      t(
        `It rests on ${parts.slice(0, -1).join(', ')} and ${parts[parts.length - 1]}, after rejecting ${count(fit.n_rejected, 'row', 'rows')}. The global fit has `,
      ),
      m(String.raw`\chi^2 = ${tex(fit.chi2.toFixed(1))}`),
      t(` for ${fit.dof} degrees of freedom (p = ${fit.p_value.toFixed(2)})${fit.converged ? '' : ' and did not converge'}.`),
    ],
  });
  return { type: 'root', children };
}

/** The summary of a release as HTML (its formulas typeset). */
export function summaryHtml(r: Results): string {
  return proseHtml(summaryTree(r), 'summary', { math: true });
}

function rungName(reached: Results['reached']): string {
  const names: Record<Results['reached'], string> = {
    parallax: 'parallax',
    main_sequence: 'main-sequence',
    cepheids: 'Cepheid',
    sn_calibrators: 'supernova-calibrator',
    hubble_flow: 'Hubble-flow',
  };
  return names[reached];
}

// ---------------------------------------------------------------------------
// Release notes.

/** Link targets a note may keep: http(s), mailto, and relative paths or fragments. */
export function isSafeUrl(url: string): boolean {
  // Control characters and blanks are ignored by browsers inside a scheme ("java\tscript:").
  const compact = url.replace(/[\u0000-\u0020\u007f-\u009f]/g, '').toLowerCase();
  const scheme = /^([a-z][a-z0-9+.-]*):/.exec(compact);
  if (scheme === null) return true;
  return ['http', 'https', 'mailto'].includes(scheme[1]!);
}

/** Make a parsed note safe in place (see the module comment). Cost: one pass over the tree. */
const FLOW_CONTAINERS = new Set(['root', 'blockquote', 'listItem', 'footnoteDefinition']);

function sanitise(parent: Parent, footnotes: Map<string, string>): void {
  const flow = FLOW_CONTAINERS.has(parent.type);
  const out: RootContent[] = [];
  for (const node of parent.children as RootContent[]) {
    switch (node.type) {
      case 'html':
        // Shown as text: the reader sees what was written, nothing runs.
        out.push(flow ? { type: 'paragraph', children: [t(node.value)] } : t(node.value));
        continue;
      case 'image': {
        const label = node.alt && node.alt.length > 0 ? `image: ${node.alt}` : `image: ${node.url}`;
        out.push(isSafeUrl(node.url) ? ({ type: 'link', url: node.url, children: [t(label)] } as Link) : t(label));
        continue;
      }
      case 'imageReference':
        out.push(t(node.alt ?? ''));
        continue;
      case 'definition':
        if (!isSafeUrl(node.url)) continue;
        break;
      case 'link':
        if (!isSafeUrl(node.url)) {
          sanitise(node, footnotes);
          out.push(...(node.children as RootContent[]));
          continue;
        }
        break;
      case 'heading':
        (node as Heading).depth = Math.min(6, node.depth + 2) as Heading['depth'];
        break;
      case 'listItem':
        // A task-list box is shown as written ("[x] "), not as a form control.
        if (typeof node.checked === 'boolean') {
          const mark = node.checked ? '[x] ' : '[ ] ';
          const first = node.children[0];
          if (first?.type === 'paragraph') first.children.unshift(t(mark));
          else node.children.unshift({ type: 'paragraph', children: [t(mark)] });
          node.checked = null;
        }
        break;
      case 'footnoteReference':
      case 'footnoteDefinition': {
        // Numbered in order of first appearance, so that the ids made from them are ours.
        const n = footnotes.get(node.identifier) ?? String(footnotes.size + 1);
        footnotes.set(node.identifier, n);
        (node as FootnoteReference | FootnoteDefinition).identifier = n;
        (node as FootnoteReference | FootnoteDefinition).label = n;
        break;
      }
      case 'code':
        node.lang = null;
        node.meta = null;
        break;
      default:
        break;
    }
    if ('children' in node) sanitise(node as Parent, footnotes);
    out.push(node);
  }
  parent.children = out as Parent['children'];
}

/** Parse and sanitise authored release notes; returns null for empty notes. */
export function notesTree(markdown: string): Root | null {
  const source = markdown.replace(/^\uFEFF/, '');
  if (source.trim() === '') return null;
  const tree = fromMarkdown(source, { extensions: [gfm()], mdastExtensions: [gfmFromMarkdown()] });
  sanitise(tree, new Map());
  return tree;
}

/** Authored release notes as safe HTML, or null for empty notes. */
export function notesHtml(markdown: string): string | null {
  const tree = notesTree(markdown);
  return tree === null ? null : proseHtml(tree, 'notes', { math: false });
}
