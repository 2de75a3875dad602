/**
 * `rungbook check`: output lines and exit codes. A release is valid for check when
 * `rungbook calibrate` accepts it, so the valid release here is a copy of demo
 * release 2026.1; the small release of ./fixtures.ts keeps the input contract but is
 * too small to calibrate, which check says in calibrate's words.
 */
import { join } from 'node:path';
import { describe, expect, test } from 'vitest';
import { runCheck } from '../../src/cli/check.ts';
import { calibrateReleaseDir } from '../../src/cli/calibrate.ts';
import { copyDemo } from '../trust/releaseCopy.ts';
import { edited, lineOf, setCell, tempDir, validRelease, VALID_MANIFEST, writeRelease } from './fixtures.ts';

async function run(dirs: string[]) {
  const stdout: string[] = [];
  const stderr: string[] = [];
  const code = await runCheck(dirs, { stdout: (s) => stdout.push(s), stderr: (s) => stderr.push(s) });
  return { code, stdout, stderr };
}

describe('rungbook check', () => {
  test('a valid release: one ok line with files and rows, exit 0', async () => {
    const dir = copyDemo('2026.1', tempDir());
    const r = await run([dir]);
    // 2323 rows: 19 systems, 463 parallax, 951 main-sequence, 728 Cepheid, 12 calibrator and 150 Hubble-flow rows (8 files with release.yaml and notes.md).
    expect(r).toEqual({ code: 0, stdout: [`ok ${dir} (8 files, 2323 rows)`], stderr: [] });
  });

  test("a release that keeps the contract but cannot be calibrated: the ladder's reasons in calibrate's words, exit 1", async () => {
    const def = validRelease();
    const dir = writeRelease(def);
    const rows = Object.values(def.tables).reduce((n, t) => n + t!.rows.length, 0);
    expect(rows).toBe(14);
    const r = await run([dir]);
    expect(r.code).toBe(1);
    expect(r.stdout).toEqual([]);
    let refusal = '';
    await calibrateReleaseDir(dir).catch((e: Error & { hint?: string }) => (refusal = `${e.message}\n  hint: ${e.hint}`));
    expect(refusal).toMatch(/^1 anchor main-sequence star\(s\) lie in the colour range \[0\.4, 1\.2\]; a degree-3 locus needs at least 20\n {2}hint: /);
    expect(r.stderr).toEqual([`rungbook check: ${dir}: ${refusal}`, `${dir}: 1 problem(s): the ladder cannot be calibrated`]);
  });

  test('an invalid release: every problem as file:line: column "x": message; expected ..., found ...; exit 1', async () => {
    const def = edited((d) => {
      setCell(d, 'parallax', 1, 'parallax_err', '-0.06');
      d.manifest = VALID_MANIFEST.replace('blinded: false', 'blinding: false');
    });
    const dir = writeRelease(def);
    const r = await run([dir]);
    expect(r.code).toBe(1);
    expect(r.stdout).toEqual([]);
    expect(r.stderr).toEqual([
      `${join(dir, 'release.yaml')}:${lineOf(def.manifest!, 'blinding')}: column "blinding": unknown key; expected one of id, title, date, previous, blinded, analysis, found "blinding" (did you mean "blinded"?)`,
      // Line 14: 11 header lines (signature, ---, delimiter, datatype:, six columns, schema), the names row, a-001, a-002.
      `${join(dir, 'parallax.ecsv')}:14: column "parallax_err": the value must be greater than zero; expected > 0, found "-0.06"`,
      `${dir}: 2 problem(s)`,
    ]);
  });

  test('several folders: each reported, exit 1 if any fails', async () => {
    const good = copyDemo('2026.1', tempDir());
    const bad = writeRelease(edited((d) => setCell(d, 'systems', 0, 'kind', '')));
    const r = await run([good, bad]);
    expect(r.code).toBe(1);
    expect(r.stdout).toEqual([`ok ${good} (8 files, 2323 rows)`]);
    expect(r.stderr[0]).toMatch(
      new RegExp(
        `^${join(bad, 'systems.ecsv').replace(/[.*+?^${}()|[\]\\]/g, '\\$&')}:\\d+: column "kind": a required value is empty; expected a value, found an empty cell$`,
      ),
    );
  });

  test('no folder given: usage, exit 2', async () => {
    const r = await run([]);
    expect(r.code).toBe(2);
    expect(r.stderr[0]).toMatch(/^usage: rungbook check/);
  });
});
