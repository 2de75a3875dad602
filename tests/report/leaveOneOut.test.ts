/**
 * Kind: comparison with an independent computation. The leave-one-out shift of H0
 * (src/report/leaveOneOut.ts) against a refit done the way a user would do it by hand: copy the
 * demo release folder, delete from its files every row that names the system, and run the whole
 * calibration on the copy (`calibrateReleaseDir`, the entry point of `rungbook calibrate`, which
 * reads the files again: nothing of the leave-one-out code is shared but the ladder itself).
 * For three systems of different kinds (a supernova host, a main-sequence target, a geometric
 * anchor) H0 must be equal exactly, and the σ of the shift must be the square root of the
 * difference of the two fits' variances (Gratton & Challinor 2020, nested data subsets; from memory).
 */
import { rmSync } from 'node:fs';
import { join } from 'node:path';
import { afterAll, beforeAll, describe, expect, it } from 'vitest';
import { calibrateReleaseDir } from '../../src/cli/calibrate.ts';
import { type LeaveOneOut, leaveOneOutDir, leaveOneOutDirs } from '../../src/report/leaveOneOut.ts';
import { InputError } from '../../src/types/issues.ts';
import type { Results } from '../../src/types/results.ts';
import { copyDemo, DEMO_RELEASES, editTable, tempDir } from '../trust/releaseCopy.ts';

const RELEASE = '2026.3';
/** A supernova host, a main-sequence target and a geometric anchor of the demo release. */
const SYSTEMS = ['Lindenmarsh', 'Hollinford', 'Alder'] as const;
const TABLES = ['systems', 'parallax', 'main_sequence', 'cepheids', 'sn_calibrators'] as const;

let tmp: string;
let loo: LeaveOneOut;
let full: Results;

beforeAll(async () => {
  tmp = tempDir('rungbook-loo-');
  loo = leaveOneOutDir(join(DEMO_RELEASES, RELEASE));
  full = await calibrateReleaseDir(join(DEMO_RELEASES, RELEASE));
}, 120_000);

afterAll(() => rmSync(tmp, { recursive: true, force: true }));

/** The demo release copied with every row naming `system` deleted from its files; returns the rows deleted. */
function copyWithout(system: string): { dir: string; deleted: Record<string, number> } {
  const dir = copyDemo(RELEASE, tmp, `${RELEASE}-without-${system}`);
  const deleted: Record<string, number> = {};
  for (const table of TABLES) {
    editTable(dir, table, (t, col) => {
      const j = col('system');
      const before = t.rows.length;
      t.rows = t.rows.filter((r) => r[j] !== system);
      deleted[table] = before - t.rows.length;
    });
  }
  return { dir, deleted };
}

describe('leave-one-out against an independent refit of an edited copy', () => {
  it('has the baseline H0 of the calibration itself', () => {
    expect(loo.h0).toBe(full.h0!.value);
    expect(loo.entries.map((e) => e.system)).toContain('Lindenmarsh');
  });

  for (const system of SYSTEMS) {
    it(`gives exactly the H0 of the copy without ${system}`, async () => {
      const { dir, deleted } = copyWithout(system);
      const e = loo.entries.find((x) => x.system === system)!;
      expect(e.error).toBeNull();
      expect(deleted.systems).toBe(1);
      expect({ parallax: deleted.parallax, main_sequence: deleted.main_sequence, cepheids: deleted.cepheids, sn_calibrators: deleted.sn_calibrators }).toEqual(
        e.removed,
      );
      const without = await calibrateReleaseDir(dir);
      expect(without.h0).not.toBeNull();
      expect(e.h0).toBe(without.h0!.value);
      expect(e.shift).toBe(without.h0!.value - full.h0!.value);
      // The refit really differs from the baseline (the system mattered).
      expect(Math.abs(e.shift!)).toBeGreaterThan(1e-6);
      const dv = without.h0!.stat ** 2 - full.h0!.stat ** 2;
      expect(e.shift_err!).toBeCloseTo(Math.sqrt(Math.abs(dv)), 12);
      expect(e.variance_reversed).toBe(dv < 0);
    }, 120_000);
  }

  it('has an entry for every system: a finite shift, or the ladder’s reason for refusing the refit', () => {
    // No system may be skipped silently.
    expect(loo.entries.length).toBe(full.systems.length);
    for (const e of loo.entries) expect(e.error === null ? Number.isFinite(e.shift) : e.error.length > 0).toBe(true);
  });
});

describe('leave-one-out of several folders on worker threads', () => {
  it('gives, on two workers, exactly what one thread gives for each folder; a folder that is not a release gives its reading error and the others go on', async () => {
    const broken = tempDir('rungbook-loo-broken-');
    try {
      const dirs = [join(DEMO_RELEASES, RELEASE), broken, join(DEMO_RELEASES, '2026.1')];
      const out = await leaveOneOutDirs(dirs, 2);
      expect(out).toHaveLength(3);
      expect(out[0]).toEqual({ ok: true, value: loo });
      expect(out[1]!.ok).toBe(false);
      if (!out[1]!.ok) expect(out[1]!.error).toBeInstanceOf(InputError);
      expect(out[2]).toEqual({ ok: true, value: leaveOneOutDir(join(DEMO_RELEASES, '2026.1')) });
    } finally {
      rmSync(broken, { recursive: true, force: true });
    }
  }, 240_000);
});
