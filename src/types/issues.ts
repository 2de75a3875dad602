/**
 * Errors are data: every problem found in an input names where it is
 * (file, 1-based line as an editor shows it, column), what was expected and
 * what was found. Readers collect all issues of a file (up to a cap) and throw
 * one InputError carrying them.
 */
export interface InputIssue {
  /** Stable machine code, e.g. "missing-column", "not-finite", "unknown-unit". */
  code: string;
  /** Path as given to the tool (release-dir/file). */
  file: string;
  line?: number;
  column?: string;
  expected?: string;
  found?: string;
  message: string;
  hint?: string;
}

/** At most this many issues are listed per file; the count of the rest is given. */
export const MAX_ISSUES_PER_FILE = 50;

export function formatIssue(issue: InputIssue): string {
  const where = [issue.file, issue.line !== undefined ? String(issue.line) : undefined].filter((x) => x !== undefined).join(':');
  const col = issue.column !== undefined ? ` column "${issue.column}":` : '';
  const exp = issue.expected !== undefined ? ` expected ${issue.expected}` : '';
  const fnd = issue.found !== undefined ? `, found ${issue.found}` : '';
  const hint = issue.hint ? ` (${issue.hint})` : '';
  return `${where}:${col} ${issue.message}${exp ? ';' + exp : ''}${fnd}${hint}`;
}

export class InputError extends Error {
  readonly issues: InputIssue[];
  readonly omitted: number;
  constructor(issues: InputIssue[], omitted = 0) {
    const head = issues.slice(0, 3).map(formatIssue).join('\n');
    super(`${issues.length + omitted} input problem(s):\n${head}`);
    this.name = 'InputError';
    this.issues = issues;
    this.omitted = omitted;
  }
}

/** Why the analysis of a release cannot proceed, in words the user can act on (e.g. one anchor star). */
export interface AnalysisProblem {
  message: string;
  hint?: string;
}

/** An analysis that cannot proceed for a reason the user can fix (e.g. one anchor star). */
export class AnalysisError extends Error {
  readonly hint?: string;
  constructor(message: string, hint?: string) {
    super(message);
    this.name = 'AnalysisError';
    this.hint = hint;
  }

  static of(problem: AnalysisProblem): AnalysisError {
    return new AnalysisError(problem.message, problem.hint);
  }
}
