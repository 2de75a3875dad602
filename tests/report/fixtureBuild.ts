/**
 * Builds the fixture report (tests/fixtures/report) into a fresh temporary
 * folder. The calibration is the fixture's fake one (synthetic results.json);
 * the method notes are the committed ones under content/methods.
 */
import { mkdtemp } from 'node:fs/promises';
import { tmpdir } from 'node:os';
import { join } from 'node:path';
import { fileURLToPath } from 'node:url';
import { buildReport, type BuildReportOptions, type BuildSummary } from '../../src/report/build.ts';
import { calibrateFixture } from '../fixtures/report/syntheticResults.ts';

export const FIXTURE_RELEASES = fileURLToPath(new URL('../fixtures/report/releases/', import.meta.url));
export const FIXTURE_IDS = ['2025.4', '2026.1', '2026.2'];
export const BASE = '/reports/h0/';
export const SITE = 'https://intranet.example.org';

export interface FixtureBuild {
  tmp: string;
  dist: string;
  workDir: string;
  cacheDir: string;
  summary: BuildSummary;
}

/**
 * Build a report into a fresh temporary folder (or `tmp`): dist/, work/ and cache/ inside it.
 * `defaults` are a test file's options, `over` a test's changes to them.
 */
export async function buildInTemp(
  prefix: string,
  defaults: Omit<BuildReportOptions, 'outDir'>,
  over: Partial<BuildReportOptions> = {},
  tmp?: string,
): Promise<FixtureBuild> {
  const dir = tmp ?? (await mkdtemp(join(tmpdir(), prefix)));
  const opts: BuildReportOptions = {
    outDir: join(dir, 'dist'),
    workDir: join(dir, 'work'),
    cacheDir: join(dir, 'cache'),
    progress: false,
    ...defaults,
    ...over,
  };
  const summary = await buildReport(opts);
  return { tmp: dir, dist: opts.outDir, workDir: opts.workDir!, cacheDir: opts.cacheDir!, summary };
}

export function buildFixture(over: Partial<BuildReportOptions> = {}, tmp?: string): Promise<FixtureBuild> {
  return buildInTemp(
    'rungbook-report-',
    {
      releasesDir: FIXTURE_RELEASES,
      base: BASE,
      site: SITE,
      calibrate: calibrateFixture,
      // The fixture releases hold no data tables: their comparison pages say the comparison was not computed.
      compare: null,
      // ... and no leave-one-out refits (nothing to refit).
      leaveOneOut: null,
    },
    over,
    tmp,
  );
}
