/**
 * The committed demo releases: the attribution adds up to the shift for every pair, names the
 * groups that the release notes say changed, and does not depend on the direction of comparison.
 */
import { join } from 'node:path';
import { describe, expect, it } from 'vitest';
import { compareReleaseDirs } from '../../src/diff/compare.ts';
import type { DiffReport } from '../../src/diff/types.ts';
import { DEMO_DIR } from './fixtures.ts';
import { ATTRIBUTION_SUM_REL, REL_1E12, relErr } from './tolerances.ts';

const dir = (id: string) => join(DEMO_DIR, id);
const cache = new Map<string, Promise<DiffReport>>();
function compare(a: string, b: string): Promise<DiffReport> {
  const key = `${a}>${b}`;
  if (!cache.has(key)) cache.set(key, compareReleaseDirs(dir(a), dir(b)));
  return cache.get(key)!;
}

function checkSum(r: DiffReport): void {
  const total = r.h0!.delta!;
  const sum = r.attribution.reduce((s, e) => s + e.delta_h0, 0);
  expect(Math.abs(total)).toBeGreaterThan(0);
  expect(relErr(sum, total)).toBeLessThan(ATTRIBUTION_SUM_REL);
  expect(r.attribution_detail!.sum_rel_error).toBeLessThan(ATTRIBUTION_SUM_REL);
  // the shift is that of the two calibrations themselves (h0.b - h0.a as printed)
  expect(relErr(total, r.h0!.b! - r.h0!.a!)).toBeLessThan(REL_1E12);
}

const differing = (r: DiffReport) => r.attribution.filter((e) => e.differs).map((e) => e.group);

describe('demo releases: contributions add up to the shift', () => {
  it('2026.1 -> 2026.2 (new parallax catalogue and its zero point)', async () => {
    const r = await compare('2026.1', '2026.2');
    checkSum(r);
    expect(differing(r)).toEqual(['parallax', 'analysis']);
    expect(r.input_changes.analysis.map((c) => c.key)).toEqual(['parallax_zero_point', 'parallax_zero_point_err']);
    const par = r.inputs.find((t) => t.table === 'parallax')!;
    expect(par.remeasured).toBe(par.rows_a); // new catalogue: every parallax error changed
    expect(r.top_objects.length).toBe(10);
    expect(r.top_objects.every((o) => o.table === 'parallax')).toBe(true);
  });

  it('2026.2 -> 2026.3 (H photometry of two hosts corrected, 100 more Hubble-flow supernovae)', async () => {
    const r = await compare('2026.2', '2026.3');
    checkSum(r);
    expect(differing(r)).toEqual(['cepheids', 'sn_hubble_flow']);
    const hf = r.inputs.find((t) => t.table === 'sn_hubble_flow')!;
    expect([hf.added, hf.removed, hf.changed]).toEqual([100, 0, 0]);
    expect(r.input_changes.variants).toEqual([{ name: 'alpha and beta fixed', kind: 'added', a: null, b: { sn_alpha: 0.14, sn_beta: 3.1 } }]);
    // nested Hubble-flow sample, corrected (not remeasured) Cepheids: far below the naive quadrature sum
    expect(r.h0!.sigma_diff!).toBeLessThan(0.5 * r.h0!.sigma_naive!);
  });

  it('2026.1 -> 2026.3 (four groups, 14 hybrid releases)', async () => {
    const r = await compare('2026.1', '2026.3');
    checkSum(r);
    expect(differing(r)).toEqual(['parallax', 'cepheids', 'sn_hubble_flow', 'analysis']);
    expect(r.attribution_detail!.hybrids.length).toBe(16);
  });

  it('reversing the comparison negates every contribution (no dependence on order)', async () => {
    const [fwd, back] = await Promise.all([compare('2026.2', '2026.3'), compare('2026.3', '2026.2')]);
    checkSum(back);
    expect(back.h0!.delta).toBe(-fwd.h0!.delta!);
    fwd.attribution.forEach((e, i) => {
      expect(back.attribution[i].group).toBe(e.group);
      expect(Math.abs(back.attribution[i].delta_h0 + e.delta_h0)).toBeLessThan(REL_1E12 * fwd.h0!.a!);
    });
    expect(relErr(back.h0!.sigma_diff!, fwd.h0!.sigma_diff!)).toBeLessThan(REL_1E12);
  });

  it('2026.3 -> 2026.4 (published blinded): the shift and its attribution are withheld, the input changes are not', async () => {
    const r = await compare('2026.3', '2026.4');
    expect(r.blinding).toMatchObject({ a: false, b: true, values_hidden: true, shift_hidden: true });
    expect([r.h0!.a, r.h0!.b, r.h0!.delta]).toEqual([null, null, null]);
    expect(r.attribution).toEqual([]);
    const hf = r.inputs.find((t) => t.table === 'sn_hubble_flow')!;
    expect([hf.added, hf.removed]).toEqual([hf.rows_b, hf.rows_a]); // a new season: no supernova in common
  });
});
