// The global fit eliminates the object distances block by block (src/ladder/gls.ts). Kinds:
// comparison with an independent computation: on the demo releases, the whole iterative fit
// with block elimination against the same fit factoring the full p x p normal matrix, and its
// final linear problem against the textbook dense N x N GLS (tests/reference/denseGls.ts, the
// formula q = (X^T C^-1 X)^-1 X^T C^-1 y written out without the engine's core).
import { describe, expect, it } from 'vitest';
import { fileURLToPath } from 'node:url';
import { loadRelease } from '../../src/io/release.ts';
import { fitParallaxRung } from '../../src/ladder/parallax.ts';
import { fitMainSequenceRung } from '../../src/ladder/mainSequence.ts';
import { buildDistancePriors } from '../../src/ladder/mainSequencePriors.ts';
import { selectHubbleFlow } from '../../src/ladder/hubbleFlow.ts';
import { fitGlobal } from '../../src/ladder/globalFit.ts';
import type { GlobalFitInput } from '../../src/ladder/globalModel.ts';
import { solveGls } from '../../src/ladder/gls.ts';
import { solveGlsDense } from '../reference/denseGls.ts';
import { relErr, REL_1E9 } from '../tolerances.ts';

const DEMO = fileURLToPath(new URL('../../content/releases/', import.meta.url));

function fitInput(id: string): GlobalFitInput {
  const release = loadRelease(`${DEMO}${id}`);
  const parallax = fitParallaxRung(release, release.analysis);
  const ms = fitMainSequenceRung(release, release.analysis, parallax);
  return {
    analysis: release.analysis,
    priors: buildDistancePriors(parallax, ms),
    fieldStars: parallax.fieldStars,
    zeroPointErrMas: release.analysis.parallax_zero_point_err,
    cepheids: release.cepheids,
    fieldSystems: new Set(release.systems.filter((s) => s.kind === 'field').map((s) => s.system)),
    calibrators: release.snCalibrators,
    hubbleFlow: selectHubbleFlow(release.snHubbleFlow, release.analysis).used,
  };
}

/** Covariances: each entry relative to the geometric mean of its diagonal entries. */
function covErr(a: Float64Array, b: Float64Array, p: number): number {
  let worst = 0;
  for (let i = 0; i < p; i++) {
    for (let j = 0; j < p; j++) {
      const scale = Math.sqrt(b[i * p + i] * b[j * p + j]);
      worst = Math.max(worst, Math.abs(a[i * p + j] - b[i * p + j]) / scale);
    }
  }
  return worst;
}

describe('global fit by block elimination (comparison with a dense factorisation)', () => {
  for (const id of ['2026.1', '2026.3']) {
    it(`release ${id}: the iterative fit gives the same numbers as with the full p x p normal matrix, to 1e-9`, () => {
      const input = fitInput(id);
      const s = fitGlobal(input);
      const d = fitGlobal(input, { eliminate: false });
      const p = s.paramNames.length;
      expect(p).toBeGreaterThan(20); // distances to eliminate, not only globals
      expect(s.iterations).toBe(d.iterations);
      expect(s.rejected.map((r) => r.ref.id)).toEqual(d.rejected.map((r) => r.ref.id));
      for (let i = 0; i < p; i++) expect(relErr(s.q[i], d.q[i])).toBeLessThan(REL_1E9);
      expect(covErr(s.cov, d.cov, p)).toBeLessThan(REL_1E9);
      expect(covErr(s.covGls, d.covGls, p)).toBeLessThan(REL_1E9);
      for (const k of ['alpha', 'beta'] as const) {
        expect(relErr(s[k].value, d[k].value)).toBeLessThan(REL_1E9);
        expect(relErr(s[k].err, d[k].err)).toBeLessThan(REL_1E9);
      }
      expect(relErr(s.scatter.cepheids, d.scatter.cepheids)).toBeLessThan(REL_1E9);
      expect(relErr(s.scatter.supernovae, d.scatter.supernovae)).toBeLessThan(REL_1E9);
      expect(relErr(s.chi2, d.chi2)).toBeLessThan(REL_1E9);
    });
  }

  it('release 2026.3: the final linear problem agrees with the textbook dense N x N GLS to 1e-9', () => {
    const fit = fitGlobal(fitInput('2026.3'));
    const problem = fit.model.problem;
    const n = problem.blocks.reduce((t, b) => t + b.rows.length, 0);
    expect(n).toBeGreaterThan(500);
    const s = solveGls(problem);
    const d = solveGlsDense(problem);
    const p = problem.nParams;
    for (let i = 0; i < p; i++) expect(relErr(s.q[i], d.q[i])).toBeLessThan(REL_1E9);
    expect(covErr(s.factor.covariance(), d.cov, p)).toBeLessThan(REL_1E9);
    expect(relErr(s.chi2, d.chi2)).toBeLessThan(REL_1E9);
  }, 120_000);
});
