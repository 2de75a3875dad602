// The structured GLS against a plain dense solve of the same problem, and the exactness
// of the error budget split. Kinds: comparison with an independent computation (the dense
// textbook GLS formula q = (X^T C^-1 X)^-1 X^T C^-1 y, Aitken 1935, Proc. R. Soc. Edinburgh 55, 42); edge cases.
import { describe, expect, it } from 'vitest';
import { solveGls, varianceBySource, SingularFitError, type GlsProblem, type RowBlock } from '../../src/ladder/gls.ts';
import { solveGlsDense } from '../reference/denseGls.ts';
import { createRng } from '../../src/demo/random.ts';
import { relErr, REL_1E9 } from '../tolerances.ts';

/** A ladder-shaped random problem: a dense prior block and several diagonal blocks. */
function randomProblem(seed: number, nSystems: number, rowsPerSystem: number): GlsProblem {
  const rng = createRng(seed, 'gls-test');
  const p = nSystems + 4; // systems, then M, b, Z, zeta
  const names = [...Array.from({ length: nSystems }, (_, i) => `mu:s${i}`), 'M', 'b', 'Z', 'zeta'];
  const blocks: RowBlock[] = [];
  // dense prior block on the first three systems, with a zero-point loading
  const nPrior = 3;
  const a = Array.from({ length: nPrior }, () => Array.from({ length: nPrior }, () => rng.normal()));
  const covA = a.map((r, i) => a.map((s, j) => r.reduce((t, x, k) => t + x * s[k], 0) * 0.01 + (i === j ? 0.001 : 0)));
  const covB = Array.from({ length: nPrior }, (_, i) => Array.from({ length: nPrior }, (_, j) => (i === j ? 0.002 : 0.0005)));
  blocks.push({
    rows: Array.from({ length: nPrior }, (_, i) => ({ idx: [i, p - 1], coef: [1, -(0.5 + rng.uniform())] })),
    y: Array.from({ length: nPrior }, () => 10 + rng.normal()),
    components: [
      { source: 'anchors', dense: covA },
      { source: 'main_sequence', dense: covB },
    ],
    diagonal: false,
  });
  blocks.push({ rows: [{ idx: [p - 1], coef: [1] }], y: [0], components: [{ source: 'zero_point', diagonal: [0.0001] }], diagonal: true });
  const rows = [];
  const y = [];
  const v1 = [];
  const v2 = [];
  for (let s = 0; s < nSystems; s++) {
    for (let k = 0; k < rowsPerSystem; k++) {
      const lp = rng.uniform() * 1.5 - 0.5;
      const oh = rng.normal() * 0.1;
      rows.push({ idx: [s, nSystems, nSystems + 1, nSystems + 2], coef: [1, 1, lp, oh] });
      y.push(20 + rng.normal());
      v1.push(0.01 + 0.05 * rng.uniform());
      v2.push(0.005);
    }
  }
  blocks.push({
    rows,
    y,
    components: [
      { source: 'cepheids', diagonal: v1 },
      { source: 'scatter', diagonal: v2 },
    ],
    diagonal: true,
  });
  return { nParams: p, paramNames: names, blocks };
}

describe('structured GLS (comparison with a dense solve)', () => {
  // without declared globals: one dense p x p system; with them: the distances are eliminated
  // block by block (the prior block's three systems form one component, the others one each)
  for (const [seed, structured] of [
    [1, false],
    [2, false],
    [3, false],
    [1, true],
    [2, true],
    [3, true],
    [4, true],
  ] as const) {
    it(`agrees with the dense N x N solve to 1e-9 (seed ${seed}, ${structured ? 'block elimination' : 'dense normal matrix'})`, () => {
      const plain = randomProblem(seed, 6 + seed, 12);
      const p0 = plain.nParams;
      const problem = structured ? { ...plain, globals: [p0 - 4, p0 - 3, p0 - 2, p0 - 1] } : plain;
      const s = solveGls(problem);
      const d = solveGlsDense(problem);
      const p = problem.nParams;
      const cov = s.factor.covariance();
      for (let i = 0; i < p; i++) {
        expect(relErr(s.q[i], d.q[i])).toBeLessThan(REL_1E9);
        for (let j = 0; j < p; j++) expect(Math.abs(cov[i * p + j] - d.cov[i * p + j])).toBeLessThan(REL_1E9 * Math.sqrt(d.cov[i * p + i] * d.cov[j * p + j]));
      }
      expect(relErr(s.chi2, d.chi2)).toBeLessThan(REL_1E9);
    });
  }

  it('splits the variance of a linear combination exactly into its sources', () => {
    const plain = randomProblem(7, 5, 10);
    const problem = { ...plain, globals: [5, 6, 7, 8] };
    const s = solveGls(problem);
    const p = problem.nParams;
    const g = new Float64Array(p);
    g[p - 4] = 0.2; // like 0.2 M_B + a_B
    g[p - 3] = 1;
    const parts = varianceBySource(problem, s.factor, g);
    const cov = s.factor.covariance();
    let total = 0;
    for (let i = 0; i < p; i++) for (let j = 0; j < p; j++) total += g[i] * cov[i * p + j] * g[j];
    const sum = [...parts.values()].reduce((a, b) => a + b, 0);
    expect(relErr(sum, total)).toBeLessThan(REL_1E9);
    expect([...parts.keys()].sort()).toEqual(['anchors', 'cepheids', 'main_sequence', 'scatter', 'zero_point']);
    for (const v of parts.values()) expect(v).toBeGreaterThanOrEqual(0);
  });

  it('names the parameter the data leave undetermined (edge case)', () => {
    // two parameters that only ever appear as a sum
    const problem: GlsProblem = {
      nParams: 2,
      paramNames: ['mu:x', 'M_W'],
      blocks: [
        {
          rows: [
            { idx: [0, 1], coef: [1, 1] },
            { idx: [0, 1], coef: [1, 1] },
          ],
          y: [1, 2],
          components: [{ source: 'c', diagonal: [1, 1] }],
          diagonal: true,
        },
      ],
    };
    expect(() => solveGls(problem)).toThrow(SingularFitError);
    expect(() => solveGls(problem)).toThrow(/M_W/);
    // the same with M_W global: the elimination finds it in the Schur complement, as a dense
    // factorisation in parameter order would
    expect(() => solveGls({ ...problem, globals: [1] })).toThrow(/M_W/);
  });

  it('names an object distance the data leave undetermined, in parameter order (edge case)', () => {
    // mu:b and mu:c appear only as a difference; mu:a is fine; M is global
    const problem: GlsProblem = {
      nParams: 4,
      paramNames: ['mu:a', 'mu:b', 'mu:c', 'M'],
      globals: [3],
      blocks: [
        {
          rows: [
            { idx: [0, 3], coef: [1, 1] },
            { idx: [0], coef: [1] },
            { idx: [1, 2], coef: [1, -1] },
            { idx: [1, 2], coef: [1, -1] },
          ],
          y: [1, 2, 3, 4],
          components: [{ source: 'c', diagonal: [1, 1, 1, 1] }],
          diagonal: true,
        },
      ],
    };
    expect(() => solveGls(problem)).toThrow(/"mu:c"/);
    expect(() => solveGls({ ...problem, globals: undefined })).toThrow(/"mu:c"/);
  });
});
