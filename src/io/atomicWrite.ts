/**
 * Write a file so that readers never see it half-written: write a sibling temporary file,
 * then rename it over the target (rename is atomic within one file system).
 */
import { mkdirSync, renameSync, rmSync, writeFileSync } from 'node:fs';
import { dirname, basename, join } from 'node:path';

export function writeFileAtomic(path: string, content: string | Uint8Array): void {
  const dir = dirname(path);
  mkdirSync(dir, { recursive: true });
  const tmp = join(dir, `.${basename(path)}.${process.pid}.tmp`);
  try {
    writeFileSync(tmp, content);
    renameSync(tmp, path);
  } catch (e) {
    rmSync(tmp, { force: true });
    throw e;
  }
}
