/**
 * One engine benchmark run at a given scale, in its own process so that peak memory is this
 * run's alone. Generates the release (the demo's 2026.3 at --scale times its size, with its five
 * systematic variants) and a copy without variants into --dir, times each stage of a calibration
 * in this thread, exports the final linear problem of the global fit for the numpy dense solve
 * (scripts/bench/dense_gls.py) and prints one JSON line. Called by scripts/bench.ts.
 *   tsx scripts/bench/engine.ts --scale 4 --dir /tmp/x
 */
import { readFileSync, writeFileSync } from 'node:fs';
import { join } from 'node:path';
import { writeGeneratedRelease } from '../../src/demo/index.ts';
import { loadRelease } from '../../src/io/release.ts';
import { fitParallaxRung } from '../../src/ladder/parallax.ts';
import { fitMainSequenceRung } from '../../src/ladder/mainSequence.ts';
import { buildDistancePriors } from '../../src/ladder/mainSequencePriors.ts';
import { selectHubbleFlow } from '../../src/ladder/hubbleFlow.ts';
import { fitGlobal } from '../../src/ladder/globalFit.ts';
import { blockVariance } from '../../src/ladder/gls.ts';
import { finishCalibration, newRungCache, runLadder, runVariant } from '../../src/ladder/calibrate.ts';
import { serializeResults } from '../../src/io/results.ts';
import { codeVersion } from '../../src/version.ts';

const arg = (name: string) => process.argv[process.argv.indexOf(`--${name}`) + 1]!;
const scale = Number(arg('scale'));
const dir = arg('dir');
const time = <T>(f: () => T): [T, number] => {
  const t = performance.now();
  const v = f();
  return [v, performance.now() - t];
};

const DEMO_SEED = 4242;
writeGeneratedRelease(dir, 'bench', { seed: DEMO_SEED, scale, writeTruth: false, release: '2026.3' });
writeGeneratedRelease(dir, 'bench-nv', { seed: DEMO_SEED, scale, writeTruth: false, release: '2026.3' });
// the copy without variants: drop the variants list from its release.yaml
const yamlPath = join(dir, 'bench-nv', 'release.yaml');
const kept: string[] = [];
let inVariants = false;
for (const line of readFileSync(yamlPath, 'utf8').split('\n')) {
  if (/^\s*variants:/.test(line)) inVariants = true;
  else if (inVariants && /^\s+- /.test(line)) continue;
  else {
    inVariants = false;
    kept.push(line);
  }
}
writeFileSync(yamlPath, kept.join('\n'));

const [release, tRead] = time(() => loadRelease(join(dir, 'bench')));
const rows = release.inputs.reduce((s, i) => s + i.rows, 0);
const [rungs, tRungs] = time(() => {
  const parallax = fitParallaxRung(release, release.analysis);
  const ms = fitMainSequenceRung(release, release.analysis, parallax);
  return { parallax, priors: buildDistancePriors(parallax, ms), flow: selectHubbleFlow(release.snHubbleFlow, release.analysis).used };
});
const input = {
  analysis: release.analysis,
  priors: rungs.priors,
  fieldStars: rungs.parallax.fieldStars,
  zeroPointErrMas: release.analysis.parallax_zero_point_err,
  cepheids: release.cepheids,
  fieldSystems: new Set(release.systems.filter((s) => s.kind === 'field').map((s) => s.system)),
  calibrators: release.snCalibrators,
  hubbleFlow: rungs.flow,
};
// timed twice: the first run also compiles (JIT) the fit's code, which would flatter the
// per-row scaling of the larger scales; the stage table shows the second, warm run
fitGlobal(input);
const [fit, tFit] = time(() => fitGlobal(input));
// a whole calibration in this thread, stage by stage (the baseline pass repeats the rungs and fit above)
const cache = newRungCache();
const [baseline, tBaseline] = time(() => runLadder(release, release.analysis, cache));
const [outcomes, tVariants] = time(() => release.variants.map((v) => runVariant(release, v, cache)));
const [, tWrite] = time(() => {
  const results = finishCalibration(release, baseline, outcomes, { codeVersion: codeVersion() });
  writeFileSync(join(dir, 'results.json'), serializeResults(results));
});

// the final linear problem, for the independent dense solve
const problem = fit.model.problem;
const fitRows = problem.blocks.reduce((s, b) => s + b.rows.length, 0);
writeFileSync(
  join(dir, 'problem.json'),
  JSON.stringify({
    nParams: problem.nParams,
    paramNames: problem.paramNames,
    blocks: problem.blocks.map((b) => {
      const v = blockVariance(b);
      return {
        idx: b.rows.map((r) => r.idx),
        coef: b.rows.map((r) => r.coef),
        y: b.y,
        ...(b.diagonal ? { variance: v } : { cov: v }),
      };
    }),
  }),
);
const p = fit.paramNames.length;
const iMB = fit.paramNames.indexOf('M_B');
const iAB = fit.paramNames.indexOf('a_B');
const log10H0 = (fit.q[iMB] + 5 * fit.q[iAB] + 25) / 5;
const h0 = 10 ** log10H0;
// the GLS part of the error (what the dense solve computes: alpha, beta and scatters held)
const g = (i: number, j: number) => fit.covGls[i * p + j];
const varGls = 0.04 * g(iMB, iMB) + 0.4 * g(iMB, iAB) + g(iAB, iAB);
console.log(
  JSON.stringify({
    scale,
    rows,
    fitRows,
    params: p,
    variants: release.variants.length,
    ms: { read: tRead, rungs: tRungs, globalFit: tFit, baseline: tBaseline, variants: tVariants, writing: tWrite },
    iterations: fit.iterations,
    h0,
    h0StatGls: h0 * Math.LN10 * Math.sqrt(varGls),
    peakRssMb: process.resourceUsage().maxRSS / 1024,
  }),
);
