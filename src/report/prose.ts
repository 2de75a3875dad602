/**
 * Generated prose as MDX, built as a Markdown syntax tree (mdast) and
 * serialised with the MDX, math and GFM extensions of mdast-util-to-markdown.
 * The serialiser escapes `<`, `{`, `$`, backticks and table pipes, so no data
 * value can become JSX, an expression or math (see the stack notes, items 6-7).
 * Math in the summary is built by this module from numbers only.
 *
 * Release notes are authored Markdown from the release folder. They are parsed
 * (CommonMark + GFM, no math: a "$5" stays a dollar sign), then made safe:
 * raw HTML becomes visible text, links keep only http(s), mailto and relative
 * targets, images become links (a report page loads nothing from elsewhere),
 * and headings move two levels down to sit under the page's own headings.
 */
import type { Heading, Link, Parent, PhrasingContent, Root, RootContent, Text } from 'mdast';
import { fromMarkdown } from 'mdast-util-from-markdown';
import { gfmFromMarkdown, gfmToMarkdown } from 'mdast-util-gfm';
import { mathToMarkdown } from 'mdast-util-math';
import { mdxToMarkdown } from 'mdast-util-mdx';
import { toMarkdown } from 'mdast-util-to-markdown';
import { gfm } from 'micromark-extension-gfm';
import type { Results } from '../types/results.ts';
import { valueErr } from './format.ts';
import { GENERATED_MARK } from './types.ts';

/** Serialise a tree to MDX text, first line the generated mark (an MDX comment, which renders nothing). */
export function toMdx(tree: Root): string {
  const body = toMarkdown(tree, {
    extensions: [mdxToMarkdown(), mathToMarkdown(), gfmToMarkdown()],
    bullet: '-',
    emphasis: '_',
    strong: '*',
    fences: true,
    rule: '-',
  });
  return `{/* ${GENERATED_MARK} */}\n\n${body}`;
}

// ---------------------------------------------------------------------------
// Summary paragraph of a release.

const t = (value: string): Text => ({ type: 'text', value });
const m = (value: string): PhrasingContent => ({ type: 'inlineMath', value }) as PhrasingContent;
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
          t(' and its errors by one unknown factor, so the number below is not the measurement; only relative errors and ratios between variants can be read: '),
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
      t(`It rests on ${parts.slice(0, -1).join(', ')} and ${parts[parts.length - 1]}, after rejecting ${count(fit.n_rejected, 'row', 'rows')}. The global fit has `),
      m(String.raw`\chi^2 = ${tex(fit.chi2.toFixed(1))}`),
      t(` for ${fit.dof} degrees of freedom (p = ${fit.p_value.toFixed(2)})${fit.converged ? '' : ' and did not converge'}.`),
    ],
  });
  return { type: 'root', children };
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

function sanitise(parent: Parent): void {
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
          sanitise(node);
          out.push(...(node.children as RootContent[]));
          continue;
        }
        break;
      case 'heading':
        (node as Heading).depth = Math.min(6, node.depth + 2) as Heading['depth'];
        break;
      default:
        break;
    }
    if ('children' in node) sanitise(node as Parent);
    out.push(node);
  }
  parent.children = out as Parent['children'];
}

/** Parse and sanitise authored release notes; returns null for empty notes. */
export function notesTree(markdown: string): Root | null {
  const source = markdown.replace(/^\uFEFF/, '');
  if (source.trim() === '') return null;
  const tree = fromMarkdown(source, { extensions: [gfm()], mdastExtensions: [gfmFromMarkdown()] });
  sanitise(tree);
  return tree;
}

