/**
 * SVG to PNG with resvg, at the SVG's own size, on a white background, with the
 * pinned font only (system fonts off, so the output does not depend on the
 * machine; resvg would otherwise pick the first system font it finds).
 */
import { Resvg } from '@resvg/resvg-js';
import { FONT_FAMILY, FONT_FILE } from './fonts.ts';

export function svgToPng(svgText: string): Buffer {
  const resvg = new Resvg(svgText, {
    background: 'white',
    fitTo: { mode: 'original' },
    font: {
      loadSystemFonts: false,
      fontFiles: [FONT_FILE],
      defaultFontFamily: FONT_FAMILY,
      sansSerifFamily: FONT_FAMILY,
    },
    shapeRendering: 2,
    textRendering: 1,
  });
  return resvg.render().asPng();
}

/** Width and height from a PNG's IHDR chunk (PNG spec, ISO/IEC 15948: signature, then IHDR first). */
export function pngSize(png: Uint8Array): { width: number; height: number } {
  const signature = [0x89, 0x50, 0x4e, 0x47, 0x0d, 0x0a, 0x1a, 0x0a];
  if (png.length < 24 || signature.some((b, i) => png[i] !== b)) throw new Error('not a PNG: bad signature');
  const type = String.fromCharCode(png[12]!, png[13]!, png[14]!, png[15]!);
  if (type !== 'IHDR') throw new Error(`not a PNG: first chunk is ${type}, expected IHDR`);
  const view = new DataView(png.buffer, png.byteOffset, png.byteLength);
  return { width: view.getUint32(16), height: view.getUint32(20) };
}
