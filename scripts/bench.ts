/**
 * `npm run bench`: speed and memory of rungbook, printed as tables with ratios and scaling.
 * Each measurement runs in its own process (peak memory is per run). Benchmarks are never
 * assertions: they print what they measure.
 *   Engine: generated releases at 1x, 4x, 16x the demo size; time per stage, peak memory, and the
 *   ratio of one dense N x N GLS solve to one structured solve of the same problem (dense solves
 *   are run at 1x and 4x; at 16x the dense time is extrapolated as N^3 from the 4x run unless
 *   --dense-all is given, because it would take tens of minutes and over 1.5 GB).
 */
import { execFileSync } from 'node:child_process';
import { fileURLToPath } from 'node:url';

const here = (p: string) => fileURLToPath(new URL(p, import.meta.url));
const denseAll = process.argv.includes('--dense-all');

interface EngineRun {
  scale: number;
  rows: number;
  fitRows: number;
  params: number;
  ms: Record<string, number | null>;
  maxDiff: number | null;
  iterations: number;
  peakRssMb: number;
}

function runEngine(scale: number, dense: boolean): EngineRun {
  const out = execFileSync(process.execPath, ['--import', 'tsx', here('./bench/engine.ts'), '--scale', String(scale), ...(dense ? ['--dense'] : [])], {
    encoding: 'utf8',
    maxBuffer: 1 << 24,
  });
  return JSON.parse(out.trim().split('\n').pop()!) as EngineRun;
}

const fmt = (x: number | null | undefined, d = 1) => (x === null || x === undefined ? '-' : x.toFixed(d));

console.log('rungbook benchmark — engine (one process per scale)\n');
const runs: EngineRun[] = [];
for (const scale of [1, 4, 16]) {
  runs.push(runEngine(scale, scale <= 4 || denseAll));
}
const base = runs[0];
const header = ['scale', 'input rows', 'fit rows', 'params', 'read ms', 'parallax ms', 'main seq ms', 'global fit ms', 'calibrate+variants ms', 'peak MB'];
console.log(header.join(' | '));
for (const r of runs) {
  console.log(
    [r.scale, r.rows, r.fitRows, r.params, fmt(r.ms.read), fmt(r.ms.parallax), fmt(r.ms.mainSequence), fmt(r.ms.globalFit), fmt(r.ms.calibrateWithVariants), fmt(r.peakRssMb, 0)].join(' | '),
  );
}
console.log('\nscaling against 1x (time ratio / row ratio; 1.0 = linear)');
for (const r of runs.slice(1)) {
  const rowRatio = r.rows / base.rows;
  const tRatio = (r.ms.calibrateWithVariants ?? 0) / (base.ms.calibrateWithVariants ?? 1);
  console.log(`  ${r.scale}x: rows x${fmt(rowRatio, 2)}, calibrate time x${fmt(tRatio, 2)} -> ${fmt(tRatio / rowRatio, 2)} per row`);
}
console.log('\nstructured GLS vs dense N x N GLS (one solve of the final problem)');
const r4 = runs.find((r) => r.scale === 4)!;
for (const r of runs) {
  let dense = r.ms.denseSolve;
  let note = '';
  if (dense === null && r4.ms.denseSolve !== null) {
    dense = r4.ms.denseSolve! * (r.fitRows / r4.fitRows) ** 3;
    note = ' (dense extrapolated as N^3 from 4x)';
  }
  const ratio = dense !== null ? dense / (r.ms.solve ?? 1) : null;
  console.log(
    `  ${r.scale}x: N = ${r.fitRows}, p = ${r.params}: structured ${fmt(r.ms.solve, 2)} ms, dense ${fmt(dense, 0)} ms, ratio ${fmt(ratio, 0)}x${note}` +
      (r.maxDiff !== null ? `, max |q_structured - q_dense| = ${r.maxDiff.toExponential(1)}` : ''),
  );
}

// ---- report build (issue: versioned report) --------------------------------------------------
interface BuildRun {
  wallMs: number;
  timingsMs: { calibrate: number; generate: number; site: number; total: number };
  pages: number;
  files: number;
  bytes: number;
  largestPage: { path: string; bytes: number } | null;
}
const buildOut = execFileSync(process.execPath, ['--import', 'tsx', here('./bench/build.ts')], { encoding: 'utf8', maxBuffer: 1 << 24 });
const b = JSON.parse(buildOut.trim().split('\n').pop()!) as { cold: BuildRun; warm: BuildRun; twenty: BuildRun };
console.log('\nreport build (rungbook build)');
console.log('case | wall s | calibrate s | pages+figures s | astro s | pages | dist MB | largest page');
for (const [name, r] of [
  ['demo, cold cache', b.cold],
  ['demo, nothing changed', b.warm],
  ['20 generated releases', b.twenty],
] as const) {
  console.log(
    [name, fmt(r.wallMs / 1000), fmt(r.timingsMs.calibrate / 1000), fmt(r.timingsMs.generate / 1000), fmt(r.timingsMs.site / 1000), r.pages, fmt(r.bytes / 1e6, 2), r.largestPage ? `${r.largestPage.path} (${fmt(r.largestPage.bytes / 1024, 0)} KB)` : '-'].join(' | '),
  );
}
console.log(`  rebuild with nothing changed: ${fmt((100 * b.warm.timingsMs.site) / b.warm.wallMs, 0)} % of its time in Astro`);
