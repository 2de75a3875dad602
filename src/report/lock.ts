/**
 * A lock between report builds, across processes and within one: a folder
 * created with mkdir (which either creates it or fails, atomically) holding the
 * owner's pid. A build that finds the lock taken waits for it, polling, and says
 * once that it waits and for whom; a lock whose owner process died (a build
 * killed half-way) is taken over. Builds of one process take turns as well:
 * the pid is the same, so the owner is alive and the lock is waited for.
 */
import { mkdir, readFile, rm, stat, writeFile } from 'node:fs/promises';
import { dirname, join } from 'node:path';

const LOCK_POLL_MS = 250;
/** Longer than any build (a full demo build takes minutes): past it the wait ends with an error naming the lock. */
const LOCK_WAIT_MS = 30 * 60_000;
/** A lock folder without a readable pid (its owner died between mkdir and writing it) older than this is taken over. */
const UNOWNED_LOCK_MS = 30_000;

function alive(pid: number): boolean {
  try {
    process.kill(pid, 0);
    return true;
  } catch (e) {
    return (e as NodeJS.ErrnoException).code === 'EPERM';
  }
}

export interface LockOptions {
  /** Called once, when the lock is taken by another build (its pid, or NaN if unknown), before waiting. */
  onWait?: (ownerPid: number) => void;
}

/** Take the lock `lock` (a folder path); resolves to the function that releases it. */
export async function acquireLock(lock: string, options: LockOptions = {}): Promise<() => Promise<void>> {
  const started = Date.now();
  let told = false;
  await mkdir(dirname(lock), { recursive: true });
  for (;;) {
    try {
      await mkdir(lock);
      await writeFile(join(lock, 'pid'), String(process.pid));
      return () => rm(lock, { recursive: true, force: true });
    } catch (e) {
      if ((e as NodeJS.ErrnoException).code !== 'EEXIST') throw e;
    }
    const owner = Number(await readFile(join(lock, 'pid'), 'utf8').catch(() => 'NaN'));
    const ageMs = Date.now() - ((await stat(lock).catch(() => null))?.mtimeMs ?? Date.now());
    const orphan = Number.isInteger(owner) ? owner !== process.pid && !alive(owner) : ageMs > UNOWNED_LOCK_MS;
    if (orphan) {
      await rm(lock, { recursive: true, force: true });
      continue;
    }
    if (!told) {
      told = true;
      options.onWait?.(owner);
    }
    if (Date.now() - started > LOCK_WAIT_MS) throw new Error(`another report build holds ${lock} (pid ${owner}); remove the folder if no build is running`);
    await new Promise((ok) => setTimeout(ok, LOCK_POLL_MS));
  }
}
