/**
 * How a command on a damaged release ended. Acceptable endings: success, or
 * exit 1 with a message that names a file of the release (an input problem) or
 * says why the analysis cannot proceed (calibrate: "rungbook calibrate: <why>";
 * check: "rungbook check: <dir>: <why>"). Everything else is a defect of ours:
 * an internal error, an escaped exception, a hang, a non-finite number, output
 * left half-written, or an exit code other than 0 or 1.
 */
import { existsSync, readFileSync } from 'node:fs';
import { parseResults } from '../../src/io/results.ts';
import type { Outcome } from './pool.ts';

export const GOOD = ['ok', 'input error', 'analysis error'] as const;
export const DEFECTS = ['internal error', 'uncaught', 'timeout', 'non-finite', 'partial output', 'bad exit', 'unnamed error'] as const;
export type Ending = (typeof GOOD)[number] | (typeof DEFECTS)[number];

export interface Ended {
  ending: Ending;
  /** Why a defect was classed so (empty for good endings). */
  why: string;
}

function allFinite(x: unknown): boolean {
  if (typeof x === 'number') return Number.isFinite(x);
  if (Array.isArray(x)) return x.every(allFinite);
  if (x && typeof x === 'object') return Object.values(x).every(allFinite);
  return true;
}

/**
 * Class of one command's ending. `dir` is the release folder as passed on the
 * command line (input errors must name a file under it); `resultsFile` is the
 * --json target of calibrate (null for check and build).
 */
export function classify(command: 'check' | 'calibrate', o: Outcome, dir: string, resultsFile: string | null): Ended {
  if ('timeout' in o) return { ending: 'timeout', why: 'no answer within the time limit' };
  if (o.uncaught !== null) return { ending: 'uncaught', why: o.uncaught.slice(0, 400) };
  const err = o.stderr;
  if (/internal error|could not be read/.test(err)) return { ending: 'internal error', why: err.slice(0, 400) };
  if (/non-finite/.test(err)) return { ending: 'non-finite', why: err.slice(0, 400) };
  const written = resultsFile !== null && existsSync(resultsFile);
  if (o.code === 0) {
    if (resultsFile === null) return { ending: 'ok', why: '' };
    if (!written) return { ending: 'partial output', why: 'exit 0 but no results.json' };
    try {
      const r = parseResults(readFileSync(resultsFile, 'utf8'), resultsFile);
      if (!allFinite(r)) return { ending: 'non-finite', why: 'results.json holds a non-finite number' };
      if (r.h0 !== null && !(r.h0.value > 0)) return { ending: 'non-finite', why: `H0 = ${r.h0.value}` };
    } catch (e) {
      return { ending: 'partial output', why: `results.json unreadable: ${(e as Error).message}` };
    }
    return { ending: 'ok', why: '' };
  }
  if (o.code !== 1) return { ending: 'bad exit', why: `exit ${o.code}: ${err.slice(0, 300)}` };
  if (written) return { ending: 'partial output', why: 'exit 1 but results.json was written' };
  // check gives the ladder's reasons as "rungbook check: <dir>: <calibrate's words>".
  if (command === 'check' && err.split('\n').some((l) => l.startsWith(`rungbook check: ${dir}: `))) return { ending: 'analysis error', why: '' };
  // An input problem names a file of the release: "<dir>/<file>:<line>: ..." (or "<dir>/<file>: ..." for a whole file).
  if (err.split('\n').some((l) => l.startsWith(`${dir}/`) || l.startsWith(`${dir}:`))) return { ending: 'input error', why: '' };
  if (command === 'calibrate' && err.startsWith('rungbook calibrate: ') && err.trim().length > 'rungbook calibrate: '.length + 20)
    return { ending: 'analysis error', why: '' };
  return { ending: 'unnamed error', why: err.slice(0, 400) };
}

/** A text table: one row per mutation kind, one column per ending, counts in the cells. */
export function endingTable(title: string, rows: readonly string[], counts: Map<string, Map<Ending, number>>): string {
  const cols = [...GOOD, ...DEFECTS].filter((e) => rows.some((r) => (counts.get(r)?.get(e) ?? 0) > 0));
  const head = ['kind', ...cols, 'total'];
  const body = rows.map((r) => {
    const c = counts.get(r) ?? new Map();
    const cells = cols.map((e) => String(c.get(e) ?? 0));
    return [r, ...cells, String(cols.reduce((n, e) => n + (c.get(e) ?? 0), 0))];
  });
  const width = head.map((h, j) => Math.max(h.length, ...body.map((b) => b[j]!.length)));
  const line = (cells: string[]) => cells.map((c, j) => (j === 0 ? c.padEnd(width[j]!) : c.padStart(width[j]!))).join('  ');
  return [title, line(head), ...body.map(line)].join('\n');
}

/** The lines of an input error that name a file of the release (the problems themselves, without the commands' own summaries). */
export function issueLines(stderr: string, dir: string): string[] {
  return stderr.split('\n').filter((l) => l.startsWith(`${dir}/`));
}

/** The reason calibrate gave for refusing the analysis ("rungbook calibrate: <why>" and its hint line), or null. */
export function calibrateReason(stderr: string): string | null {
  const m = /^rungbook calibrate: ((?!.*input problem\(s\)).*(?:\n {2}hint: .*)?)/.exec(stderr);
  return m ? m[1]! : null;
}
