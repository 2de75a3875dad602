/**
 * `rungbook build [--releases DIR] [--out DIR] [--base PATH] [--site URL] [--progress]`
 *
 * Calibrates every release under DIR (default content/releases), writes the
 * generated pages and figures, and builds the static report into --out
 * (default dist). Progress on stderr only on a terminal or with --progress;
 * the summary on stdout. Exit codes: 0 built, 1 a release or the build failed,
 * 2 usage error.
 */
import { resolve } from 'node:path';
import { formatIssue, InputError } from '../types/issues.ts';
import type { CompareDirs } from '../report/build.ts';
import type { Results } from '../types/results.ts';

/** Same shape as the command line's CliIO (src/cli/output.ts), plus optional test hooks. */
export interface BuildIo {
  stdout: (s: string) => void;
  stderr: (s: string) => void;
  /** Whether stderr is a terminal (default: process.stderr.isTTY). */
  stderrIsTTY?: boolean;
  /** Environment (RUNGBOOK_BASE and RUNGBOOK_SITE give defaults for --base and --site). */
  env?: Record<string, string | undefined>;
  /** Calibration to use instead of the real one (for tests). */
  calibrate?: (releaseDir: string) => Promise<Results>;
  /** Comparison to use instead of the real one; null: none (for tests whose releases hold no tables). */
  compare?: CompareDirs | null;
  /** Folders for generated files and cached results (for tests; defaults under the repository). */
  workDir?: string;
  cacheDir?: string;
}

export const BUILD_USAGE = `usage: rungbook build [--releases DIR] [--out DIR] [--base PATH] [--site URL] [--progress]

  --releases DIR  folder with one subfolder per data release (default content/releases)
  --out DIR       where the static report goes (default dist); replaced only when the build succeeds
  --base PATH     path prefix on the web server, e.g. /reports/h0/ (default /, or RUNGBOOK_BASE)
  --site URL      origin of the web server, for preview images in links (default http://localhost/, or RUNGBOOK_SITE)
  --progress      print progress on stderr even when it is not a terminal
`;

interface BuildArgs {
  releases: string;
  out: string;
  base: string | undefined;
  site: string | undefined;
  progress: boolean;
}

class UsageError extends Error {}

export function parseBuildArgs(args: readonly string[]): BuildArgs {
  const out: BuildArgs = { releases: 'content/releases', out: 'dist', base: undefined, site: undefined, progress: false };
  for (let i = 0; i < args.length; i++) {
    const a = args[i]!;
    const [flag, inline] = a.startsWith('--') && a.includes('=') ? [a.slice(0, a.indexOf('=')), a.slice(a.indexOf('=') + 1)] : [a, undefined];
    const value = (): string => {
      const v = inline ?? args[++i];
      if (v === undefined || v === '' || (inline === undefined && v.startsWith('--'))) throw new UsageError(`${flag} needs a value`);
      return v;
    };
    switch (flag) {
      case '--releases':
        out.releases = value();
        break;
      case '--out':
        out.out = value();
        break;
      case '--base':
        out.base = value();
        break;
      case '--site': {
        const v = value();
        try {
          const u = new URL(v);
          if (u.protocol !== 'http:' && u.protocol !== 'https:') throw new Error('scheme');
        } catch {
          throw new UsageError(`--site must be an http(s) URL, found ${JSON.stringify(v)}`);
        }
        out.site = v;
        break;
      }
      case '--progress':
        if (inline !== undefined) throw new UsageError('--progress takes no value');
        out.progress = true;
        break;
      case '-h':
      case '--help':
        throw new UsageError('');
      default:
        throw new UsageError(`unknown argument ${JSON.stringify(a)}`);
    }
  }
  return out;
}

type CalibrateDir = (dir: string) => Promise<Results>;

/** The real calibration, loaded only when a build needs it. */
async function defaultCalibrate(): Promise<CalibrateDir> {
  return (await import('./calibrate.ts')).calibrateReleaseDir;
}

export async function runBuild(args: readonly string[], io: BuildIo): Promise<number> {
  let parsed: BuildArgs;
  try {
    parsed = parseBuildArgs(args);
  } catch (e) {
    if (e instanceof UsageError) {
      if (e.message) io.stderr(`rungbook build: ${e.message}\n`);
      io.stderr(BUILD_USAGE);
      return e.message ? 2 : 0;
    }
    throw e;
  }
  const env = io.env ?? process.env;
  const isTTY = io.stderrIsTTY ?? process.stderr.isTTY === true;
  const progress = parsed.progress || (isTTY && env.CI !== 'true');
  try {
    const calibrate = io.calibrate ?? (await defaultCalibrate());
    const { buildReport } = await import('../report/build.ts');
    // The build's settings, read once: options over the environment over the defaults (src/layout/settings.ts).
    const { buildSettings } = await import('../layout/settings.ts');
    const settings = buildSettings({ releasesDir: parsed.releases, outDir: parsed.out, base: parsed.base, site: parsed.site }, env);
    const summary = await buildReport({
      releasesDir: settings.releasesDir,
      outDir: settings.outDir,
      base: settings.base,
      site: settings.site,
      progress,
      progressStream: { write: (s: string) => io.stderr(s) },
      calibrate,
      ...(io.compare !== undefined ? { compare: io.compare } : {}),
      ...(io.workDir !== undefined ? { workDir: io.workDir } : {}),
      ...(io.cacheDir !== undefined ? { cacheDir: io.cacheDir } : {}),
    });
    const mb = (n: number) => `${(n / 1e6).toFixed(2)} MB`;
    io.stdout(
      `Built ${summary.releases.length} release${summary.releases.length === 1 ? '' : 's'} (${summary.releases.map((r) => `${r.id}${r.cached ? ' cached' : ''}`).join(', ')}) into ${summary.outDir}\n` +
        `${summary.pages} pages, ${summary.files} files, ${mb(summary.bytes)}; largest page ${summary.largestPage ? `${summary.largestPage.path} (${(summary.largestPage.bytes / 1024).toFixed(0)} KB)` : '—'}\n` +
        `${summary.comparisons.length} comparison${summary.comparisons.length === 1 ? '' : 's'} with the previous release${summary.comparisons.length ? ` (${summary.comparisons.map((c) => `${c.a} -> ${c.b}${c.cached ? ' cached' : ''}`).join(', ')})` : ''}\n` +
        `time: calibration ${(summary.timingsMs.calibrate / 1000).toFixed(1)} s, comparisons ${(summary.timingsMs.compare / 1000).toFixed(1)} s, leave-one-out ${(summary.timingsMs.leaveOneOut / 1000).toFixed(1)} s, pages and figures ${(summary.timingsMs.generate / 1000).toFixed(1)} s, site ${(summary.timingsMs.site / 1000).toFixed(1)} s\n`,
    );
    return 0;
  } catch (e) {
    // Input problems of a release are listed in full, one per line (file:line: column ...).
    const cause = e instanceof Error ? e.cause : undefined;
    if (cause instanceof InputError) {
      for (const issue of cause.issues) io.stderr(`${formatIssue(issue)}\n`);
      if (cause.omitted > 0) io.stderr(`... and ${cause.omitted} more problems\n`);
    }
    const message = e instanceof Error ? e.message : String(e);
    io.stderr(`rungbook build: ${message}\n`);
    // Builds are atomic (src/report/workState.ts, src/report/astroBuild.ts): say so, since a reader's first worry is the old report.
    io.stderr(`rungbook build: nothing was changed: the previous report in ${resolve(parsed.out)} and the build caches were left as they were\n`);
    return 1;
  }
}
