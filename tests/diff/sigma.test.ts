/**
 * The uncertainty of a difference (src/diff/sigma.ts) on constructed cases:
 *  - identical data: exactly zero;
 *  - nothing shared (every row renamed, so no error is common): the quadrature sum;
 *  - release b = a + independent Hubble-flow supernovae: over many noise realizations, the spread
 *    of the actual H0 differences matches the predicted sigma_diff, which is close to the nested
 *    rule sqrt(sigma_a^2 - sigma_b^2) and far below the quadrature sum.
 */
import { join } from 'node:path';
import { afterAll, describe, expect, it } from 'vitest';
import { loadRelease } from '../../src/io/release.ts';
import { newRungCache, runLadder } from '../../src/ladder/calibrate.ts';
import { cleanReleaseSpec, generateUniverse, observeRelease, writeReleaseFiles } from '../../src/demo/index.ts';
import { newJobContext, runJob, type DiffJobResult } from '../../src/diff/jobs.ts';
import { noiseSharing } from '../../src/diff/noise.ts';
import { prepareSide, sigmaOfDifference } from '../../src/diff/sigma.ts';
import { fitSnapshot, log10H0Gradient, type FitSnapshot } from '../../src/diff/snapshot.ts';
import { DEFAULT_ANALYSIS } from '../../src/types/analysis.ts';
import { createRng } from '../../src/demo/index.ts';
import type { Release } from '../../src/types/release.ts';
import { DEMO_DIR, tempDir } from './fixtures.ts';
import { REL_1E9, STAT_SIGMAS, relErr } from './tolerances.ts';

type Side = Extract<DiffJobResult, { kind: 'side' }>;

function h0Sigma(a: Release, b: Release): { sigma: number; statA: number; statB: number } {
  const ctx = newJobContext(a, b, 'test');
  const sa = runJob(ctx, { kind: 'side', side: 'a' }) as Side;
  const sb = runJob(ctx, { kind: 'side', side: 'b' }) as Side;
  const sh = noiseSharing(a, b);
  const ha = sa.results!.h0!.value;
  const hb = sb.results!.h0!.value;
  const r = sigmaOfDifference(
    prepareSide(sa.snapshot!),
    log10H0Gradient(sa.snapshot!)!,
    ha * Math.LN10,
    prepareSide(sb.snapshot!),
    log10H0Gradient(sb.snapshot!)!,
    hb * Math.LN10,
    sh,
    sh.nested(['sn_calibrators', 'sn_hubble_flow']),
  );
  // each side's own variance is the fit's statistical variance from the rows (the decomposition is
  // exact); H0's published statistical error also carries the scatters' estimation uncertainty, a
  // budget line of its own, which the row decomposition does not see
  const rowStat = (x: typeof sa) => {
    const scatter = x.results!.budget.find((e) => e.source === 'intrinsic_scatters')?.sigma_h0 ?? 0;
    return Math.sqrt(x.results!.h0!.stat ** 2 - scatter ** 2);
  };
  expect(relErr(Math.sqrt(r.varA), rowStat(sa))).toBeLessThan(REL_1E9);
  expect(relErr(Math.sqrt(r.varB), rowStat(sb))).toBeLessThan(REL_1E9);
  return { sigma: r.sigma, statA: rowStat(sa), statB: rowStat(sb) };
}

describe('sigma of a difference: constructed cases', () => {
  it('identical data give exactly zero', () => {
    const a = loadRelease(join(DEMO_DIR, '2026.3'));
    expect(h0Sigma(a, structuredClone(a)).sigma).toBe(0);
  });

  it('nothing shared gives the quadrature sum of the two errors', () => {
    const a = loadRelease(join(DEMO_DIR, '2026.3'));
    const b = structuredClone(a);
    const rename = (id: string) => `other-${id}`;
    for (const r of b.parallax) r.star = rename(r.star);
    for (const r of b.mainSequence) r.star = rename(r.star);
    for (const r of b.cepheids) r.star = rename(r.star);
    for (const r of b.snCalibrators) r.sn = rename(r.sn);
    for (const r of b.snHubbleFlow) r.sn = rename(r.sn);
    const s = h0Sigma(a, b);
    expect(relErr(s.sigma, Math.hypot(s.statA, s.statB))).toBeLessThan(REL_1E9);
  });
});

/**
 * A hand-built straight-line fit y = c0 + c1 x (two parameters, diagonal errors) as the snapshot
 * sigma.ts reads. F^-1 is inverted here in closed form (2 x 2), independently of the code.
 */
function lineSnapshot(x: number[], v: number[], ids: string[]): FitSnapshot {
  let s0 = 0;
  let s1 = 0;
  let s2 = 0;
  x.forEach((xi, i) => {
    s0 += 1 / v[i];
    s1 += xi / v[i];
    s2 += (xi * xi) / v[i];
  });
  const det = s0 * s2 - s1 * s1;
  return {
    analysis: DEFAULT_ANALYSIS as FitSnapshot['analysis'],
    paramNames: ['c0', 'c1'],
    q: [0, 0],
    covGls: [s2 / det, -s1 / det, -s1 / det, s0 / det],
    standardisation: { names: [], cov: [], jacobian: [] },
    state: { alpha: 0, beta: 0, scatterCepheid: 0, scatterSupernova: 0 },
    fieldStarMu: {},
    blocks: [{ table: 'sn_hubble_flow', ids, rows: x.map((xi) => ({ idx: [0, 1], coef: [1, xi] })), y: x.map(() => 0), diagonal: true, v, cov: null }],
    rejected: [],
    log10H0: null,
    msJacobian: { anchors: [], targets: [], g: [] },
  };
}

