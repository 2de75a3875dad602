/**
 * The recalibrations a comparison needs, as jobs that run the same in a worker thread or in
 * the main thread: the baseline calibration of each side (results and fit snapshot), the baseline H0
 * of a hybrid release, and the baseline H0 of release a with some rows swapped to b's version.
 * A job's result depends only on the job and the two releases (rung caches only memoise).
 */
import type { Release, TableName } from '../types/release.ts';
import type { Results } from '../types/results.ts';
import { AnalysisError } from '../types/issues.ts';
import { newRungCache, runLadder, type LadderRun, type RungCache } from '../ladder/calibrate.ts';
import { assembleResults } from '../ladder/assemble.ts';
import { errorBudget } from '../ladder/budget.ts';
import { earlyRungKey, groupsOfMask, hybridRelease } from './hybrid.ts';
import { indexById, rowId, tableField, tableRows, type AnyRow } from './rows.ts';
import { fitSnapshot, type FitSnapshot } from './snapshot.ts';

export type DiffJob = { kind: 'side'; side: 'a' | 'b' } | { kind: 'hybrid'; mask: number } | { kind: 'swap'; table: TableName; ids: string[] };

export type DiffJobResult =
  | { kind: 'side'; side: 'a' | 'b'; results: Results | null; snapshot: FitSnapshot | null; error: string | null; hint: string | null }
  | { kind: 'hybrid'; mask: number; log10H0: number | null; error: string | null }
  | { kind: 'swap'; table: TableName; ids: string[]; log10H0: number | null; error: string | null };

export interface JobContext {
  a: Release;
  b: Release;
  codeVersion: string;
  /** Rung caches of hybrids, by earlyRungKey of their mask. */
  caches: Map<number, RungCache>;
}

export function newJobContext(a: Release, b: Release, codeVersion: string): JobContext {
  return { a, b, codeVersion, caches: new Map() };
}

function cacheFor(ctx: JobContext, key: number): RungCache {
  let c = ctx.caches.get(key);
  if (!c) {
    c = newRungCache();
    ctx.caches.set(key, c);
  }
  return c;
}

/** Release a with the rows `ids` of `table` replaced by b's versions (added when new, removed when gone). */
export function swapRows(a: Release, b: Release, table: TableName, ids: readonly string[]): Release {
  const want = new Set(ids);
  const fromB = indexById(table, tableRows(b, table));
  const rowsA = tableRows(a, table);
  const out: AnyRow[] = [];
  const seen = new Set<string>();
  for (const r of rowsA) {
    const id = rowId(table, r);
    if (!want.has(id)) out.push(r);
    else {
      seen.add(id);
      const nb = fromB.get(id);
      if (nb) out.push(nb);
    }
  }
  for (const id of ids) if (!seen.has(id) && fromB.has(id)) out.push(fromB.get(id)!);
  return { ...a, [tableField(table)]: out, variants: [] } as Release;
}

/**
 * results.json content of the baseline alone: what calibrateRelease gives for the release
 * without its systematic variants (the comparison reruns no variant; they change no baseline
 * value, and their list is compared as an input). Assembled from the run already made, so
 * the baseline fit is computed once.
 */
export function baselineResults(release: Release, run: LadderRun, codeVersion: string): Results {
  const noVariants: Release = { ...release, variants: [] };
  return assembleResults(noVariants, run, [], 0, errorBudget(run, []), { codeVersion });
}

function message(e: unknown): { error: string; hint: string | null } {
  if (e instanceof AnalysisError) return { error: e.message, hint: e.hint ?? null };
  throw e;
}

export function runJob(ctx: JobContext, job: DiffJob): DiffJobResult {
  switch (job.kind) {
    case 'side': {
      const release = job.side === 'a' ? ctx.a : ctx.b;
      try {
        const run = runLadder(release, release.analysis, cacheFor(ctx, job.side === 'a' ? 0 : -1));
        const results = baselineResults(release, run, ctx.codeVersion);
        return { kind: 'side', side: job.side, results, snapshot: fitSnapshot(run), error: null, hint: null };
      } catch (e) {
        const m = message(e);
        return { kind: 'side', side: job.side, results: null, snapshot: null, ...m };
      }
    }
    case 'hybrid': {
      try {
        const h = hybridRelease(ctx.a, ctx.b, new Set(groupsOfMask(job.mask)));
        const run = runLadder(h, h.analysis, cacheFor(ctx, earlyRungKey(job.mask)));
        return { kind: 'hybrid', mask: job.mask, log10H0: run.log10H0 ? run.log10H0.value : null, error: null };
      } catch (e) {
        return { kind: 'hybrid', mask: job.mask, log10H0: null, error: message(e).error };
      }
    }
    case 'swap': {
      try {
        const r = swapRows(ctx.a, ctx.b, job.table, job.ids);
        // the parallax rung does not read main-sequence rows: reuse a's
        const cache = newRungCache();
        if (job.table === 'main_sequence') {
          const base = ctx.caches.get(0);
          if (base) for (const [k, v] of base.parallax) cache.parallax.set(k, v);
        }
        const run = runLadder(r, r.analysis, cache);
        return { kind: 'swap', table: job.table, ids: job.ids, log10H0: run.log10H0 ? run.log10H0.value : null, error: null };
      } catch (e) {
        return { kind: 'swap', table: job.table, ids: job.ids, log10H0: null, error: message(e).error };
      }
    }
  }
}
