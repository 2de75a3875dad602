/**
 * Builds the committed demo report as a user does (`rungbook build`): the real calibration
 * and the real comparisons, into a fresh temporary folder. Slower than the fixture build
 * (about 15 to 30 s), so the demo-site tests share one build per test file.
 */
import { readFileSync } from 'node:fs';
import { join } from 'node:path';
import { JSDOM } from 'jsdom';
import { calibrateReleaseDir } from '../../src/cli/calibrate.ts';
import type { BuildReportOptions } from '../../src/report/build.ts';
import { DEMO_RELEASES } from '../trust/releaseCopy.ts';
import { buildInTemp, type FixtureBuild } from './fixtureBuild.ts';

export { DEMO_RELEASES };
/** Pairs compared in the report: each release with its `previous` (release.yaml). */
export const DEMO_PAIRS = [
  ['2026.1', '2026.2'],
  ['2026.2', '2026.3'],
  ['2026.3', '2026.4'],
] as const;
export const BASE = '/collab/ladder/';
export const SITE = 'https://reports.example.org';
export const DEMO_BUILD_TIMEOUT_MS = 400_000;

export interface DemoBuild extends FixtureBuild {
  /** Text of a built file, path relative to the site root. */
  text: (rel: string) => string;
  /** Parsed page, parsed once. */
  doc: (rel: string) => Document;
}

export async function buildDemo(over: Partial<BuildReportOptions> = {}, tmp?: string): Promise<DemoBuild> {
  const built = await buildInTemp('rungbook-demo-site-', { releasesDir: DEMO_RELEASES, base: BASE, site: SITE, calibrate: calibrateReleaseDir }, over, tmp);
  const docs = new Map<string, Document>();
  const text = (rel: string) => readFileSync(join(built.dist, rel), 'utf8');
  const doc = (rel: string) => {
    let d = docs.get(rel);
    if (!d) docs.set(rel, (d = new JSDOM(text(rel)).window.document));
    return d;
  };
  return { ...built, text, doc };
}

/** Numbers written with the typographic minus the pages use, read back. */
export function pageNumber(s: string): number {
  return Number(s.replace(/\u2212/g, '-').replace(/[^0-9eE+.-]/g, ''));
}
