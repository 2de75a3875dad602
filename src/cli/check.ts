/**
 * `rungbook check <release-dir>...`: everything `rungbook calibrate` would refuse a
 * release for, without writing anything:
 * 1. the input contract, the blinding record and the publication record, as
 *    calibrate reads the folder (loadReleaseWithBlinding): every problem as
 *    `file:line: column "x": message; expected ..., found ...`, then
 *    `<dir>: N problem(s)`;
 * 2. the ladder: every structural problem, or else what the baseline pass of
 *    the ladder refuses (checkLadder, the same code calibrate runs), each as
 *    `rungbook check: <dir>: <message>` and its hint, in calibrate's words.
 * A valid release prints `ok <dir> (N files, M rows)` on stdout. Hidden files
 * and editor backups, which are never read, are listed on stdout as ignored.
 * Returns the exit code: 0 all valid, 1 any invalid, 2 no release given.
 */
import { loadReleaseWithBlinding } from '../blinding/apply.ts';
import { classifyFolder } from '../io/folder.ts';
import { releaseFolderEntries } from '../io/release.ts';
import { checkLadder } from '../ladder/calibrate.ts';
import { formatIssue, InputError } from '../types/issues.ts';

export interface CheckOutput {
  stdout: (s: string) => void;
  stderr: (s: string) => void;
}

/** Hidden files and editor backups in a release folder (none when the folder cannot be listed). */
function ignoredFiles(dir: string): string[] {
  try {
    return classifyFolder(releaseFolderEntries(dir)).ignored;
  } catch {
    return [];
  }
}

export async function runCheck(dirs: string[], out: CheckOutput): Promise<number> {
  if (dirs.length === 0) {
    out.stderr('usage: rungbook check <release-dir>...');
    return 2;
  }
  let failed = false;
  for (const dir of dirs) {
    const ignored = ignoredFiles(dir);
    if (ignored.length > 0) out.stdout(`${dir}: ignored ${ignored.map((f) => JSON.stringify(f)).join(', ')} (hidden files and editor backups are never read)`);
    try {
      const { release } = loadReleaseWithBlinding(dir);
      const problems = checkLadder(release);
      if (problems.length > 0) {
        failed = true;
        for (const p of problems) out.stderr(`rungbook check: ${dir}: ${p.message}${p.hint ? `\n  hint: ${p.hint}` : ''}`);
        out.stderr(`${dir}: ${problems.length} problem(s): the ladder cannot be calibrated`);
        continue;
      }
      const rows = release.inputs.reduce((sum, f) => sum + f.rows, 0);
      out.stdout(`ok ${dir} (${release.inputs.length} files, ${rows} rows)`);
    } catch (err) {
      failed = true;
      if (err instanceof InputError) {
        for (const issue of err.issues) out.stderr(formatIssue(issue));
        const total = err.issues.filter((i) => i.code !== 'more-issues').length + err.omitted;
        out.stderr(`${dir}: ${total} problem(s)`);
      } else {
        // A defect of ours, not of the release: say so plainly (as main() does for the other commands).
        const e = err as Error;
        out.stderr(`rungbook check: ${dir}: internal error (${e?.name ?? 'Error'}: ${e?.message ?? String(err)}); please report it with the release`);
      }
    }
  }
  return failed ? 1 : 0;
}
