/**
 * The caches a build changes (generated pages and figures with their stamps,
 * Astro's cache, cached results.json files) either all move forward with a
 * successful build or stay exactly as they were: a failed build must leave them
 * byte-identical, like the previous site.
 *
 * - A folder the build rewrites in place is set aside first (renamed to
 *   `<folder>.previous`, atomic) and a copy put in its place to work on. Success
 *   drops the set-aside folder; failure puts it back, so the restored folder is
 *   the very one that was there (same bytes, same file times).
 * - New cache files are kept in memory and written only on success.
 *
 * A build killed half-way leaves a `.previous` folder behind; the next build
 * restores it before anything else, so an interrupted build counts as failed.
 * Cost: one copy of each folder per build (a few MB per release).
 */
import { cp, rename, rm, stat } from 'node:fs/promises';
import { writeFileAtomic } from '../io/atomicWrite.ts';

async function exists(p: string): Promise<boolean> {
  try {
    await stat(p);
    return true;
  } catch {
    return false;
  }
}

export interface WorkState {
  /** Write `content` to `path` when the build succeeds (cache entries). */
  later(path: string, content: string): void;
  /** Keep everything the build did. */
  commit(): Promise<void>;
  /** Put every folder back as it was and forget the pending files. */
  rollback(): Promise<void>;
}

const previousOf = (dir: string) => `${dir}.previous`;

/** Undo what a build killed half-way left behind. */
async function recover(dir: string): Promise<void> {
  const previous = previousOf(dir);
  if (await exists(previous)) {
    await rm(dir, { recursive: true, force: true });
    await rename(previous, dir);
  }
}

/** Start a build's changes to `folders` (see the module comment). */
export async function beginWork(folders: readonly string[]): Promise<WorkState> {
  const saved: { dir: string; existed: boolean }[] = [];
  for (const dir of folders) {
    await recover(dir);
    const existed = await exists(dir);
    if (existed) {
      await rename(dir, previousOf(dir));
      await cp(previousOf(dir), dir, { recursive: true, preserveTimestamps: true });
    }
    saved.push({ dir, existed });
  }
  const pending: { path: string; content: string }[] = [];
  let finished = false;
  return {
    later(path, content) {
      pending.push({ path, content });
    },
    async commit() {
      if (finished) return;
      finished = true;
      // Atomically: another build sharing the cache folder may read the entry at any time.
      for (const p of pending) writeFileAtomic(p.path, p.content);
      for (const s of saved) if (s.existed) await rm(previousOf(s.dir), { recursive: true, force: true });
    },
    async rollback() {
      if (finished) return;
      finished = true;
      for (const s of saved) {
        await rm(s.dir, { recursive: true, force: true });
        if (s.existed) await rename(previousOf(s.dir), s.dir);
      }
    },
  };
}
