/**
 * One engine benchmark run at a given scale, in its own process so that peak memory is
 * this run's alone. Prints one JSON line. Called by scripts/bench.ts.
 *   tsx scripts/bench/engine.ts --scale 4 [--dense]
 */
import { mkdtempSync, rmSync } from 'node:fs';
import { tmpdir } from 'node:os';
import { join } from 'node:path';
import { writeGeneratedRelease } from '../../src/demo/index.ts';
import { loadRelease } from '../../src/io/release.ts';
import { fitParallaxRung } from '../../src/ladder/parallax.ts';
import { fitMainSequenceRung, buildDistancePriors } from '../../src/ladder/mainSequence.ts';
import { selectHubbleFlow } from '../../src/ladder/hubbleFlow.ts';
import { fitGlobal } from '../../src/ladder/globalFit.ts';
import { calibrateRelease } from '../../src/ladder/calibrate.ts';
import { solveGls } from '../../src/ladder/gls.ts';
import { solveGlsDense } from '../../tests/reference/denseGls.ts';
import { codeVersion } from '../../src/version.ts';

const args = process.argv.slice(2);
const scale = Number(args[args.indexOf('--scale') + 1] ?? 1);
const dense = args.includes('--dense');
const dir = mkdtempSync(join(tmpdir(), 'rungbook-bench-'));
const time = <T>(f: () => T): [T, number] => {
  const t = performance.now();
  const v = f();
  return [v, performance.now() - t];
};
try {
  writeGeneratedRelease(dir, 'bench', { seed: 4242, scale, writeTruth: false, release: '2026.3' });
  const [release, tRead] = time(() => loadRelease(join(dir, 'bench')));
  const rows = release.inputs.reduce((s, i) => s + i.rows, 0);
  const [parallax, tParallax] = time(() => fitParallaxRung(release, release.analysis));
  const [ms, tMs] = time(() => fitMainSequenceRung(release, release.analysis, parallax));
  const priors = buildDistancePriors(parallax, ms);
  const input = {
    analysis: release.analysis,
    priors,
    fieldStars: parallax.fieldStars,
    zeroPointErrMas: release.analysis.parallax_zero_point_err,
    cepheids: release.cepheids,
    fieldSystems: new Set(release.systems.filter((s) => s.kind === 'field').map((s) => s.system)),
    calibrators: release.snCalibrators,
    hubbleFlow: selectHubbleFlow(release.snHubbleFlow, release.analysis).used,
  };
  const [fit, tFit] = time(() => fitGlobal(input));
  const [, tCalibrate] = time(() => calibrateRelease(release, { codeVersion: codeVersion() }));
  // one structured solve against one dense solve of the same final problem
  const problem = fit.model.problem;
  const nRows = problem.blocks.reduce((s, b) => s + b.rows.length, 0);
  const reps = 20;
  const [, tSolveAll] = time(() => {
    for (let i = 0; i < reps; i++) solveGls(problem);
  });
  const tSolve = tSolveAll / reps;
  let tDense: number | null = null;
  let maxDiff: number | null = null;
  if (dense) {
    const [d, t] = time(() => solveGlsDense(problem));
    tDense = t;
    const s = solveGls(problem);
    maxDiff = Math.max(...Array.from(s.q, (x, i) => Math.abs(x - d.q[i])));
  }
  console.log(
    JSON.stringify({
      scale,
      rows,
      fitRows: nRows,
      params: problem.nParams,
      ms: { read: tRead, parallax: tParallax, mainSequence: tMs, globalFit: tFit, calibrateWithVariants: tCalibrate, solve: tSolve, denseSolve: tDense },
      maxDiff,
      iterations: fit.iterations,
      peakRssMb: process.resourceUsage().maxRSS / 1024,
    }),
  );
} finally {
  rmSync(dir, { recursive: true, force: true });
}
