/** Shared pieces of the blinding tests: temporary folders, a folder hash, CLI capture. */
import { createHash } from 'node:crypto';
import { mkdtempSync, readdirSync, readFileSync, rmSync, statSync, writeFileSync } from 'node:fs';
import { tmpdir } from 'node:os';
import { join } from 'node:path';
import { afterAll } from 'vitest';

/** A key for the tests (never a real one). */
export const TEST_KEY = 'test-key-for-blinding-only-0f9e8d7c6b5a';
export const OTHER_KEY = 'another-test-key-0123456789abcdef';

/** A temporary folder removed after the file's tests. */
export function tempDir(prefix: string): string {
  const dir = mkdtempSync(join(tmpdir(), `rb-${prefix}-`));
  afterAll(() => rmSync(dir, { recursive: true, force: true }));
  return dir;
}

/** SHA-256 over every file name and content under `dir` (recursively, sorted). */
export function folderHash(dir: string): string {
  const h = createHash('sha256');
  const walk = (d: string, rel: string): void => {
    for (const name of readdirSync(d).sort()) {
      const p = join(d, name);
      if (statSync(p).isDirectory()) walk(p, `${rel}${name}/`);
      else h.update(`${rel}${name}\0`).update(readFileSync(p)).update('\0');
    }
  };
  walk(dir, '');
  return h.digest('hex');
}

export function writeKeyFile(dir: string, name: string, key: string): string {
  const path = join(dir, name);
  writeFileSync(path, `${key}\n`);
  return path;
}

export function capture() {
  const out: string[] = [];
  const err: string[] = [];
  return {
    io: { stdout: (s: string) => void out.push(s), stderr: (s: string) => void err.push(s) },
    out: () => out.join(''),
    err: () => err.join(''),
  };
}

/** Whole-token occurrences of a number text (not part of a longer number). */
export function hasNumberToken(text: string, token: string): boolean {
  const esc = token.replace(/[.+-]/g, (c) => `\\${c}`);
  return new RegExp(`(?<![0-9.])${esc}(?![0-9])`).test(text);
}
