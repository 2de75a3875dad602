/**
 * The simulator of `rungbook recover` (src/recover/simulate.ts), checked against the model of the
 * release format written out here (DEVELOPERS.md, "Conventions"), not against the fit:
 *   W = m_h - R (m_v - m_i) = mu + M_W + b_W (log10 P - pivot) + Z_W [O/H] + N(0, sigma_int),
 *   m_b + alpha x1 - beta c = 5 log10(c z f(z)) - 5 a_B + N(0, sigma_int_sn) in the Hubble flow,
 *   with f(z) = 1 + (1 - q0) z / 2 - (1 - q0 - 3 q0^2 + j0) z^2 / 6 (Visser 2004, Class. Quantum
 *   Grav. 21, 2603, eq. for d_L to second order; from memory).
 * Kind: recovery machinery (DEVELOPERS.md, kind 2). Normalised residuals must have mean 0 and SD 1
 * within 4 standard errors for their number n (1/sqrt(n) and 1/sqrt(2n)).
 * Also: shards and seeds files (hand-written, no calibration) and the command's refusals.
 */
import { join } from 'node:path';
import { describe, expect, it } from 'vitest';
import { releaseAndTruth } from '../../src/recover/run.ts';
import { ERROR_NEIGHBOURS, RECOVERY_BLENDS, simulateRelease } from '../../src/recover/simulate.ts';
import { headerLine, mergeSeedFiles, SEEDS_SCHEMA, seedLineText, shardSeeds, type SeedsHeader } from '../../src/recover/shard.ts';
import type { SeedLine } from '../../src/recover/seed.ts';
import { main } from '../../src/cli/main.ts';
import { InputError } from '../../src/types/issues.ts';
import { capture } from '../blinding/helpers.ts';
import { truthFromResults } from '../../src/recover/truth.ts';

const DEMO = join(import.meta.dirname, '../../content/releases/2026.3');
const { release, truthResults } = releaseAndTruth(DEMO, 'test');
const truth = truthFromResults(release, truthResults);
/** Speed of light, km/s (exact, SI definition of the metre, CGPM 1983). */
const C_KM_S = 299792.458;

function meanSd(z: number[]): { mean: number; sd: number; n: number } {
  const n = z.length;
  const mean = z.reduce((a, b) => a + b, 0) / n;
  return { mean, sd: Math.sqrt(z.reduce((a, b) => a + (b - mean) ** 2, 0) / (n - 1)), n };
}

function expectUnitNormal(z: number[]): void {
  const s = meanSd(z);
  expect(Math.abs(s.mean)).toBeLessThan(4 / Math.sqrt(s.n));
  expect(Math.abs(s.sd - 1)).toBeLessThan(4 / Math.sqrt(2 * s.n));
}

