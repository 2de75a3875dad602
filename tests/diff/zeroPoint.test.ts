/**
 * Attribution checks on pairs that differ in one known way (issue: "a release pair that
 * differs only in the parallax zero point ... its size matches an independent recalculation"):
 *  - P0 vs Pz: release.yaml's parallax_zero_point lowered by 0.01 mas, nothing else;
 *  - P0 vs Pt: every parallax in the table raised by 0.01 mas, nothing else.
 * Corrected parallaxes are measured - zero point, so both changes raise every corrected
 * parallax by the same 0.01 mas: the two shifts of H0 must agree (to the rounding of the inputs),
 * and the attribution must put the first on `analysis` and the second on `parallax`.
 */
import { join } from 'node:path';
import { afterAll, beforeAll, describe, expect, it } from 'vitest';
import { compareReleaseDirs } from '../../src/diff/compare.ts';
import type { DiffReport } from '../../src/diff/types.ts';
import { DEMO_SEED, writeGeneratedRelease } from '../../src/demo/index.ts';
import { calibrateReleaseDir } from '../../src/cli/calibrate.ts';
import { addDecimal, editEcsv, editText, tempDir } from './fixtures.ts';
import { ATTRIBUTION_SUM_REL, OTHER_GROUPS_FRACTION_MAX, REL_SAME_CALIBRATION_ROUNDING, relErr } from './tolerances.ts';

const SHIFT_MAS = 0.01;
const tmp = tempDir('zp');
let p0: string;
let pz: string;
let pt: string;
let zeroPoint: DiffReport;
let table: DiffReport;

function readZeroPoint(dir: string): number {
  let v = NaN;
  editText(join(dir, 'release.yaml'), (t) => {
    v = Number(/^ {2}parallax_zero_point: (\S+)$/m.exec(t)![1]);
    return t;
  });
  return v;
}

beforeAll(async () => {
  const options = { seed: DEMO_SEED + 11, variants: [], writeTruth: false };
  p0 = writeGeneratedRelease(tmp.dir, 'p0', options).dir;
  pz = writeGeneratedRelease(tmp.dir, 'pz', options).dir;
  pt = writeGeneratedRelease(tmp.dir, 'pt', options).dir;
  const z0 = readZeroPoint(pz);
  editText(join(pz, 'release.yaml'), (t) => t.replace(/^( {2}parallax_zero_point: )\S+$/m, `$1${(z0 - SHIFT_MAS).toFixed(6)}`));
  editEcsv(join(pt, 'parallax.ecsv'), (e) => {
    const col = e.header.indexOf('parallax');
    for (const row of e.rows) row[col] = addDecimal(row[col], SHIFT_MAS, 2);
  });
  [zeroPoint, table] = await Promise.all([compareReleaseDirs(p0, pz), compareReleaseDirs(p0, pt)]);
});
afterAll(() => tmp.remove());

function only(r: DiffReport, group: string): void {
  const total = r.h0!.delta!;
  expect(Math.abs(total)).toBeGreaterThan(0.1); // a visible shift, so the check below means something
  for (const e of r.attribution) {
    if (e.group === group) {
      expect(e.differs).toBe(true);
      expect(relErr(e.delta_h0, total)).toBeLessThan(ATTRIBUTION_SUM_REL);
    } else {
      expect(e.differs, e.group).toBe(false);
      expect(Math.abs(e.delta_h0) / Math.abs(total)).toBeLessThan(OTHER_GROUPS_FRACTION_MAX);
    }
  }
}

describe('attribution of a zero-point change', () => {
  it('a zero point moved in release.yaml is all on `analysis`, and reported as that choice', () => {
    only(zeroPoint, 'analysis');
    expect(zeroPoint.input_changes.analysis.map((c) => c.key)).toEqual(['parallax_zero_point']);
    expect(zeroPoint.inputs.every((t) => t.changed + t.added + t.removed === 0)).toBe(true);
  });

  it('every parallax shifted in the table is all on `parallax`, and every star is listed', () => {
    only(table, 'parallax');
    expect(table.input_changes.analysis).toEqual([]);
    const par = table.inputs.find((t) => t.table === 'parallax')!;
    expect(par.changed).toBe(par.rows_a);
    expect(par.corrected).toBe(par.rows_a); // uncertainties untouched: the same measurements, corrected
    const col = par.columns.find((c) => c.column === 'parallax')!;
    expect(col.changed).toBe(par.rows_a);
    expect(relErr(col.median!, SHIFT_MAS)).toBeLessThan(1e-9);
  });

  it('the two shifts agree: moving every parallax by +0.01 mas is moving the zero point by -0.01 mas', () => {
    expect(relErr(table.h0!.b!, zeroPoint.h0!.b!)).toBeLessThan(REL_SAME_CALIBRATION_ROUNDING);
    // the shifts therefore agree to that fraction of H0 (about 1e-4 km/s/Mpc), ~1e-4 of the shift itself
    expect(Math.abs(table.h0!.delta! - zeroPoint.h0!.delta!)).toBeLessThan(REL_SAME_CALIBRATION_ROUNDING * zeroPoint.h0!.b!);
  });

  it('the shift is that of two independent calibrations of the folders', async () => {
    const [a, b] = await Promise.all([calibrateReleaseDir(p0), calibrateReleaseDir(pz)]);
    expect(relErr(zeroPoint.h0!.delta!, b.h0!.value - a.h0!.value)).toBeLessThan(1e-12);
  });

  it('a shift at fixed noise has (almost) no statistical spread and is flagged', () => {
    // the same data enter both fits: only the re-weighting by the fit moves, so sigma_diff is tiny
    expect(zeroPoint.h0!.sigma_diff!).toBeLessThan(0.05 * Math.abs(zeroPoint.h0!.delta!));
    expect(zeroPoint.h0!.flagged).toBe(true);
  });
});
