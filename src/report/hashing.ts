/**
 * Content hashes that decide what can be reused between builds: a release's
 * files, the calibration code, the report code. Only contents and relative
 * paths enter a hash (never times or absolute paths), so a clone in another
 * folder reuses nothing it should not and everything it can.
 */
import { createHash } from 'node:crypto';
import { readdir, readFile } from 'node:fs/promises';
import { join, relative, sep } from 'node:path';

/** Every file under `dir` (recursive), as sorted paths relative to it with "/" separators. */
export async function listFiles(dir: string, skip: (rel: string) => boolean = () => false): Promise<string[]> {
  const out: string[] = [];
  async function walk(d: string): Promise<void> {
    const entries = await readdir(d, { withFileTypes: true });
    for (const e of entries) {
      const full = join(d, e.name);
      const rel = relative(dir, full).split(sep).join('/');
      if (skip(rel)) continue;
      if (e.isDirectory()) await walk(full);
      else if (e.isFile()) out.push(rel);
    }
  }
  await walk(dir);
  return out.sort();
}

/** SHA-256 over (relative path, length, bytes) of each file, in sorted order. */
export async function hashTree(dir: string, skip?: (rel: string) => boolean): Promise<string> {
  const h = createHash('sha256');
  for (const rel of await listFiles(dir, skip)) {
    const bytes = await readFile(join(dir, rel));
    h.update(`${rel}\0${bytes.length}\0`);
    h.update(bytes);
  }
  return h.digest('hex');
}

export function sha256(...parts: (string | Uint8Array)[]): string {
  const h = createHash('sha256');
  for (const p of parts) {
    h.update(p);
    h.update('\0');
  }
  return h.digest('hex');
}

/**
 * Version of the calibration code: the hash of src/ (minus the report, the
 * command line and the comparison, which do not change results.json) and of
 * package-lock.json (dependency versions).
 */
export async function calibrationCodeHash(root: string): Promise<string> {
  const src = await hashTree(join(root, 'src'), (rel) => rel === 'report' || rel === 'cli' || rel === 'diff');
  let lock: string;
  try {
    lock = await readFile(join(root, 'package-lock.json'), 'utf8');
  } catch {
    lock = 'no lockfile';
  }
  return sha256('calibration', src, lock);
}

/** Version of the report code (src/report, including the pinned font). */
export async function reportCodeHash(root: string): Promise<string> {
  return sha256('report', await hashTree(join(root, 'src', 'report')));
}

/** Version of the comparison code (src/diff); with the calibration code's, it keys cached comparisons. */
export async function comparisonCodeHash(root: string): Promise<string> {
  return sha256('comparison', await hashTree(join(root, 'src', 'diff')));
}
