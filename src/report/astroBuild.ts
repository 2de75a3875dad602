/**
 * Running Astro on the generated files, atomically: the site is built into a
 * temporary folder and moved into place only when the build succeeded, so a
 * failed build leaves the previous site untouched.
 *
 * Astro 5 builds into `<cwd>/.astro/` and then copies when the output folder is
 * outside the working directory (core/build/common.js, getOutDirWithinCwd),
 * which would drop its own cache files into the output. So Astro always builds
 * into a folder inside the repository, with the working directory set to the
 * repository, and the result is then moved to the requested output folder.
 *
 * Astro also writes per-build files into `<root>/.astro/` (the list of content
 * modules to import), so two builds of the same repository at once would read
 * each other's lists. A lock folder makes builds take turns, across processes
 * (src/report/lock.ts); it is taken last, after the build's own work-folder lock
 * (src/report/build.ts), so that two builds never wait for each other in a circle.
 */
import { spawn } from 'node:child_process';
import { cp, mkdir, rename, rm, stat } from 'node:fs/promises';
import { basename, dirname, join } from 'node:path';
import { fileURLToPath } from 'node:url';
import { acquireLock } from './lock.ts';
import { settingsEnv, type BuildSettings } from '../layout/settings.ts';

/** Checks on the finished site before it replaces the previous one; throws to reject it. */
export type VerifySite = (dir: string) => Promise<void>;

/**
 * Variables that a host process (a Vite-based test runner sets BASE_URL=/ and
 * friends) may have put into process.env; Astro's server build lets
 * process.env win over its own import.meta.env values, which would drop the
 * base path from every link. They are not passed to the Astro process.
 */
const HOST_ENV_KEYS = ['BASE_URL', 'MODE', 'DEV', 'PROD', 'SSR', 'SITE', 'ASSETS_PREFIX'] as const;

const ASTRO_CHILD = fileURLToPath(new URL('./astroChild.mjs', import.meta.url));

interface AstroRun {
  root: string;
  /** Astro writes here (a folder inside the repository; see above). */
  outDir: string;
  /** The environment that carries the build's settings to astro.config.mjs and site/ (src/layout/settings.ts). */
  env: Record<string, string>;
}

/**
 * Run Astro's build in a child process (src/report/astroChild.mjs): its memory, working
 * directory and environment are its own. Its warnings pass through to this process's stderr;
 * a failure rejects with what it wrote there.
 */
function runAstro(run: AstroRun): Promise<void> {
  const env: NodeJS.ProcessEnv = { ...process.env, ...run.env };
  for (const k of HOST_ENV_KEYS) delete env[k];
  const { env: _, ...options } = run;
  return new Promise((resolve, reject) => {
    const child = spawn(process.execPath, [ASTRO_CHILD, JSON.stringify(options)], { cwd: run.root, env, stdio: ['ignore', 'pipe', 'pipe'] });
    let stderr = '';
    child.stdout.on('data', (d: Buffer) => process.stderr.write(d));
    child.stderr.on('data', (d: Buffer) => {
      stderr += d.toString();
      process.stderr.write(d);
    });
    child.on('error', reject);
    child.on('close', (code, signal) => {
      if (code === 0) resolve();
      else reject(new Error(`the Astro build stopped (${signal ?? `exit code ${code}`}): ${stderr.trim().split('\n').slice(-20).join('\n') || 'no message'}`));
    });
  });
}

async function exists(p: string): Promise<boolean> {
  try {
    await stat(p);
    return true;
  } catch {
    return false;
  }
}

/** Move a folder; across file systems, copy then delete. */
async function moveDir(from: string, to: string): Promise<void> {
  try {
    await rename(from, to);
  } catch (e) {
    if ((e as NodeJS.ErrnoException).code !== 'EXDEV') throw e;
    await cp(from, to, { recursive: true });
    await rm(from, { recursive: true, force: true });
  }
}

/** Build the site with the build's settings into `settings.outDir`, replacing it only when the build and `verify` succeed. */
export async function buildSite(settings: BuildSettings, verify?: VerifySite): Promise<void> {
  const release = await acquireLock(join(settings.root, '.build', 'astro.lock'));
  try {
    await buildSiteLocked(settings, verify);
  } finally {
    await release();
  }
}

async function buildSiteLocked(o: BuildSettings, verify: VerifySite | undefined): Promise<void> {
  const scratch = join(o.root, '.build', `astro-out-${process.pid}`);
  const parent = dirname(o.outDir);
  const staged = join(parent, `.${basename(o.outDir)}.building-${process.pid}`);
  const old = join(parent, `.${basename(o.outDir)}.previous-${process.pid}`);
  await rm(scratch, { recursive: true, force: true });
  await rm(staged, { recursive: true, force: true });
  await mkdir(parent, { recursive: true });

  try {
    await runAstro({ root: o.root, outDir: scratch, env: { ...settingsEnv(o), ASTRO_TELEMETRY_DISABLED: '1' } });
    await moveDir(scratch, staged);
    if (verify) await verify(staged);
  } catch (e) {
    await rm(scratch, { recursive: true, force: true });
    await rm(staged, { recursive: true, force: true });
    throw e;
  }

  // Swap: previous site aside, new one in, previous one removed.
  const hadOld = await exists(o.outDir);
  if (hadOld) await rename(o.outDir, old);
  try {
    await rename(staged, o.outDir);
  } catch (e) {
    if (hadOld) await rename(old, o.outDir);
    throw e;
  }
  if (hadOld) await rm(old, { recursive: true, force: true });
}
