/**
 * Injection and recovery: generate a release with known truth (src/demo), calibrate it as
 * `rungbook calibrate` does (calibrateRelease, the results.json structure), and compare every
 * published quantity with the truth as a pull (published - true) / published error.
 * Used by recovery.test.ts; pooled on worker threads by pool.ts.
 */
import { mkdtempSync, rmSync } from 'node:fs';
import { tmpdir } from 'node:os';
import { join } from 'node:path';
import { writeGeneratedRelease } from '../../src/demo/index.ts';
import { DEMO_PARAMETERS, type DemoParameters } from '../../src/demo/truth.ts';
import { loadRelease } from '../../src/io/release.ts';
import { calibrateRelease } from '../../src/ladder/calibrate.ts';

export interface Pull {
  name: string;
  /** For a distance: the system it belongs to (pooled and per-system checks). */
  system?: string;
  /** For the intrinsic scatters: their published 68 % interval (asymmetric). */
  interval68?: [number, number];
  value: number;
  err: number;
  truth: number;
}

export interface RecoverSeedOptions {
  /** Generator parameters to change (e.g. blendFraction); the rest are DEMO_PARAMETERS. */
  parameters?: Partial<DemoParameters>;
}

/**
 * Blends as real crowded fields show them (a few per cent of extragalactic Cepheids, too bright):
 * the recovery runs with them on so that it sees what they do to H0. The generator's blend offset
 * is DEMO_PARAMETERS.blendOffsetMag (0.5 mag brighter).
 */
export const RECOVERY_BLEND_FRACTION = 0.02;

/** Calibrate one generated release and return the pulls of every published quantity. */
export function recoverSeed(seed: number, options: RecoverSeedOptions = {}): Pull[] {
  const dir = mkdtempSync(join(tmpdir(), 'rungbook-recovery-'));
  try {
    const truth = writeGeneratedRelease(dir, 'sim', {
      seed,
      writeTruth: false,
      variants: [],
      parameters: { ...DEMO_PARAMETERS, blendFraction: RECOVERY_BLEND_FRACTION, ...options.parameters },
    });
    const release = loadRelease(truth.dir);
    const r = calibrateRelease(release, { codeVersion: 'recovery-test' });
    const pulls: Pull[] = [];
    const P = truth.parameters;
    const trueParameter: Record<string, number> = {
      M_W: P.mW,
      b_W: P.bW,
      Z_W: P.zW,
      M_B: P.mB,
      a_B: (5 * Math.log10(P.h0KmSMpc) - 25 - P.mB) / 5,
      delta_M_host: P.massStepMag,
      alpha: P.alpha,
      beta: P.beta,
      sigma_int_cepheid: P.sigmaIntCepMag,
      sigma_int_sn: P.sigmaIntSnMag,
      parallax_zero_point: truth.parallax.zeroPointMas,
    };
    for (const [name, p] of Object.entries(r.parameters)) {
      if (p.fixed) continue;
      const t = trueParameter[name];
      if (t === undefined) throw new Error(`recovery harness: no truth for published parameter ${name}`);
      pulls.push({ name, value: p.value, err: p.err, truth: t, ...(p.interval68 ? { interval68: p.interval68 } : {}) });
    }
    if (r.h0) pulls.push({ name: 'H0', value: r.h0.value, err: r.h0.stat, truth: P.h0KmSMpc });
    const byId = new Map(truth.systems.map((s) => [s.id, s]));
    for (const s of r.systems) {
      const t = byId.get(s.id);
      if (!t || t.mu === null) continue;
      if (s.mu !== null && s.mu_err !== null && s.mu_err > 0) pulls.push({ name: `mu (${t.group})`, system: s.id, value: s.mu, err: s.mu_err, truth: t.mu });
      if (s.mu_prior !== null && s.mu_prior_err !== null && s.mu_prior_err > 0) {
        pulls.push({ name: `mu own rung (${t.group})`, system: s.id, value: s.mu_prior, err: s.mu_prior_err, truth: t.mu });
      }
    }
    return pulls;
  } finally {
    rmSync(dir, { recursive: true, force: true });
  }
}

export interface PullSummary {
  name: string;
  n: number;
  mean: number;
  /** Sample standard deviation of the pulls. */
  sd: number;
  /** Fraction of cases whose 1-sigma (2-sigma) interval covers the truth. */
  coverage1: number;
  coverage2: number;
}

/** Summaries of the pulls grouped by `key` (by default the quantity's name). */
export function summarisePulls(all: Pull[], key: (p: Pull) => string | null = (p) => p.name): PullSummary[] {
  const groups = new Map<string, number[]>();
  for (const p of all) {
    const k = key(p);
    if (k === null) continue;
    const z = (p.value - p.truth) / p.err;
    const list = groups.get(k);
    if (list) list.push(z);
    else groups.set(k, [z]);
  }
  return [...groups].map(([name, z]) => {
    const n = z.length;
    const mean = z.reduce((a, b) => a + b, 0) / n;
    const sd = Math.sqrt(z.reduce((a, b) => a + (b - mean) ** 2, 0) / Math.max(1, n - 1));
    return {
      name,
      n,
      mean,
      sd,
      coverage1: z.filter((x) => Math.abs(x) <= 1).length / n,
      coverage2: z.filter((x) => Math.abs(x) <= 2).length / n,
    };
  });
}

/** For each quantity published with a 68 % interval: how often the interval holds the truth. */
export function intervalCoverage(all: Pull[]): { name: string; n: number; coverage: number }[] {
  const groups = new Map<string, boolean[]>();
  for (const p of all) {
    if (!p.interval68) continue;
    const inside = p.truth >= p.interval68[0] && p.truth <= p.interval68[1];
    groups.set(p.name, [...(groups.get(p.name) ?? []), inside]);
  }
  return [...groups].map(([name, c]) => ({ name, n: c.length, coverage: c.filter(Boolean).length / c.length }));
}

export function formatSummary(summary: PullSummary[]): string {
  const lines = ['quantity                        n    mean     sd    cov1   cov2'];
  for (const s of summary) {
    lines.push(
      `${s.name.padEnd(28)} ${String(s.n).padStart(5)}  ${s.mean.toFixed(3).padStart(6)}  ${s.sd.toFixed(3)}  ${(100 * s.coverage1).toFixed(1).padStart(5)}  ${(100 * s.coverage2).toFixed(1).padStart(5)}`,
    );
  }
  return lines.join('\n');
}
