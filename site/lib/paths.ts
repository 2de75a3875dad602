/**
 * Where the generated files and the method notes are: the build's settings
 * (src/layout/settings.ts), which `rungbook build` hands to the Astro process.
 */
import { buildSettings } from '../../src/layout/settings.ts';

export const { genDir, methodsDir, guideDir } = buildSettings({}, process.env);