describe('simulated releases', () => {
  it('are the same for the same seed and differ between seeds', () => {
    expect(simulateRelease(release, truth, 7)).toEqual(simulateRelease(release, truth, 7));
    expect(simulateRelease(release, truth, 8).cepheids[0]!.mH).not.toBe(simulateRelease(release, truth, 7).cepheids[0]!.mH);
  });

  it("keep the release's shape: systems, rows, ids, covariates and analysis choices (but the stated zero point)", () => {
    const sim = simulateRelease(release, truth, 3);
    expect(sim.systems.map((s) => [s.system, s.kind])).toEqual(release.systems.map((s) => [s.system, s.kind]));
    for (const t of ['parallax', 'mainSequence', 'cepheids', 'snCalibrators', 'snHubbleFlow'] as const) {
      expect(sim[t].length).toBe(release[t].length);
    }
    expect(sim.cepheids.map((c) => [c.star, c.system, c.periodDays, c.oh])).toEqual(release.cepheids.map((c) => [c.star, c.system, c.periodDays, c.oh]));
    const { parallax_zero_point: a, ...restSim } = sim.analysis;
    const { parallax_zero_point: b, ...restRel } = release.analysis;
    expect(restSim).toEqual(restRel);
    expect(a).not.toBe(b);
  });

  it("take each row's errors from a neighbour in period within the same system", () => {
    const sim = simulateRelease(release, truth, 5);
    const bySystem = new Map<string, number[]>();
    release.cepheids.forEach((c, i) => bySystem.set(c.system, [...(bySystem.get(c.system) ?? []), i]));
    for (const idx of bySystem.values()) {
      const order = [...idx].sort((p, q) => release.cepheids[p]!.periodDays - release.cepheids[q]!.periodDays || p - q);
      order.forEach((row, rank) => {
        const s = sim.cepheids[row]!;
        const near = order.slice(Math.max(0, rank - ERROR_NEIGHBOURS), rank + ERROR_NEIGHBOURS + 1).map((k) => release.cepheids[k]!);
        expect(near.some((d) => d.mHErr === s.mHErr && d.mVErr === s.mVErr && d.mIErr === s.mIErr)).toBe(true);
      });
    }
  });

  it('draw Cepheids about the period-luminosity relation with the stated errors and the intrinsic scatter', () => {
    const a = release.analysis;
    const field = new Set(release.systems.filter((s) => s.kind === 'field').map((s) => s.system));
    const z: number[] = [];
    for (const seed of [1, 2, 3]) {
      // blends off here: they are checked on their own below
      for (const c of simulateRelease(release, truth, seed, { blends: { fraction: 0, offsetRangeMag: [0.3, 1] } }).cepheids) {
        const mu = field.has(c.system) ? truth.fieldStarMu[c.star]! : truth.systemMu[c.system]!;
        const w = c.mH - a.wesenheit_r * (c.mV - c.mI);
        const model = mu + truth.mW + truth.bW * (Math.log10(c.periodDays) - a.pl_pivot_logp) + truth.zW * c.oh;
        const sd = Math.sqrt(c.mHErr ** 2 + a.wesenheit_r ** 2 * (c.mVErr ** 2 + c.mIErr ** 2) + truth.sigmaIntCepheid ** 2);
        z.push((w - model) / sd);
      }
    }
    expect(z.length).toBeGreaterThan(1000);
    expectUnitNormal(z);
  });

  it('blend Cepheids in galaxies only, at the stated fraction, brighter in every band by 0.3 to 1 mag, and change nothing else', () => {
    const galaxies = new Set(release.systems.filter((s) => s.kind === 'galaxy').map((s) => s.system));
    let n = 0;
    let blended = 0;
    for (const seed of [11, 12, 13, 14, 15, 16, 17, 18]) {
      const off = simulateRelease(release, truth, seed, { blends: { fraction: 0, offsetRangeMag: [0.3, 1] } });
      const on = simulateRelease(release, truth, seed);
      expect(on.snHubbleFlow).toEqual(off.snHubbleFlow);
      on.cepheids.forEach((c, i) => {
        const o = off.cepheids[i]!;
        const d = [c.mH - o.mH, c.mV - o.mV, c.mI - o.mI];
        if (!galaxies.has(c.system)) {
          expect(d).toEqual([0, 0, 0]);
          return;
        }
        n++;
        if (d[0] === 0) return expect(d).toEqual([0, 0, 0]);
        blended++;
        // one offset u in all three bands (to rounding), in the stated range
        expect(Math.abs(d[1]! - d[0]!)).toBeLessThan(1e-9);
        expect(Math.abs(d[2]! - d[0]!)).toBeLessThan(1e-9);
        expect(-d[0]!).toBeGreaterThanOrEqual(RECOVERY_BLENDS.offsetRangeMag[0] - 1e-9);
        expect(-d[0]!).toBeLessThanOrEqual(RECOVERY_BLENDS.offsetRangeMag[1] + 1e-9);
      });
    }
    // binomial: within 4 standard errors of the stated fraction
    const p = RECOVERY_BLENDS.fraction;
    expect(n).toBeGreaterThan(1000);
    expect(Math.abs(blended / n - p)).toBeLessThan(4 * Math.sqrt((p * (1 - p)) / n));
  });

  it('draw Hubble-flow supernovae about the magnitude-redshift relation with their covariance and scatter', () => {
    const a = release.analysis;
    const z: number[] = [];
    for (const seed of [1, 2, 3, 4, 5, 6]) {
      simulateRelease(release, truth, seed).snHubbleFlow.forEach((sn, i) => {
        const zc = release.snHubbleFlow[i]!.z; // the cosmological redshift of the simulation
        const f = 1 + ((1 - a.q0) * zc) / 2 - ((1 - a.q0 - 3 * a.q0 * a.q0 + a.j0) * zc * zc) / 6;
        const model = 5 * Math.log10(C_KM_S * zc * f) - 5 * truth.aB;
        const g = [1, truth.alpha, -truth.beta];
        const cov = [
          [sn.mBErr ** 2, sn.covMbX1, sn.covMbC],
          [sn.covMbX1, sn.x1Err ** 2, sn.covX1C],
          [sn.covMbC, sn.covX1C, sn.cErr ** 2],
        ];
        let v = truth.sigmaIntSn ** 2;
        for (let p = 0; p < 3; p++) for (let q = 0; q < 3; q++) v += g[p]! * cov[p]![q]! * g[q]!;
        z.push((sn.mB + truth.alpha * sn.x1 - truth.beta * sn.c - model) / Math.sqrt(v));
      });
    }
    expect(z.length).toBeGreaterThan(500);
    expectUnitNormal(z);
  });

  it('draw parallaxes about the true distance plus the true zero point', () => {
    const z: number[] = [];
    for (const seed of [1, 2]) {
      for (const p of simulateRelease(release, truth, seed).parallax) {
        const mu = truth.systemMu[p.system] ?? truth.fieldStarMu[p.star];
        if (mu === undefined) continue;
        // 1 / d[pc] = 10^(-(mu + 5) / 5) (distance modulus, IAU 2015 B2 parsec)
        z.push((p.parallaxMas - 1000 * 10 ** (-(mu + 5) / 5) - truth.parallaxZeroPointMas) / p.parallaxErrMas);
      }
    }
    expectUnitNormal(z);
  });
});

