/**
 * The settings of a report build, resolved in one place: where the releases are, where the site
 * goes, the work and cache folders, the method notes, the base path and the site origin. Given
 * values (command-line options, a caller's options) win over the environment, which wins over
 * the defaults. Relative folders are taken from the working directory, as a shell user expects
 * (so are the default releases and output folders, content/releases and dist); the work, cache
 * and method-note folders default to the repository's.
 *
 * `rungbook build` resolves them once (src/cli/build.ts) and the page builder (build.ts) uses
 * them as they are. The Astro build runs in a process of its own (astroBuild.ts): it receives
 * them as the environment `settingsEnv` writes, and astro.config.mjs and site/lib/paths.ts read
 * that back with `buildSettings` again, so a plain `npx astro build` (settings only from the
 * environment) and `rungbook build` agree. This module knows neither Astro nor the physics.
 */
import { isAbsolute, join, resolve } from 'node:path';
import { fileURLToPath } from 'node:url';
import { normaliseBase } from './routes.ts';

/** The repository (Astro's root; default folders live under it). */
export const REPO_ROOT = fileURLToPath(new URL('../../', import.meta.url));

/** Where the report is published when nothing is configured (also `rungbook diff`'s default). */
export const DEFAULT_SITE = 'http://localhost/';

/** The environment variables a build reads (and the Astro process is given). */
export const SETTINGS_ENV = {
  base: 'RUNGBOOK_BASE',
  site: 'RUNGBOOK_SITE',
  outDir: 'RUNGBOOK_OUT_DIR',
  genDir: 'RUNGBOOK_GEN_DIR',
  methodsDir: 'RUNGBOOK_METHODS_DIR',
  guideDir: 'RUNGBOOK_GUIDE_DIR',
} as const;

export interface BuildSettings {
  /** The repository: Astro's root, and the home of the default folders. */
  root: string;
  /** Folder with one subfolder per release. */
  releasesDir: string;
  /** Where the static report goes (replaced only when a build succeeds). */
  outDir: string;
  /** Generated files and Astro's cache: <workDir>/gen and <workDir>/astro-cache. */
  workDir: string;
  /** Generated pages, figures and downloads (src/report/generate.ts). */
  genDir: string;
  /** Astro's cache folder. */
  astroCacheDir: string;
  /** Cache of results.json files, comparisons and leave-one-out refits; null: none. */
  cacheDir: string | null;
  /** Authored method notes. */
  methodsDir: string;
  /** Authored guide pages (the input contract), published with the report. */
  guideDir: string;
  /** Path prefix on the server, in its one normal form "/a/b/" (src/layout/routes.ts). */
  base: string;
  /** Origin of the server, for absolute links (figure previews, the messages to paste). */
  site: string;
}

/** What a caller may give; anything left out comes from the environment, then the defaults. */
export interface BuildSettingsGiven {
  releasesDir?: string;
  outDir?: string;
  workDir?: string;
  /** null: no cache. */
  cacheDir?: string | null;
  methodsDir?: string;
  guideDir?: string;
  base?: string;
  site?: string;
}

type Env = Readonly<Record<string, string | undefined>>;

/** The settings of a build: `given` over the environment over the defaults. */
export function buildSettings(given: BuildSettingsGiven = {}, env: Env = {}): BuildSettings {
  const abs = (p: string) => (isAbsolute(p) ? p : resolve(p));
  const pick = (value: string | undefined, key: keyof typeof SETTINGS_ENV): string | undefined => value ?? env[SETTINGS_ENV[key]];
  const workDir = abs(given.workDir ?? join(REPO_ROOT, '.build'));
  const genDir = abs(pick(undefined, 'genDir') ?? join(workDir, 'gen'));
  return {
    root: REPO_ROOT,
    releasesDir: abs(given.releasesDir ?? 'content/releases'),
    outDir: abs(pick(given.outDir, 'outDir') ?? 'dist'),
    workDir,
    genDir,
    astroCacheDir: join(genDir, '..', 'astro-cache'),
    cacheDir: given.cacheDir === null ? null : abs(given.cacheDir ?? join(REPO_ROOT, '.cache', 'results')),
    methodsDir: abs(pick(given.methodsDir, 'methodsDir') ?? join(REPO_ROOT, 'content', 'methods')),
    guideDir: abs(pick(given.guideDir, 'guideDir') ?? join(REPO_ROOT, 'content', 'guide')),
    base: normaliseBase(pick(given.base, 'base')),
    site: pick(given.site, 'site') ?? DEFAULT_SITE,
  };
}

/** The environment that gives `buildSettings` these settings back (the Astro process's). */
export function settingsEnv(s: BuildSettings): Record<string, string> {
  return {
    [SETTINGS_ENV.base]: s.base,
    [SETTINGS_ENV.site]: s.site,
    [SETTINGS_ENV.outDir]: s.outDir,
    [SETTINGS_ENV.genDir]: s.genDir,
    [SETTINGS_ENV.methodsDir]: s.methodsDir,
    [SETTINGS_ENV.guideDir]: s.guideDir,
  };
}
