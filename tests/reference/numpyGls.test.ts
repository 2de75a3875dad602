// The global fit's final linear problem against numpy (Debian python3-numpy, installed by
// scripts/test-setup.mjs): kind, comparison with an independent library. The engine solves
// by block elimination with its own Cholesky core (src/ladder/gls.ts, src/math/cholesky.ts);
// tests/reference/numpy_gls.py receives only the rows (design coefficients, values) and each
// block's covariance sources, and does everything else itself: the sum of the sources into the
// N x N covariance, the dense design, LU solves and the inverse (textbook GLS, Aitken 1935,
// Proc. R. Soc. Edinburgh 55, 42). No code is shared between the two.
// numpy missing is a failure with the fix in the message, never a skip.
import { describe, expect, it } from 'vitest';
import { execFileSync } from 'node:child_process';
import { mkdtempSync, rmSync, writeFileSync } from 'node:fs';
import { tmpdir } from 'node:os';
import { join } from 'node:path';
import { fileURLToPath } from 'node:url';
import { loadRelease } from '../../src/io/release.ts';
import { fitParallaxRung } from '../../src/ladder/parallax.ts';
import { fitMainSequenceRung } from '../../src/ladder/mainSequence.ts';
import { buildDistancePriors } from '../../src/ladder/mainSequencePriors.ts';
import { selectHubbleFlow } from '../../src/ladder/hubbleFlow.ts';
import { fitGlobal } from '../../src/ladder/globalFit.ts';
import { solveGls, type GlsProblem } from '../../src/ladder/gls.ts';
import { REL_1E9, relErr } from '../tolerances.ts';

const DEMO = fileURLToPath(new URL('../../content/releases/', import.meta.url));
const SCRIPT = fileURLToPath(new URL('./numpy_gls.py', import.meta.url));

function finalProblem(id: string): GlsProblem {
  const release = loadRelease(`${DEMO}${id}`);
  const parallax = fitParallaxRung(release, release.analysis);
  const ms = fitMainSequenceRung(release, release.analysis, parallax);
  const fit = fitGlobal({
    analysis: release.analysis,
    priors: buildDistancePriors(parallax, ms),
    fieldStars: parallax.fieldStars,
    zeroPointErrMas: release.analysis.parallax_zero_point_err,
    cepheids: release.cepheids,
    fieldSystems: new Set(release.systems.filter((s) => s.kind === 'field').map((s) => s.system)),
    calibrators: release.snCalibrators,
    hubbleFlow: selectHubbleFlow(release.snHubbleFlow, release.analysis).used,
  });
  return fit.model.problem;
}

function numpySolve(problem: GlsProblem): { n: number; q: number[]; cov: number[]; chi2: number } {
  const dir = mkdtempSync(join(tmpdir(), 'rungbook-numpy-'));
  try {
    const file = join(dir, 'problem.json');
    // only the rows and the covariance sources as the model built them
    writeFileSync(file, JSON.stringify({ nParams: problem.nParams, blocks: problem.blocks.map((b) => ({ rows: b.rows, y: b.y, components: b.components })) }));
    try {
      return JSON.parse(execFileSync('python3', [SCRIPT, file], { encoding: 'utf8', maxBuffer: 64 << 20 }));
    } catch (e) {
      throw new Error(
        `python3 with numpy is required for this reference check (Debian python3-numpy, installed by scripts/test-setup.mjs): ${(e as Error).message}`,
        { cause: e },
      );
    }
  } finally {
    rmSync(dir, { recursive: true, force: true });
  }
}

describe('global fit against numpy (an independent dense GLS)', () => {
  it('release 2026.3: parameters, covariance and chi-square agree to 1e-9', () => {
    const problem = finalProblem('2026.3');
    const engine = solveGls(problem);
    const ref = numpySolve(problem);
    const p = problem.nParams;
    expect(ref.n).toBeGreaterThan(500);
    const cov = engine.factor.covariance();
    for (let i = 0; i < p; i++) {
      // parameters in units of their own standard error (some, like the zero-point shift, are near 0)
      const sigma = Math.sqrt(ref.cov[i * p + i]);
      expect(Math.abs(engine.q[i] - ref.q[i]) / sigma, problem.paramNames[i]).toBeLessThan(REL_1E9);
      for (let j = 0; j < p; j++) {
        const scale = Math.sqrt(ref.cov[i * p + i] * ref.cov[j * p + j]);
        expect(Math.abs(cov[i * p + j] - ref.cov[i * p + j]) / scale, `cov ${problem.paramNames[i]} ${problem.paramNames[j]}`).toBeLessThan(REL_1E9);
      }
    }
    expect(relErr(engine.chi2, ref.chi2)).toBeLessThan(REL_1E9);
  }, 300_000);
});
