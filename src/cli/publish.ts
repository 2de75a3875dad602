/**
 * `rungbook publish <release-dir> [--by NAME] [--date YYYY-MM-DD]`: freeze the
 * release's results as circulated. Calibrates the release and writes
 * `<release-dir>/published.json` (results, code version, date, publisher and the
 * SHA-256 of every file; src/io/publishedRecord.ts). Afterwards `check`, `calibrate`
 * and `build` refuse the folder if any of its files changes, and the report
 * shows the published numbers, with a notice if the current code moves any.
 * The date defaults to today (UTC). Exit 0 published, 1 refused, 2 usage.
 */
import { join } from 'node:path';
import { normaliseDate } from '../io/manifest.ts';
import { publishRelease } from '../publish/publish.ts';
import { PUBLISHED_FILE } from '../io/publishedRecord.ts';
import { parseArgs, UsageError, type CliIO } from './output.ts';

const USAGE = 'usage: rungbook publish <release-dir> [--by NAME] [--date YYYY-MM-DD]';

export async function runPublish(args: string[], io: CliIO): Promise<number> {
  const { positional, values } = parseArgs(args, { values: ['by', 'date'] });
  if (positional.length !== 1) throw new UsageError(USAGE);
  const date = values.date === undefined ? new Date().toISOString().slice(0, 10) : normaliseDate(values.date);
  if (date === undefined) throw new UsageError(`--date must be a day as YYYY-MM-DD, found ${JSON.stringify(values.date)}`);
  const by = values.by === undefined ? null : values.by.trim();
  if (by === '') throw new UsageError('--by needs a name');
  const dir = positional[0]!;
  const { calibrateReleaseDir } = await import('./calibrate.ts');
  const record = await publishRelease(dir, { date, by, calibrate: calibrateReleaseDir });
  const r = record.results;
  const h0 = r.h0
    ? `H0 = ${r.h0.value.toFixed(2)} ± ${r.h0.stat.toFixed(2)} (stat) ± ${r.h0.sys.toFixed(2)} (sys) km/s/Mpc`
    : `no H0 (the ladder stops at the ${r.reached.replace('_', ' ')} rung)`;
  io.stdout(
    `Published release ${record.release} on ${record.published_on}${by ? ` by ${by}` : ''}: ${h0}, computed by code ${record.code_version}.\n` +
      `${record.files.length} files recorded with their SHA-256 in ${join(dir, PUBLISHED_FILE)}.\n` +
      `From now on check, calibrate and build refuse this folder if any of its files changes.\n`,
  );
  return 0;
}
