/**
 * A clean install on the oldest Node the project supports prints no
 * unsupported-engine warning (kind: edge cases; the rule is npm's own: npm
 * warns EBADENGINE when a package's `engines.node` range does not admit the
 * running Node, docs.npmjs.com, package.json "engines"; ranges read with the
 * `semver` package that npm itself uses).
 *
 * Every package the lockfile can install (dev and optional platform packages
 * included) and every package installed in node_modules must admit the lowest
 * Node version package.json promises, so the README's first command installs
 * without a warning on it. astro 5 pulls unifont, whose undici 8 wants Node 22;
 * package.json overrides it with undici 7, which jsdom uses too (see the
 * report builds of the other tests, which run with it).
 */
import { readdirSync, readFileSync, existsSync } from 'node:fs';
import { join } from 'node:path';
import semver from 'semver';
import { describe, expect, it } from 'vitest';
import { REPO } from './releaseCopy.ts';

interface LockPackage {
  version?: string;
  engines?: Record<string, string> | string[];
}

const pkg = JSON.parse(readFileSync(join(REPO, 'package.json'), 'utf8')) as { engines: { node: string }; overrides?: Record<string, unknown> };
const lock = JSON.parse(readFileSync(join(REPO, 'package-lock.json'), 'utf8')) as { lockfileVersion: number; packages: Record<string, LockPackage> };
/** The oldest Node that package.json promises (">=20.19" gives 20.19.0). */
const OLDEST = semver.minVersion(pkg.engines.node)!.version;

/** A package's Node range, or null when it states none (an array form of engines is a list of "node >=x" strings). */
function nodeRange(engines: LockPackage['engines']): string | null {
  if (engines === undefined) return null;
  if (Array.isArray(engines)) {
    const entry = engines.find((e) => e.startsWith('node'));
    return entry ? entry.replace(/^node\s*/, '') : null;
  }
  return engines.node ?? null;
}

/** Every package.json under node_modules (scoped and nested packages included). */
function installedPackages(dir: string): string[] {
  const out: string[] = [];
  if (!existsSync(dir)) return out;
  for (const name of readdirSync(dir)) {
    if (name.startsWith('.')) continue;
    const path = join(dir, name);
    if (name.startsWith('@')) {
      out.push(...installedPackages(path));
      continue;
    }
    if (existsSync(join(path, 'package.json'))) out.push(path);
    out.push(...installedPackages(join(path, 'node_modules')));
  }
  return out;
}

describe('a clean install on the oldest supported Node', () => {
  it('package.json promises Node 20.19 or later', () => {
    expect(OLDEST).toBe('20.19.0');
  });

  it('every package of the lockfile admits that Node (no EBADENGINE warning from npm ci)', () => {
    const entries = Object.entries(lock.packages).filter(([path]) => path !== '');
    expect(entries.length).toBeGreaterThan(300);
    const refused = entries.flatMap(([path, p]) => {
      const range = nodeRange(p.engines);
      return range !== null && !semver.satisfies(OLDEST, range) ? [`${path}@${p.version}: node ${range}`] : [];
    });
    expect(refused).toEqual([]);
  });

  it('so does every package installed in node_modules', () => {
    const dirs = installedPackages(join(REPO, 'node_modules'));
    expect(dirs.length).toBeGreaterThan(300);
    const refused = dirs.flatMap((dir) => {
      const p = JSON.parse(readFileSync(join(dir, 'package.json'), 'utf8')) as LockPackage & { name?: string };
      const range = nodeRange(p.engines);
      return range !== null && !semver.satisfies(OLDEST, range) ? [`${p.name}@${p.version}: node ${range}`] : [];
    });
    expect(refused).toEqual([]);
  });

  it('the undici that astro reaches through unifont is the one jsdom uses, a 7.x release', () => {
    const versions = Object.entries(lock.packages)
      .filter(([path]) => path.endsWith('node_modules/undici'))
      .map(([path, p]) => `${path}@${p.version}`);
    expect(versions).toHaveLength(1);
    expect(versions[0]).toMatch(/^node_modules\/undici@7\.\d+\.\d+$/);
    expect(pkg.overrides).toEqual({ unifont: { undici: '^7.25.0' } });
  });
});
