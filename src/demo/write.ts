/**
 * Write generated releases to disk: the committed demo releases (no truth file)
 * and throw-away releases for recovery tests and benchmarks (with truth.json).
 */
import { mkdirSync, writeFileSync } from 'node:fs';
import { join, resolve, sep } from 'node:path';
import { observeRelease, type ObservedRelease } from './observe.ts';
import { cleanReleaseSpec, DEMO_HUBBLE_FLOW_POOL, demoReleaseSpecs } from './releases.ts';
import type { DemoAnalysis, DemoVariant, ReleaseSpec } from './spec.ts';
import type { ReleaseTruth } from './truth.ts';
import { generateUniverse, type UniverseOptions } from './universe.ts';
import type { TableName } from '../types/release.ts';

/**
 * Generate the four demo releases (2026.1 to 2026.4) from one universe, as observed:
 * a release with `blindForPublication` (2026.4) comes back unblinded, and only its
 * blinded form may be published (scripts/generate-demo.ts blinds it before writing).
 */
export function generateDemoReleases(seed: number, scale = 1): ObservedRelease[] {
  const universe = generateUniverse(seed, scale, { hubbleFlowPool: DEMO_HUBBLE_FLOW_POOL });
  return demoReleaseSpecs(universe).map((spec) => observeRelease(universe, spec, seed));
}

/** Write a release's files into `dir` (created if needed). Returns the file names written. */
export function writeReleaseFiles(dir: string, files: Record<string, string>): string[] {
  mkdirSync(dir, { recursive: true });
  const names = Object.keys(files).sort();
  for (const name of names) writeFileSync(join(dir, name), files[name]!, 'utf8');
  return names;
}

export interface GeneratedReleaseOptions extends UniverseOptions {
  seed: number;
  /** Multiplies the numbers of rows (default 1). */
  scale?: number;
  /** Which release to observe: 'clean' (default: no planted errors, whole Hubble-flow pool) or a demo id. */
  release?: 'clean' | '2026.1' | '2026.2' | '2026.3' | '2026.4';
  /** Analysis keys to override in release.yaml. */
  analysis?: DemoAnalysis;
  variants?: DemoVariant[];
  /** Number of Hubble-flow SNe to observe (default: the release's own). */
  hubbleFlowCount?: number;
  omitTables?: TableName[];
  blinded?: boolean;
  /** Write truth.json beside the tables (default true). Refused under content/releases. */
  writeTruth?: boolean;
}

/**
 * Generate one release into `<parentDir>/<id>/` (the folder name equals the id, as
 * the format requires) and return its truth. Meant for temporary folders of tests
 * and benchmarks; truth.json is never written under a content/releases folder,
 * because a committed (possibly blinded) release must not carry its answer.
 */
export function writeGeneratedRelease(parentDir: string, id: string, options: GeneratedReleaseOptions): ReleaseTruth & { dir: string } {
  const { seed, scale = 1, release = 'clean', writeTruth = true } = options;
  // Demo releases observe the demo pool (2026.4 needs its second season); clean ones the default.
  const pool = options.hubbleFlowPool ?? (release === 'clean' ? undefined : DEMO_HUBBLE_FLOW_POOL);
  const universe = generateUniverse(seed, scale, { hubbleFlowPool: pool, parameters: options.parameters });
  let spec: ReleaseSpec;
  if (release === 'clean') spec = cleanReleaseSpec(universe, id);
  else {
    const found = demoReleaseSpecs(universe).find((s) => s.id === release);
    if (!found) throw new RangeError(`unknown demo release "${release}"`);
    // Renamed copies stand alone: their `previous` would name a release that is not there.
    spec = found.id === id ? found : { ...found, id, previous: null };
  }
  spec = {
    ...spec,
    analysis: { ...spec.analysis, ...options.analysis },
    variants: options.variants ?? spec.variants,
    omitTables: options.omitTables ?? spec.omitTables,
    blinded: options.blinded ?? spec.blinded,
    catalogues: {
      ...spec.catalogues,
      snHubbleFlow: { ...spec.catalogues.snHubbleFlow, count: options.hubbleFlowCount ?? spec.catalogues.snHubbleFlow.count },
    },
  };
  const dir = resolve(parentDir, id);
  const observed = observeRelease(universe, spec, seed);
  const files = { ...observed.files };
  if (writeTruth) {
    if (`${dir}${sep}`.includes(`${sep}content${sep}releases${sep}`)) {
      throw new Error(`refusing to write truth.json under a content/releases folder (${dir})`);
    }
    files['truth.json'] = JSON.stringify(observed.truth, null, 2) + '\n';
  }
  writeReleaseFiles(dir, files);
  return { ...observed.truth, dir };
}
