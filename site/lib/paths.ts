/**
 * Where the generated files and the method notes are: the build's settings
 * (src/report/settings.ts), which `rungbook build` hands to the Astro process.
 */
import { buildSettings } from '../../src/report/settings.ts';

export const { genDir, methodsDir } = buildSettings({}, process.env);
