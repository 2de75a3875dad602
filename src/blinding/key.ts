/**
 * Where the blinding key comes from: a file named on the command line (--key-file) or
 * the environment variable RUNGBOOK_BLINDING_KEY, never from the repository. A key file
 * inside the repository that holds the release (or inside the release folder) is refused:
 * anyone who can read the repository could unblind.
 */
import { existsSync, readFileSync, realpathSync, statSync } from 'node:fs';
import { dirname, join, relative, resolve, isAbsolute, sep } from 'node:path';
import { BlindingError } from './errors.ts';
import { MIN_KEY_BYTES } from './scheme.ts';

export const KEY_ENV = 'RUNGBOOK_BLINDING_KEY';

export interface BlindingKey {
  key: Buffer;
  /** Where it came from, for messages ("key file /x/y" or "RUNGBOOK_BLINDING_KEY"); never the key. */
  source: string;
  notes: string[];
}

/** The nearest folder at or above `path` that holds a .git entry (a Git work tree), or null. */
export function repositoryRoot(path: string): string | null {
  let dir = resolve(path);
  for (;;) {
    if (existsSync(join(dir, '.git'))) return dir;
    const up = dirname(dir);
    if (up === dir) return null;
    dir = up;
  }
}

function inside(child: string, parent: string): boolean {
  const rel = relative(parent, child);
  return rel === '' || (!rel.startsWith('..') && !isAbsolute(rel) && !rel.startsWith(`..${sep}`));
}

/** Real path of the nearest existing folder at or above `path`. */
function realExisting(path: string): string {
  let p = resolve(path);
  while (!existsSync(p)) {
    const up = dirname(p);
    if (up === p) break;
    p = up;
  }
  return realpathSync(p);
}

/** Key text as bytes: a byte-order mark and surrounding white space (a final newline) are not part of it. */
export function normaliseKey(raw: Buffer | string): Buffer {
  const text = (typeof raw === 'string' ? raw : raw.toString('utf8')).replace(/^\uFEFF/, '').trim();
  return Buffer.from(text, 'utf8');
}

/**
 * Read the key. `guarded` are the folders whose repository must not hold the key file
 * (the release folder, and the output folder when blinding to another place).
 */
export function readBlindingKey(keyFile: string | undefined, env: NodeJS.ProcessEnv, guarded: string[]): BlindingKey {
  const notes: string[] = [];
  let key: Buffer;
  let source: string;
  if (keyFile !== undefined) {
    const path = resolve(keyFile);
    const stat = statSync(path, { throwIfNoEntry: false });
    if (!stat?.isFile()) throw new BlindingError(`key file ${keyFile}: ${stat ? 'not a file' : 'no such file'}`);
    const real = realpathSync(path);
    for (const g of guarded) {
      const gReal = realExisting(g);
      if (inside(real, gReal))
        throw new BlindingError(`the key file ${keyFile} is inside the release folder; refusing to use it`, 'keep the key outside the repository');
      const root = repositoryRoot(gReal);
      if (root && inside(real, realpathSync(root))) {
        throw new BlindingError(
          `the key file ${keyFile} is inside the repository ${root}; refusing to use it, since anyone who can read the repository could unblind`,
          'move the key outside the repository (for example to your home folder) or pass it in RUNGBOOK_BLINDING_KEY',
        );
      }
    }
    key = normaliseKey(readFileSync(path));
    source = `key file ${keyFile}`;
    if (env[KEY_ENV] !== undefined) notes.push(`${KEY_ENV} is set but --key-file was given: the key file is used`);
  } else if (env[KEY_ENV] !== undefined) {
    key = normaliseKey(env[KEY_ENV]!);
    source = KEY_ENV;
  } else {
    throw new BlindingError(`no blinding key: give --key-file FILE or set ${KEY_ENV}`, 'the key is never read from the repository');
  }
  if (key.length < MIN_KEY_BYTES) {
    throw new BlindingError(
      `the blinding key from ${source} is too short (${key.length} bytes; at least ${MIN_KEY_BYTES})`,
      'make one with, for example, `openssl rand -hex 32`',
    );
  }
  return { key, source, notes };
}
