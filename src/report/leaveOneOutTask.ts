/**
 * Worker-side task of leaveOneOutDirs (src/report/leaveOneOut.ts): the shared data is the list of
 * release folders, each task one (folder, system) refit. A worker reads a folder when its first
 * task names it and keeps only the last one read (tasks come in folder order), so its memory stays
 * that of one release. Pure: the refit depends only on the folder's files and the system.
 */
import { loadReleaseWithBlinding } from '../blinding/apply.ts';
import type { Release } from '../types/release.ts';
import { refitWithout, type LooTask, type LooTaskData, type Refit } from './leaveOneOut.ts';

interface WorkerContext {
  dirs: string[];
  last: { dir: number; release: Release } | null;
}

export function setup(data: LooTaskData): WorkerContext {
  return { dirs: data.dirs, last: null };
}

export function handle(ctx: WorkerContext, task: LooTask): Refit {
  if (ctx.last?.dir !== task.dir) ctx.last = { dir: task.dir, release: loadReleaseWithBlinding(ctx.dirs[task.dir]!).release };
  return refitWithout(ctx.last.release, task.system);
}
