/**
 * Collecting the problems of one input file. Readers report every problem they
 * find (not only the first), so a user can fix a file in one pass; past
 * MAX_ISSUES_PER_FILE the rest are only counted ("and N more").
 */
import { MAX_ISSUES_PER_FILE, type InputIssue } from '../types/issues.ts';

/** An issue before it is attached to its file. */
export type Problem = Omit<InputIssue, 'file'>;

export interface FileIssues {
  /** Path as given to the tool (release-dir/file). */
  readonly file: string;
  /** Problems in the order found. */
  readonly problems: Problem[];
}

export function newFileIssues(file: string): FileIssues {
  return { file, problems: [] };
}

/** Issues of one file, sorted by line (stable), capped, with a closing "and N more" entry. */
export function finishFileIssues(f: FileIssues, cap = MAX_ISSUES_PER_FILE): { issues: InputIssue[]; omitted: number } {
  const sorted = f.problems
    .map((p, i) => ({ p, i }))
    .sort((a, b) => (a.p.line ?? 0) - (b.p.line ?? 0) || a.i - b.i)
    .map(({ p }) => ({ file: f.file, ...p }));
  if (sorted.length <= cap) return { issues: sorted, omitted: 0 };
  const omitted = sorted.length - cap;
  const kept = sorted.slice(0, cap);
  kept.push({
    code: 'more-issues',
    file: f.file,
    message: `and ${omitted} more problem(s) in this file, not listed`,
    hint: 'fix the ones above and check again',
  });
  return { issues: kept, omitted };
}

/** Quote a found value for a message: strings in double quotes, long ones shortened. */
export function shown(value: unknown): string {
  if (value === null) return 'null';
  if (value === undefined) return 'nothing';
  if (typeof value === 'string') {
    const s = value.length > 60 ? value.slice(0, 57) + '...' : value;
    // JSON escapes C0 controls; C1 controls (U+0080-U+009F) too, so a message never carries one
    return JSON.stringify(s).replace(/[\u007f-\u009f]/g, (c) => `\\u${c.charCodeAt(0).toString(16).padStart(4, '0')}`);
  }
  if (value instanceof Date) return value.toISOString();
  if (Array.isArray(value)) return `a list of ${value.length}`;
  if (typeof value === 'object') return 'a mapping';
  return String(value);
}
