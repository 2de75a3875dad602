/**
 * `rungbook diff <release-a> <release-b> [--format text|markdown|json] [--site URL] [--base PATH]
 *  [--workers N|auto] [--progress]`: what changed between two releases and what moved H0.
 * --workers: threads for the recalibrations (default auto: two for large releases, none for
 * small ones, see AUTO_WORKERS_MIN_ROWS in src/diff/compare.ts).
 * Exit 0 whether or not anything changed; 1 for invalid input (either release); 2 usage.
 * The comparison goes to stdout; progress (on a terminal, or with --progress) to stderr.
 */
import { compareReleaseDirs } from '../diff/compare.ts';
import { renderMarkdown, renderText } from '../diff/render.ts';
import { DEFAULT_SITE } from '../layout/settings.ts';
import { parseArgs, UsageError, type CliIO } from './output.ts';

export const DIFF_USAGE =
  'usage: rungbook diff <release-a> <release-b> [--format text|markdown|json] [--site URL] [--base PATH] [--workers N|auto] [--progress]';

const FORMATS = ['text', 'markdown', 'json'] as const;
type Format = (typeof FORMATS)[number];

/** Where the report is published when nothing is configured (the same default as `rungbook build`). */
export { DEFAULT_SITE };

export interface DiffIO extends CliIO {
  env?: Record<string, string | undefined>;
  stderrIsTTY?: boolean;
}

export async function runDiff(args: string[], io: DiffIO): Promise<number> {
  const { positional, values, flags } = parseArgs(args, { values: ['format', 'site', 'base', 'workers'], flags: ['progress'] });
  if (positional.length !== 2) throw new UsageError(DIFF_USAGE);
  const format = (values.format ?? 'text') as Format;
  if (!FORMATS.includes(format)) throw new UsageError(`--format must be one of ${FORMATS.join(', ')}, found ${JSON.stringify(values.format)}`);
  let workers: number | 'auto' = 'auto';
  if (values.workers !== undefined && values.workers !== 'auto') {
    if (!/^\d+$/.test(values.workers))
      throw new UsageError(`--workers must be a whole number (0: no worker threads) or auto, found ${JSON.stringify(values.workers)}`);
    workers = Number(values.workers);
  }
  const env = io.env ?? process.env;
  const siteGiven = values.site ?? env.RUNGBOOK_SITE;
  if (siteGiven !== undefined) {
    let ok: boolean;
    try {
      const u = new URL(siteGiven);
      ok = u.protocol === 'http:' || u.protocol === 'https:';
    } catch {
      ok = false;
    }
    if (!ok) throw new UsageError(`--site (or RUNGBOOK_SITE) must be an http(s) URL, found ${JSON.stringify(siteGiven)}`);
  }
  if (format === 'markdown' && siteGiven === undefined) {
    io.stderr(`rungbook diff: no site URL configured (--site or RUNGBOOK_SITE); links use ${DEFAULT_SITE}\n`);
  }
  const showProgress = flags.has('progress') || (io.stderrIsTTY ?? process.stderr.isTTY === true);
  const report = await compareReleaseDirs(positional[0], positional[1], {
    workers,
    site: siteGiven ?? DEFAULT_SITE,
    base: values.base ?? env.RUNGBOOK_BASE,
    progress: showProgress ? (line) => io.stderr(`rungbook diff: ${line}\n`) : undefined,
  });
  if (format === 'json') io.stdout(`${JSON.stringify(report, null, 2)}\n`);
  else if (format === 'markdown') io.stdout(renderMarkdown(report));
  else io.stdout(renderText(report));
  return 0;
}
