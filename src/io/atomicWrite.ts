/**
 * Write a file so that readers never see it half-written: write a sibling temporary file,
 * then rename it over the target (rename is atomic within one file system).
 */
import { mkdirSync, renameSync, rmSync, writeFileSync } from 'node:fs';
import { dirname, basename, join } from 'node:path';

/** Numbers the temporary files of one process, so that two writes in it never share one. */
let written = 0;

export function writeFileAtomic(path: string, content: string | Uint8Array): void {
  const dir = dirname(path);
  mkdirSync(dir, { recursive: true });
  const tmp = join(dir, `.${basename(path)}.${process.pid}.${(written += 1)}.tmp`);
  try {
    writeFileSync(tmp, content);
    renameSync(tmp, path);
  } catch (e) {
    rmSync(tmp, { force: true });
    throw e;
  }
}