describe('sigma of a difference: the nested-samples identity', () => {
  it('b = a + independent rows, one error model: sigma_diff^2 = sigma_a^2 - sigma_b^2 exactly', () => {
    const rng = createRng(7);
    const n = 40;
    const m = 25;
    const x = Array.from({ length: n + m }, () => 3 * rng.normal());
    const v = Array.from({ length: n + m }, () => 0.05 + rng.uniform());
    const ids = x.map((_, i) => `row-${i}`);
    const a = lineSnapshot(x.slice(0, n), v.slice(0, n), ids.slice(0, n));
    const b = lineSnapshot(x, v, ids);
    const sharing = { rowCommon: () => true, priorCommon: () => true, nested: () => true, status: () => 'same' as const };
    for (const g of [
      [0, 1],
      [1, 0],
      [1, 2.5],
    ]) {
      const r = sigmaOfDifference(prepareSide(a), g, 1, prepareSide(b), g, 1, sharing, true);
      expect(relErr(r.sigma ** 2, r.varA - r.varB)).toBeLessThan(REL_1E9);
      // and each side's variance is g^T F^-1 g
      const quad = (s: FitSnapshot) => g[0] * (s.covGls[0] * g[0] + s.covGls[1] * g[1]) + g[1] * (s.covGls[2] * g[0] + s.covGls[3] * g[1]);
      expect(relErr(r.varA, quad(a))).toBeLessThan(REL_1E9);
      expect(relErr(r.varB, quad(b))).toBeLessThan(REL_1E9);
    }
  });
});

describe('sigma of a difference: nested samples, simulated', () => {
  const tmp = tempDir('sigma');
  afterAll(() => tmp.remove());
  /** Noise realizations of the Hubble-flow table (every other table fixed). */
  const REALIZATIONS = 48;
  const N_A = 150;
  const N_B = 250;

  it('the spread of the H0 differences matches the predicted sigma_diff', () => {
    const universe = generateUniverse(424242, 1);
    const base = cleanReleaseSpec(universe, 'nested');
    const spec = { ...base, catalogues: { ...base.catalogues, snHubbleFlow: { ...base.catalogues.snHubbleFlow, count: N_B } } };
    const dir = join(tmp.dir, 'nested');
    writeReleaseFiles(dir, observeRelease(universe, spec, 1).files);
    const cache = newRungCache(); // the early rungs' inputs are the same in every realization
    const deltas: number[] = [];
    const predicted: number[] = [];
    const nestedRule: number[] = [];
    const naive: number[] = [];
    for (let s = 0; s < REALIZATIONS; s++) {
      const files = observeRelease(universe, spec, 1000 + s).files;
      writeReleaseFiles(dir, { 'sn_hubble_flow.ecsv': files['sn_hubble_flow.ecsv']! });
      const b = loadRelease(dir);
      const a: Release = { ...b, snHubbleFlow: b.snHubbleFlow.slice(0, N_A) };
      const ra = runLadder(a, a.analysis, cache);
      const rb = runLadder(b, b.analysis, cache);
      const sa = fitSnapshot(ra)!;
      const sb = fitSnapshot(rb)!;
      const ha = 10 ** sa.log10H0!;
      const hb = 10 ** sb.log10H0!;
      const sh = noiseSharing(a, b);
      const pred = sigmaOfDifference(prepareSide(sa), log10H0Gradient(sa)!, ha * Math.LN10, prepareSide(sb), log10H0Gradient(sb)!, hb * Math.LN10, sh, true);
      const statA = Math.sqrt(pred.varA);
      const statB = Math.sqrt(pred.varB);
      deltas.push(hb - ha);
      predicted.push(pred.sigma);
      nestedRule.push(Math.sqrt(Math.abs(statA ** 2 - statB ** 2)));
      naive.push(Math.hypot(statA, statB));
    }
    const rms = (x: number[]) => Math.sqrt(x.reduce((t, v) => t + v * v, 0) / x.length);
    const mean = deltas.reduce((t, v) => t + v, 0) / deltas.length;
    const sd = Math.sqrt(deltas.reduce((t, v) => t + (v - mean) ** 2, 0) / (deltas.length - 1));
    const sigmaPred = rms(predicted);
    // the sample standard deviation of n normal values has a relative standard error 1/sqrt(2(n-1))
    const relSe = 1 / Math.sqrt(2 * (REALIZATIONS - 1));
    expect(Math.abs(sd / sigmaPred - 1)).toBeLessThan(STAT_SIGMAS * relSe);
    // unbiased: the mean difference is within its standard error of zero
    expect(Math.abs(mean)).toBeLessThan((STAT_SIGMAS * sd) / Math.sqrt(REALIZATIONS));
    // far below the naive quadrature sum (the nested rule is printed for the record: it differs
    // because the two fits estimate different intrinsic scatters, see the exact test above)
    expect(sigmaPred).toBeLessThan(0.35 * rms(naive));
    console.log(
      `nested simulation: ${REALIZATIONS} realizations, sd of delta H0 ${sd.toFixed(3)}, predicted sigma_diff (rms) ${sigmaPred.toFixed(3)}, ` +
        `nested rule ${rms(nestedRule).toFixed(3)}, naive ${rms(naive).toFixed(3)} km/s/Mpc`,
    );
  });
});
