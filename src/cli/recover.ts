/**
 * `rungbook recover <release-dir> --seeds N [--first S] [--shard K/M] [--workers W] [--out FILE] [--summary FILE]`
 * `rungbook recover --merge FILES... [--summary FILE]`
 *
 * Simulates releases shaped like the given one with its own fit as the truth, calibrates each,
 * and writes one line per seed (JSON Lines) and the summary recovery.json with its verdict
 * (src/recover/). A shard writes only its seeds file; --merge makes the summary of the shards.
 * Exit 0 when the verdict is pass or inconclusive, 1 when it is fail (a failed check) or the
 * input is invalid, 2 on a usage error.
 */
import { readFileSync } from 'node:fs';
import { join, resolve } from 'node:path';
import { writeFileAtomic } from '../io/atomicWrite.ts';
import { InputError } from '../types/issues.ts';
import { describeQuantity } from '../recover/quantities.ts';
import { defaultWorkers } from '../parallel/pool.ts';
import { recoverRelease } from '../recover/run.ts';
import { headerLine, mergeSeedFiles, parseShard, seedLineText, type SeedsHeader } from '../recover/shard.ts';
import { RECOVERY_FILE, serializeSummary, summarise, type RecoverySummary, type Statistic } from '../recover/summary.ts';
import type { SeedLine } from '../recover/seed.ts';
import { codeVersion } from '../version.ts';
import { parseArgs, processIO, UsageError, type CliIO } from './output.ts';

export const RECOVER_USAGE =
  'usage: rungbook recover <release-dir> --seeds N [--first S] [--shard K/M] [--workers W] [--out FILE] [--summary FILE]\n' +
  '       rungbook recover --merge FILES... [--summary FILE]';

function integer(name: string, text: string | undefined, fallback: number, min: number): number {
  if (text === undefined) return fallback;
  const v = Number(text);
  if (!/^\d+$/.test(text.trim()) || !Number.isSafeInteger(v) || v < min)
    throw new UsageError(`--${name} must be an integer >= ${min}, found ${JSON.stringify(text)}`);
  return v;
}

function seedsFileText(header: SeedsHeader, lines: readonly SeedLine[]): string {
  return headerLine(header) + lines.map(seedLineText).join('');
}

function pct(x: number): string {
  return `${(100 * x).toFixed(1)}`;
}

function fmtStat(s: Statistic, percent: boolean): string {
  if (s.value === null || !Number.isFinite(s.value)) return 'n/a';
  return percent ? `${pct(s.value)} ± ${pct(s.se)} %` : `${s.value.toFixed(3)} ± ${s.se.toFixed(3)}`;
}

/** The verdict and table for the terminal. */
export function summaryReport(s: RecoverySummary, file: string): string {
  const b = s.bounds;
  const out: string[] = [];
  out.push(
    `Recovery of release ${s.release.id}: ${s.seeds.count} simulated releases (seeds ${s.seeds.first}..${s.seeds.first + s.seeds.count - 1}), ${s.seeds.failed} refused`,
  );
  out.push('Internal result for collaboration review.');
  out.push(`Truth: ${s.truth}.`);
  out.push('Recovery tests the model against itself: it cannot find an effect the simulation leaves out.');
  out.push('');
  out.push(`VERDICT: ${s.verdict.toUpperCase()} (${s.verdict_reason})`);
  out.push(
    `Bounds: |mean pull| <= ${b.mean[1]}, SD of pulls ${b.sd[0]}-${b.sd[1]}, 1-sigma coverage ${pct(b.coverage1[0])}-${pct(b.coverage1[1])} %, ` +
      `2-sigma coverage ${pct(b.coverage2[0])}-${pct(b.coverage2[1])} %; a statistic fails when its ±2 se interval lies outside its bounds`,
  );
  out.push('');
  const w = Math.max(8, ...s.quantities.map((q) => describeQuantity(q.key).length));
  out.push(
    `${'quantity'.padEnd(w)}  ${'n'.padStart(5)}  ${'mean pull'.padEnd(15)}  ${'SD of pulls'.padEnd(13)}  ${'1-sigma cover'.padEnd(16)}  ${'2-sigma cover'.padEnd(16)}  verdict`,
  );
  for (const q of s.quantities) {
    out.push(
      `${describeQuantity(q.key).padEnd(w)}  ${String(q.n).padStart(5)}  ${fmtStat(q.mean, false).padEnd(15)}  ${fmtStat(q.sd, false).padEnd(13)}  ${fmtStat(q.coverage1, true).padEnd(16)}  ${fmtStat(q.coverage2, true).padEnd(16)}  ${q.verdict}`,
    );
  }
  for (const f of s.failures) out.push(`refused: seed ${f.seed}: ${f.message}`);
  out.push('');
  out.push(`summary written to ${file}`);
  return `${out.join('\n')}\n`;
}

