/** Hybrid releases and the jobs that recalibrate them. */
import { join } from 'node:path';
import { describe, expect, it } from 'vitest';
import { loadRelease } from '../../src/io/release.ts';
import { calibrateRelease, runLadder } from '../../src/ladder/calibrate.ts';
import { baselineResults, newJobContext, runJob } from '../../src/diff/jobs.ts';
import { differingGroups, hybridRelease } from '../../src/diff/hybrid.ts';
import type { Release } from '../../src/types/release.ts';
import { DEMO_DIR } from './fixtures.ts';

const load = (id: string) => loadRelease(join(DEMO_DIR, id));

describe('hybrid releases', () => {
  it('with no group from b a hybrid calibrates exactly as a; with every differing group, exactly as b', () => {
    const a = load('2026.1');
    const b = load('2026.3');
    const groups = differingGroups(a, b);
    expect(groups).toEqual(['parallax', 'cepheids', 'sn_hubble_flow', 'analysis']);
    const none = hybridRelease(a, b, new Set());
    const all = hybridRelease(a, b, new Set(groups));
    expect(runLadder(none, none.analysis).log10H0!.value).toBe(runLadder(a, a.analysis).log10H0!.value);
    expect(runLadder(all, all.analysis).log10H0!.value).toBe(runLadder(b, b.analysis).log10H0!.value);
  });

  it("a table from b that names a system a lacks brings that system's row along; the systems group alone does not", () => {
    const a = load('2026.2');
    const b: Release = structuredClone(a);
    const host = b.snCalibrators[0].system;
    // b: a new host galaxy with the Cepheids and the supernova of an existing one
    b.systems.push({ ...b.systems.find((s) => s.system === host)!, system: 'Newhost' });
    b.cepheids.push(...b.cepheids.filter((c) => c.system === host).map((c) => ({ ...c, star: `Newhost-${c.star}`, system: 'Newhost' })));
    b.snCalibrators.push({ ...b.snCalibrators[0], sn: 'sn-newhost', system: 'Newhost' });
    expect(differingGroups(a, b)).toEqual(['cepheids', 'sn_calibrators', 'systems']);
    const onlyTables = hybridRelease(a, b, new Set(['cepheids', 'sn_calibrators']));
    expect(onlyTables.systems.map((s) => s.system)).toEqual([...a.systems.map((s) => s.system), 'Newhost']);
    expect(runLadder(onlyTables, onlyTables.analysis).log10H0).not.toBeNull();
    const onlySystems = hybridRelease(a, b, new Set(['systems']));
    expect(onlySystems.systems).toBe(b.systems);
    // an unreferenced extra system changes nothing
    expect(runLadder(onlySystems, onlySystems.analysis).log10H0!.value).toBe(runLadder(a, a.analysis).log10H0!.value);
  });
});

describe('side jobs', () => {
  it('give the results of calibrateRelease for the release without its variants, computed from one baseline run', () => {
    const a = load('2026.2');
    const ctx = newJobContext(a, a, 'code-x');
    const side = runJob(ctx, { kind: 'side', side: 'a' });
    if (side.kind !== 'side') throw new Error('wrong job kind');
    const expected = calibrateRelease({ ...a, variants: [] }, { codeVersion: 'code-x' });
    expect(side.results).toEqual(expected);
    expect(baselineResults(a, runLadder(a, a.analysis), 'code-x')).toEqual(expected);
  });
});