describe('shards', () => {
  it('are disjoint and together complete for any number of slices', () => {
    for (const count of [1, 7, 10, 500]) {
      for (const m of [1, 2, 3, 7, 20]) {
        const all = Array.from({ length: m }, (_, k) => shardSeeds(11, count, { k: k + 1, m })).flat();
        expect(all).toEqual(Array.from({ length: count }, (_, i) => 11 + i));
      }
    }
  });
});

describe('seeds files', () => {
  // Hand-written files (no calibration): a header and seed lines as `rungbook recover --shard` writes them.
  const header = (k: number, m: number, over: Partial<SeedsHeader> = {}): SeedsHeader => ({
    schema: SEEDS_SCHEMA,
    release: { id: 'r', blinded: false, inputs_hash: 'h' },
    code_version: 'v',
    first: 1,
    count: 4,
    shard: { k, m },
    keys: ['H0'],
    ...over,
  });
  const line = (seed: number): SeedLine => ({ seed, quantities: { H0: { estimate: 70 + seed / 10, error: 1, truth: 70, pull: seed / 10 } } });
  const file = (h: SeedsHeader, seeds: number[]) => headerLine(h) + seeds.map((s) => seedLineText(line(s))).join('');

  it('merge in any order to the lines of the whole run', () => {
    const merged = mergeSeedFiles([
      { file: 'b', text: file(header(2, 2), [3, 4]) },
      { file: 'a', text: file(header(1, 2), [1, 2]) },
    ]);
    expect(merged.lines.map((l) => l.seed)).toEqual([1, 2, 3, 4]);
  });

  it('refuse a shard cut short, a wrong seed, or a shard of another run, naming file and line', () => {
    const cut = () =>
      mergeSeedFiles([
        { file: 'a', text: file(header(1, 2), [1]) },
        { file: 'b', text: file(header(2, 2), [3, 4]) },
      ]);
    expect(cut).toThrow(InputError);
    expect(cut).toThrow(/a:2: shard 1\/2 is incomplete/);
    const wrong = () =>
      mergeSeedFiles([
        { file: 'a', text: file(header(1, 2), [1, 3]) },
        { file: 'b', text: file(header(2, 2), [3, 4]) },
      ]);
    expect(wrong).toThrow(/a:3: unexpected seed/);
    const other = () =>
      mergeSeedFiles([
        { file: 'a', text: file(header(1, 2), [1, 2]) },
        { file: 'b', text: file(header(2, 2, { code_version: 'w' }), [3, 4]) },
      ]);
    expect(other).toThrow(/b:1: the file belongs to another run than a \(its "code_version" differs\)/);
    const notJson = () => mergeSeedFiles([{ file: 'a', text: `${headerLine(header(1, 1))}{"seed": 1, "quan` }]);
    expect(notJson).toThrow(/a:2: the line is not JSON/);
  });
});

describe('the command line', () => {
  it('refuses bad options with a usage error (exit 2)', async () => {
    for (const args of [
      [DEMO],
      [DEMO, '--seeds', '0'],
      [DEMO, '--seeds', '5', '--shard', '4/3'],
      [DEMO, '--seeds', '5', '--shard', '1/3', '--summary', 'x.json'],
      ['--merge'],
    ]) {
      const c = capture();
      expect(await main(['recover', ...args], c.io), args.join(' ')).toBe(2);
      expect(c.err()).toMatch(/rungbook recover: /);
    }
  });

  it('refuses a release folder it cannot read, naming it (exit 1)', async () => {
    const c = capture();
    expect(await main(['recover', join(DEMO, 'no-such-release'), '--seeds', '2', '--out', '/nonexistent-dir/x.jsonl'], c.io)).toBe(1);
    expect(c.err()).toContain('no-such-release');
  });
});
