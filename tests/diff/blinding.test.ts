/**
 * Blinded releases (blinded for real with src/blinding, a test key): H0 values are never
 * printed; the shift is shown only when both releases are blinded alike (same key and
 * blinding id), and withheld when they are blinded differently or only one is blinded.
 */
import { afterAll, beforeAll, describe, expect, it } from 'vitest';
import { blindReleaseFolder } from '../../src/blinding/index.ts';
import { compareReleaseDirs } from '../../src/diff/compare.ts';
import { renderMarkdown, renderText } from '../../src/diff/render.ts';
import type { DiffReport } from '../../src/diff/types.ts';
import { DEMO_SEED, writeGeneratedRelease } from '../../src/demo/index.ts';
import { calibrateReleaseDir } from '../../src/cli/calibrate.ts';
import { ATTRIBUTION_SUM_REL, REL_SAME_CALIBRATION_ROUNDING, relErr } from './tolerances.ts';
import { tempDir } from './fixtures.ts';

/** A key for these tests only (never a real one). */
const KEY = Buffer.from('diff-test-key-not-for-real-use-42');
const tmp = tempDir('blind');
let dirs: Record<'a' | 'alike' | 'other' | 'open', string>;
/** Every H0 value involved, blinded (as calibrated) and true (before blinding). */
const h0: Record<string, number> = {};
afterAll(() => tmp.remove());

beforeAll(async () => {
  const common = { seed: DEMO_SEED + 5, variants: [], writeTruth: false };
  dirs = {
    a: writeGeneratedRelease(tmp.dir, 'blind-a', { ...common, hubbleFlowCount: 150 }).dir,
    alike: writeGeneratedRelease(tmp.dir, 'blind-b', { ...common, hubbleFlowCount: 220 }).dir,
    other: writeGeneratedRelease(tmp.dir, 'blind-c', { ...common, hubbleFlowCount: 220 }).dir,
    open: writeGeneratedRelease(tmp.dir, 'open-b', { ...common, hubbleFlowCount: 220 }).dir,
  };
  for (const k of ['a', 'alike', 'other'] as const) h0[`true-${k}`] = (await calibrateReleaseDir(dirs[k])).h0!.value;
  blindReleaseFolder(dirs.a, KEY, { blindingId: 'season-x', date: '2026-05-01' });
  blindReleaseFolder(dirs.alike, KEY, { blindingId: 'season-x', date: '2026-05-02' });
  blindReleaseFolder(dirs.other, KEY, { blindingId: 'season-y', date: '2026-05-03' });
  for (const k of ['a', 'alike', 'other', 'open'] as const) h0[k] = (await calibrateReleaseDir(dirs[k])).h0!.value;
});

/** No rendering of the values with 1 to 3 decimals (as any output would show them), nor in full. */
function expectNone(text: string, values: number[], decimals: number[] = [1, 2, 3]): void {
  for (const v of values) {
    for (const digits of decimals) {
      expect(text).not.toMatch(new RegExp(`(?<![\\d.])${v.toFixed(digits).replace('.', '\\.')}(?!\\d)`));
    }
    expect(text).not.toContain(String(v));
  }
}

const allOutputs = (r: DiffReport) => [JSON.stringify(r), renderText(r), renderMarkdown(r)].join('\n');
const hidden = () => [h0.a, h0.alike, h0.other, h0['true-a'], h0['true-alike'], h0['true-other']];

describe('comparing blinded releases', () => {
  it('blinded alike: the shift (of blinded values) and its attribution are shown, H0 values are not', async () => {
    const r = await compareReleaseDirs(dirs.a, dirs.alike);
    expect(r.blinding).toMatchObject({ a: true, b: true, alike: true, values_hidden: true, shift_hidden: false });
    expect([r.h0!.a, r.h0!.b]).toEqual([null, null]);
    expect(relErr(r.h0!.delta!, h0.alike - h0.a)).toBeLessThan(1e-12);
    // the hidden factor is common: the ratio is the true one (to the fits' convergence tolerances:
    // the blinded and the true fits are different runs of the iteration)
    expect(relErr(r.h0!.ratio!, h0['true-alike'] / h0['true-a'])).toBeLessThan(REL_SAME_CALIBRATION_ROUNDING);
    expect(
      relErr(
        r.attribution.reduce((s, e) => s + e.delta_h0, 0),
        r.h0!.delta!,
      ),
    ).toBeLessThan(ATTRIBUTION_SUM_REL);
    for (const name of ['M_B', 'a_B']) {
      const p = r.parameters.find((x) => x.name === name)!;
      expect([p.blinded, p.a, p.b]).toEqual([true, null, null]);
    }
    expectNone(allOutputs(r), hidden());
  });

  it('blinded with different offsets: neither values nor the shift', async () => {
    const r = await compareReleaseDirs(dirs.a, dirs.other);
    expect(r.blinding).toMatchObject({ a: true, b: true, alike: false, values_hidden: true, shift_hidden: true });
    expect([r.h0!.a, r.h0!.b, r.h0!.delta, r.h0!.delta_sigma, r.h0!.ratio]).toEqual([null, null, null, null, null]);
    expect(r.attribution).toEqual([]);
    expect(r.top_objects).toEqual([]);
    expectNone(allOutputs(r), hidden());
    expectNone(renderText(r) + renderMarkdown(r), [h0.other - h0.a, h0['true-other'] - h0['true-a']], [2, 3]);
    expect(renderMarkdown(r)).toContain('withheld');
  });

  it('one release blinded, the other not: the shift would reveal the blinded value, so it is withheld', async () => {
    const r = await compareReleaseDirs(dirs.a, dirs.open);
    expect(r.blinding).toMatchObject({ a: true, b: false, alike: false, values_hidden: true, shift_hidden: true });
    expect(r.h0!.delta).toBeNull();
    expect(r.attribution).toEqual([]);
    expectNone(allOutputs(r), hidden());
    expectNone(renderText(r) + renderMarkdown(r), [h0.open - h0.a, h0.open - h0['true-a']], [2, 3]);
  });
});