function progressPrinter(io: CliIO, workers: number): ((done: number, total: number) => void) | undefined {
  // Progress only on a terminal: a batch job's log keeps the final lines only.
  if (io !== processIO || !process.stderr.isTTY) return undefined;
  const start = Date.now();
  return (done, total) => {
    const s = (Date.now() - start) / 1000;
    const left = done > 0 ? ((total - done) * s) / done : NaN;
    const eta = Number.isFinite(left) ? `, about ${Math.ceil(left)} s left` : '';
    const where = workers > 1 ? `on ${workers} worker threads` : 'in this thread';
    io.stderr(`\rrecover: ${done}/${total} seeds ${where}, ${Math.round(s)} s${eta}   `);
    if (done === total) io.stderr('\n');
  };
}

export async function runRecover(args: string[], io: CliIO): Promise<number> {
  const { positional, values, flags } = parseArgs(args, { values: ['seeds', 'first', 'shard', 'workers', 'out', 'summary'], flags: ['merge'] });
  const version = codeVersion();
  if (flags.has('merge')) {
    if (positional.length === 0) throw new UsageError(RECOVER_USAGE);
    for (const v of ['seeds', 'first', 'shard', 'workers', 'out'])
      if (v in values) throw new UsageError(`--${v} does not apply to --merge (the files say which seeds they hold)`);
    const files = positional.map((f) => {
      let text: string;
      try {
        text = readFileSync(f, 'utf8');
      } catch (e) {
        throw new InputError([
          {
            code: 'recovery-seeds-file',
            file: f,
            message: `cannot read the file (${(e as NodeJS.ErrnoException).code ?? (e as Error).message})`,
            expected: 'a seeds file written by rungbook recover',
            found: 'no readable file',
          },
        ]);
      }
      return { file: f, text };
    });
    const { header, lines } = mergeSeedFiles(files);
    const summary = summarise(header, lines);
    const out = resolve(values.summary ?? RECOVERY_FILE);
    writeFileAtomic(out, serializeSummary(summary));
    io.stdout(summaryReport(summary, out));
    return summary.verdict === 'fail' ? 1 : 0;
  }
  if (positional.length !== 1) throw new UsageError(RECOVER_USAGE);
  if (values.seeds === undefined) throw new UsageError(`--seeds is required\n${RECOVER_USAGE}`);
  const dir = positional[0]!;
  const seeds = integer('seeds', values.seeds, 0, 1);
  const first = integer('first', values.first, 1, 0);
  const workers = integer('workers', values.workers, defaultWorkers(), 0);
  const shard = values.shard === undefined ? { k: 1, m: 1 } : parseShard(values.shard);
  if (!shard) throw new UsageError(`--shard must be K/M with 1 <= K <= M, found ${JSON.stringify(values.shard)}`);
  const sharded = values.shard !== undefined;
  if (sharded && values.summary !== undefined) throw new UsageError('--summary does not apply to one shard: merge the shards with --merge');
  const { header, lines } = await recoverRelease(dir, { seeds, first, shard, workers, codeVersion: version, onProgress: progressPrinter(io, workers) });
  const id = header.release.id.replace(/[^A-Za-z0-9._-]/g, '_');
  const seedsOut = resolve(values.out ?? (sharded ? `recovery-${id}.shard-${shard.k}-of-${shard.m}.jsonl` : `recovery-${id}.jsonl`));
  writeFileAtomic(seedsOut, seedsFileText(header, lines));
  if (sharded) {
    const failed = lines.filter((l) => 'failed' in l).length;
    io.stdout(`shard ${shard.k}/${shard.m} of release ${header.release.id}: ${lines.length} seeds (${failed} refused) written to ${seedsOut}\n`);
    io.stdout(`when every shard is done: rungbook recover --merge <the ${shard.m} files> --summary ${join(dir, RECOVERY_FILE)}\n`);
    return 0;
  }
  const summary = summarise({ ...header }, lines);
  const out = resolve(values.summary ?? join(dir, RECOVERY_FILE));
  writeFileAtomic(out, serializeSummary(summary));
  io.stdout(summaryReport(summary, out));
  io.stdout(`seeds written to ${seedsOut}\n`);
  return summary.verdict === 'fail' ? 1 : 0;
}
