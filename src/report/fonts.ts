/**
 * The one font of the figures. The PNG renderer (resvg) loads exactly this TTF
 * and no system font, so a PNG looks the same on every machine; the SVG names
 * the same family so a browser that has it uses it too.
 * DejaVu Sans 2.37 (Debian package fonts-dejavu-core), Bitstream Vera licence
 * with public-domain DejaVu changes: see fonts/LICENSE-DejaVu.txt.
 */
import { fileURLToPath } from 'node:url';

export const FONT_FAMILY = 'DejaVu Sans';
/** Value of the SVG font-family attribute: the pinned family, then a generic fallback. */
export const FONT_FAMILY_ATTRIBUTE = `${FONT_FAMILY}, sans-serif`;
export const FONT_FILE = fileURLToPath(new URL('./fonts/DejaVuSans.ttf', import.meta.url));
