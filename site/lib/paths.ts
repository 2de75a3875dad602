/**
 * Where the generated files and the method notes are. astro.config.mjs sets
 * both variables to absolute paths before any page runs.
 */
export const genDir: string = process.env.RUNGBOOK_GEN_DIR ?? `${process.cwd()}/.build/gen`;
export const methodsDir: string = process.env.RUNGBOOK_METHODS_DIR ?? `${process.cwd()}/content/methods`;
