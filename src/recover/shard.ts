/**
 * Seeds, shards and the seeds file.
 *
 * `--shard K/M` runs the K-th of M contiguous slices of the seeds first .. first + count - 1:
 * slice K holds the seeds with index i (from 0) in [floor(count (K-1) / M), floor(count K / M)),
 * so the slices are disjoint and together complete whatever M.
 *
 * The seeds file is JSON Lines: a header line (schema rungbook.recovery-seeds/1: the release, the
 * code version, the whole run's seeds, this file's shard, the quantity keys), then one line per
 * seed in seed order. `mergeSeedFiles` checks that the files belong to one run and together hold
 * each of its seeds exactly once, naming the file and line of anything wrong.
 */
import { InputError, type InputIssue } from '../types/issues.ts';
import type { SeedLine } from './seed.ts';
import type { SummaryHeader } from './summary.ts';

export const SEEDS_SCHEMA = 'rungbook.recovery-seeds/1';

export interface Shard {
  k: number;
  m: number;
}

export interface SeedsHeader extends SummaryHeader {
  schema: typeof SEEDS_SCHEMA;
  shard: Shard;
}

/** Parse "K/M" (1 <= K <= M); null when malformed. */
export function parseShard(text: string): Shard | null {
  const m = /^(\d+)\/(\d+)$/.exec(text.trim());
  if (!m) return null;
  const k = Number(m[1]);
  const n = Number(m[2]);
  return k >= 1 && n >= 1 && k <= n && Number.isSafeInteger(n) ? { k, m: n } : null;
}

/** The seeds of slice `shard` of first .. first + count - 1. */
export function shardSeeds(first: number, count: number, shard: Shard = { k: 1, m: 1 }): number[] {
  const lo = Math.floor((count * (shard.k - 1)) / shard.m);
  const hi = Math.floor((count * shard.k) / shard.m);
  return Array.from({ length: hi - lo }, (_, i) => first + lo + i);
}

export function headerLine(h: SeedsHeader): string {
  return `${JSON.stringify(h)}\n`;
}

export function seedLineText(line: SeedLine): string {
  return `${JSON.stringify(line)}\n`;
}

function issue(file: string, line: number, message: string, expected: string, found: string, hint?: string): InputIssue {
  const i: InputIssue = { code: 'recovery-seeds-file', file, line, message, expected, found };
  if (hint) i.hint = hint;
  return i;
}

const RUN_KEYS = ['release', 'code_version', 'first', 'count', 'keys'] as const;

function sameRun(a: SeedsHeader, b: SeedsHeader): (typeof RUN_KEYS)[number] | 'shard' | null {
  for (const k of RUN_KEYS) if (JSON.stringify(a[k]) !== JSON.stringify(b[k])) return k;
  return a.shard.m === b.shard.m ? null : 'shard';
}

/** Parse one seeds file; throws InputError naming the file and line of the first problem. */
export function parseSeedsFile(file: string, text: string): { header: SeedsHeader; lines: SeedLine[] } {
  const rows = text.split('\n');
  if (rows.at(-1) === '') rows.pop();
  const parse = (i: number): unknown => {
    try {
      return JSON.parse(rows[i]!);
    } catch {
      throw new InputError([
        issue(
          file,
          i + 1,
          'the line is not JSON',
          'one JSON object per line',
          JSON.stringify(rows[i]!.slice(0, 60)),
          'the file may be cut short: run that shard again',
        ),
      ]);
    }
  };
  if (rows.length === 0) throw new InputError([issue(file, 1, 'the file is empty', `a ${SEEDS_SCHEMA} header line`, 'nothing')]);
  const header = parse(0) as SeedsHeader;
  if (!header || header.schema !== SEEDS_SCHEMA) {
    throw new InputError([
      issue(
        file,
        1,
        'the first line is not a recovery seeds header',
        `"schema": "${SEEDS_SCHEMA}"`,
        JSON.stringify((header as { schema?: unknown })?.schema ?? null),
        'give the files written by `rungbook recover --shard K/M`',
      ),
    ]);
  }
  const expected = shardSeeds(header.first, header.count, header.shard);
  const lines: SeedLine[] = [];
  for (let i = 1; i < rows.length; i++) {
    const l = parse(i) as SeedLine;
    const want = expected[i - 1];
    if (!l || typeof l.seed !== 'number' || !('quantities' in l || 'failed' in l)) {
      throw new InputError([
        issue(
          file,
          i + 1,
          'the line is not a seed result',
          '{"seed": ..., "quantities": {...}} or {"seed": ..., "failed": "..."}',
          JSON.stringify(rows[i]!.slice(0, 60)),
        ),
      ]);
    }
    if (l.seed !== want) {
      throw new InputError([
        issue(
          file,
          i + 1,
          `unexpected seed in shard ${header.shard.k}/${header.shard.m}`,
          want === undefined ? 'no more lines' : `seed ${want}`,
          `seed ${l.seed}`,
        ),
      ]);
    }
    lines.push(l);
  }
  if (lines.length !== expected.length) {
    throw new InputError([
      issue(
        file,
        rows.length,
        `shard ${header.shard.k}/${header.shard.m} is incomplete`,
        `${expected.length} seeds (${expected[0]}..${expected.at(-1)})`,
        `${lines.length} seeds`,
        'the run may have stopped early: run that shard again',
      ),
    ]);
  }
  return { header, lines };
}

/** Combine the seeds files of one run (every shard exactly once) into its header and all its lines. */
export function mergeSeedFiles(files: readonly { file: string; text: string }[]): { header: SeedsHeader; lines: SeedLine[] } {
  if (files.length === 0)
    throw new InputError([
      { code: 'recovery-seeds-file', file: '(none)', message: 'no seeds files to merge', expected: 'the files of every shard', found: 'none' },
    ]);
  const parsed = files.map((f) => ({ file: f.file, ...parseSeedsFile(f.file, f.text) }));
  const first = parsed[0]!;
  const byShard = new Map<number, string>();
  const issues: InputIssue[] = [];
  for (const p of parsed) {
    const differs = sameRun(first.header, p.header);
    if (differs) {
      issues.push(
        issue(
          p.file,
          1,
          `the file belongs to another run than ${first.file} (its "${differs}" differs)`,
          JSON.stringify(differs === 'shard' ? first.header.shard.m : first.header[differs]),
          JSON.stringify(differs === 'shard' ? p.header.shard.m : p.header[differs]),
          'merge the shards of one run: same release, code version, --seeds, --first and M',
        ),
      );
      continue;
    }
    const other = byShard.get(p.header.shard.k);
    if (other !== undefined)
      issues.push(issue(p.file, 1, `shard ${p.header.shard.k}/${p.header.shard.m} is given twice`, 'each shard once', `also in ${other}`));
    else byShard.set(p.header.shard.k, p.file);
  }
  if (issues.length === 0) {
    const m = first.header.shard.m;
    const missing = Array.from({ length: m }, (_, i) => i + 1).filter((k) => !byShard.has(k));
    if (missing.length > 0) {
      issues.push(
        issue(
          first.file,
          1,
          `shards missing from the run of ${m}`,
          `shards 1..${m}`,
          `no file for shard${missing.length > 1 ? 's' : ''} ${missing.map((k) => `${k}/${m}`).join(', ')}`,
          'run the missing shards and merge again',
        ),
      );
    }
  }
  if (issues.length > 0) throw new InputError(issues);
  const { shard: _shard, ...rest } = first.header;
  const lines = parsed.flatMap((p) => p.lines).sort((a, b) => a.seed - b.seed);
  return { header: { ...rest, shard: { k: 1, m: 1 } }, lines };
}
