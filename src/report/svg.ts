/**
 * Turning a Plot SVG element into a standalone, stable, accessible SVG text.
 *
 * Why each step (see the project's stack notes):
 * - Plot numbers clip/marker/pattern ids from module-global counters, so the
 *   same figure gets different ids depending on render order, and two inlined
 *   figures can collide. Ids are renumbered in document order under a prefix
 *   unique to the figure, and every `url(#…)` / `href="#…"` reference follows.
 * - `outerHTML` lacks `xmlns`, which standalone renderers (resvg) need; the
 *   XML serializer declares it and never emits HTML-only entities like &nbsp;.
 * - Plot puts `aria-label` on inner <g> elements, which axe reports as a
 *   prohibited ARIA attribute; the root gets one label and role="img", the
 *   inner elements are hidden from assistive technology (the page carries a
 *   real caption and text alternative).
 * - Coordinates come at full double precision; two decimals of a pixel are
 *   invisible and keep dense figures light.
 * - The font family is pinned to the TTF that the PNG renderer loads, so the
 *   browser and the PNG use the same family where the reader has it.
 */
import { FONT_FAMILY_ATTRIBUTE } from './fonts.ts';

const GEOMETRY_ATTRIBUTES = new Set([
  'd',
  'transform',
  'x',
  'y',
  'x1',
  'x2',
  'y1',
  'y2',
  'cx',
  'cy',
  'r',
  'rx',
  'ry',
  'width',
  'height',
  'points',
  'dx',
  'dy',
  'stroke-width',
  'viewBox',
]);

const DECIMAL_NUMBER = /-?\d*\.\d+(?:e[-+]?\d+)?/gi;

/** Round every decimal number in an attribute value to 2 places (trailing zeros dropped). */
export function roundNumbers(value: string): string {
  return value.replace(DECIMAL_NUMBER, (m) => {
    const x = Number(m);
    if (!Number.isFinite(x)) return m;
    const r = Math.round(x * 100) / 100;
    return String(Object.is(r, -0) ? 0 : r);
  });
}

export interface FinishOptions {
  /** Font size of the figure's text, px (Plot's own default is 10). */
  fontSizePx?: number;
  /** Stable prefix for ids, unique per figure on a page (the figure id, optionally with the release). */
  idPrefix: string;
  /** Accessible name of the whole figure (short; the long text alternative is on the page). */
  label: string;
}

/**
 * Normalise a rendered Plot <svg> in place and serialise it as XML.
 * Cost: one pass over the element tree plus one string pass per referencing attribute.
 */
export function finishSvg(svg: SVGSVGElement, opts: FinishOptions): string {
  const doc = svg.ownerDocument;
  // No explicit xmlns attribute: the XML serializer declares the SVG namespace itself
  // (setting it as well would write the attribute twice, which is not well-formed XML).
  svg.removeAttribute('xmlns');
  svg.setAttribute('font-family', FONT_FAMILY_ATTRIBUTE);
  if (opts.fontSizePx !== undefined) svg.setAttribute('font-size', String(opts.fontSizePx));
  // Presentation attributes only: resvg ignores parts of CSS (the `font` shorthand), so no inline style.
  svg.removeAttribute('style');
  svg.setAttribute('role', 'img');
  svg.setAttribute('aria-label', opts.label);
  svg.removeAttribute('aria-description');

  const all = Array.from(svg.querySelectorAll('*'));

  // 1. Stable ids in document order.
  const idMap = new Map<string, string>();
  let n = 0;
  for (const el of all) {
    const id = el.getAttribute('id');
    if (id !== null) {
      n += 1;
      const fresh = `${opts.idPrefix}-${n}`;
      idMap.set(id, fresh);
      el.setAttribute('id', fresh);
    }
  }

  for (const el of all) {
    // 2. ARIA: inner elements are decoration for assistive technology.
    el.removeAttribute('aria-label');
    el.removeAttribute('aria-description');
    if (el.parentNode === svg && el.tagName.toLowerCase() !== 'style') el.setAttribute('aria-hidden', 'true');

    for (const attr of Array.from(el.attributes)) {
      let value = attr.value;
      // 3. References to renamed ids.
      if (idMap.size > 0 && value.includes('#')) {
        value = value.replace(/url\(#([^)]+)\)/g, (m, id: string) => (idMap.has(id) ? `url(#${idMap.get(id)})` : m));
        if ((attr.name === 'href' || attr.name === 'xlink:href') && value.startsWith('#') && idMap.has(value.slice(1))) {
          value = `#${idMap.get(value.slice(1))}`;
        }
      }
      // 4. Rounded geometry.
      if (GEOMETRY_ATTRIBUTES.has(attr.name)) value = roundNumbers(value);
      if (value !== attr.value) el.setAttribute(attr.name, value);
    }
  }
  const serializer = new (doc.defaultView as unknown as { XMLSerializer: typeof XMLSerializer }).XMLSerializer();
  return serializer.serializeToString(svg);
}

/** Read width and height of a serialised SVG root (pixels). */
export function svgSize(svgText: string): { width: number; height: number } {
  const open = /<svg\b[^>]*>/.exec(svgText);
  if (!open) throw new Error('not an SVG document: no <svg> element');
  const w = /\swidth="([\d.]+)"/.exec(open[0]);
  const h = /\sheight="([\d.]+)"/.exec(open[0]);
  if (!w || !h) throw new Error('SVG root has no numeric width/height');
  return { width: Number(w[1]), height: Number(h[1]) };
}
