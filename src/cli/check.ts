/**
 * `rungbook check <release-dir>...`: validate releases without calibrating.
 * Prints `ok <dir> (N files, M rows)` per valid release on stdout and every
 * problem of an invalid one on stderr, one per line, as
 * `file:line: column "x": message; expected ..., found ...`.
 * Returns the exit code: 0 all valid, 1 any invalid, 2 no release given.
 */
import { formatIssue, InputError } from '../types/issues.ts';
import { loadRelease } from '../io/release.ts';

export interface CheckOutput {
  stdout: (s: string) => void;
  stderr: (s: string) => void;
}

export async function runCheck(dirs: string[], out: CheckOutput): Promise<number> {
  if (dirs.length === 0) {
    out.stderr('usage: rungbook check <release-dir>...');
    return 2;
  }
  let failed = false;
  for (const dir of dirs) {
    try {
      const release = loadRelease(dir);
      const rows = release.inputs.reduce((sum, f) => sum + f.rows, 0);
      out.stdout(`ok ${dir} (${release.inputs.length} files, ${rows} rows)`);
    } catch (err) {
      failed = true;
      if (err instanceof InputError) {
        for (const issue of err.issues) out.stderr(formatIssue(issue));
        const total = err.issues.filter((i) => i.code !== 'more-issues').length + err.omitted;
        out.stderr(`${dir}: ${total} problem(s)`);
      } else {
        out.stderr(`${dir}: could not be read: ${err instanceof Error ? err.message : String(err)}`);
      }
    }
  }
  return failed ? 1 : 0;
}
