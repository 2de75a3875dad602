/**
 * Injection and recovery: generate a release with known truth (src/demo), calibrate it,
 * and compare each fitted quantity with the truth as a pull (fitted - true) / reported error.
 * Used by recovery.test.ts and by `npm run recovery` (scripts/recovery.ts) for the full table.
 */
import { mkdtempSync, rmSync } from 'node:fs';
import { tmpdir } from 'node:os';
import { join } from 'node:path';
import { writeGeneratedRelease } from '../../src/demo/index.ts';
import { DEMO_PARAMETERS } from '../../src/demo/truth.ts';
import { loadRelease } from '../../src/io/release.ts';
import { runLadder } from '../../src/ladder/calibrate.ts';
import type { GeneratedReleaseOptions } from '../../src/demo/write.ts';
import { scatterError } from '../../src/ladder/assemble.ts';

export interface Pull {
  name: string;
  value: number;
  err: number;
  truth: number;
}

/** Calibrate one generated release and return the pulls of H0, every ladder parameter and every distance. */
export function recoverSeed(seed: number, options: Partial<GeneratedReleaseOptions> = {}): Pull[] {
  const dir = mkdtempSync(join(tmpdir(), 'rungbook-recovery-'));
  try {
    // Blended Cepheids (crowding) are left out of the simulated data: the model assumes crowding
    // corrections already applied (see the Cepheid cautions), so with blends the recovery would
    // measure that unmodelled systematic (1 % of host Cepheids 0.5 mag bright moves H0 by about
    // +0.25 sigma) rather than the estimator. Outlier rejection is exercised on the demo releases.
    const truth = writeGeneratedRelease(dir, 'sim', {
      seed,
      writeTruth: false,
      variants: [],
      parameters: { ...DEMO_PARAMETERS, blendFraction: 0 },
      ...options,
    });
    const release = loadRelease(truth.dir);
    const run = runLadder(release, release.analysis);
    const fit = run.fit!;
    const p = fit.paramNames.length;
    const pulls: Pull[] = [];
    const at = (name: string) => fit.paramNames.indexOf(name);
    const add = (label: string, param: string, t: number) => {
      const i = at(param);
      if (i >= 0) pulls.push({ name: label, value: fit.q[i], err: Math.sqrt(fit.cov[i * p + i]), truth: t });
    };
    const P = truth.parameters;
    add('M_W', 'M_W', P.mW);
    add('b_W', 'b_W', P.bW);
    add('Z_W', 'Z_W', P.zW);
    add('M_B', 'M_B', P.mB);
    add('a_B', 'a_B', (5 * Math.log10(P.h0KmSMpc) - 25 - P.mB) / 5);
    const iz = at('zeta');
    if (iz >= 0) {
      pulls.push({
        name: 'parallax zero point',
        value: release.analysis.parallax_zero_point + fit.q[iz],
        err: Math.sqrt(fit.cov[iz * p + iz]),
        truth: truth.parallax.zeroPointMas,
      });
    }
    pulls.push({ name: 'alpha', value: fit.alpha.value, err: fit.alpha.err, truth: P.alpha });
    pulls.push({ name: 'beta', value: fit.beta.value, err: fit.beta.err, truth: P.beta });
    const variances = (tables: string[]) => fit.residuals.filter((r) => tables.includes(r.ref.table) && !r.rejected).map((r) => r.variance);
    pulls.push({
      name: 'sigma_int_cepheid',
      value: fit.scatter.cepheids,
      err: scatterError(fit.scatter.cepheids, variances(['cepheids'])),
      truth: P.sigmaIntCepMag,
    });
    pulls.push({
      name: 'sigma_int_sn',
      value: fit.scatter.supernovae,
      err: scatterError(fit.scatter.supernovae, variances(['sn_calibrators', 'sn_hubble_flow'])),
      truth: P.sigmaIntSnMag,
    });
    if (run.log10H0) {
      const h0 = 10 ** run.log10H0.value;
      pulls.push({ name: 'H0', value: h0, err: h0 * Math.LN10 * Math.sqrt(run.log10H0.variance), truth: P.h0KmSMpc });
    }
    for (const s of truth.systems) {
      if (s.mu === null) continue;
      const i = at(`mu:${s.id}`);
      if (i < 0) continue;
      pulls.push({ name: `mu (${s.group})`, value: fit.q[i], err: Math.sqrt(fit.cov[i * p + i]), truth: s.mu });
    }
    // main-sequence targets on their own rung (before the global fit)
    for (const t of run.mainSequence.targets) {
      const s = truth.systems.find((x) => x.id === t.system);
      if (s?.mu != null) pulls.push({ name: 'mu main-sequence rung', value: t.mu, err: t.mu_err, truth: s.mu });
    }
    for (const a of run.parallax.anchors) {
      const s = truth.systems.find((x) => x.id === a.system);
      if (s?.mu != null) pulls.push({ name: 'mu parallax rung', value: a.mu, err: a.mu_err, truth: s.mu });
    }
    return pulls;
  } finally {
    rmSync(dir, { recursive: true, force: true });
  }
}

export interface PullSummary {
  name: string;
  n: number;
  meanPull: number;
  /** Standard error of the mean pull, from the spread of the pulls. */
  meanPullErr: number;
  rmsPull: number;
  /** Fraction of cases whose 1-sigma interval covers the truth. */
  coverage: number;
}

export function summarisePulls(all: Pull[]): PullSummary[] {
  const groups = new Map<string, number[]>();
  for (const p of all) {
    const z = (p.value - p.truth) / p.err;
    groups.set(p.name, [...(groups.get(p.name) ?? []), z]);
  }
  return [...groups].map(([name, z]) => {
    const n = z.length;
    const mean = z.reduce((a, b) => a + b, 0) / n;
    const sd = Math.sqrt(z.reduce((a, b) => a + (b - mean) ** 2, 0) / Math.max(1, n - 1));
    return {
      name,
      n,
      meanPull: mean,
      meanPullErr: sd / Math.sqrt(n),
      rmsPull: Math.sqrt(z.reduce((a, b) => a + b * b, 0) / n),
      coverage: z.filter((x) => Math.abs(x) <= 1).length / n,
    };
  });
}
