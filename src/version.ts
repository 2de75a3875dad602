/**
 * The code version recorded in results.json and used in the build cache key:
 * the package version plus a short hash of every source file under src/ (sorted paths),
 * so any change to the calibration code changes it, and nothing else does.
 */
import { createHash } from 'node:crypto';
import { readFileSync, readdirSync } from 'node:fs';
import { join, relative } from 'node:path';
import { fileURLToPath } from 'node:url';

const SRC_DIR = fileURLToPath(new URL('.', import.meta.url));
const ROOT = join(SRC_DIR, '..');

function listFiles(dir: string): string[] {
  const out: string[] = [];
  for (const entry of readdirSync(dir, { withFileTypes: true })) {
    const path = join(dir, entry.name);
    if (entry.isDirectory()) out.push(...listFiles(path));
    else if (entry.name.endsWith('.ts')) out.push(path);
  }
  return out;
}

let cached: string | null = null;

export function codeVersion(): string {
  if (cached) return cached;
  const pkg = JSON.parse(readFileSync(join(ROOT, 'package.json'), 'utf8')) as { version: string };
  const hash = createHash('sha256');
  for (const file of listFiles(SRC_DIR).sort()) {
    hash.update(relative(SRC_DIR, file).split('\\').join('/'));
    hash.update('\0');
    hash.update(readFileSync(file));
    hash.update('\0');
  }
  cached = `${pkg.version}+${hash.digest('hex').slice(0, 12)}`;
  return cached;
}
