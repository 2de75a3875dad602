/**
 * `npm run bench`: speed and memory of rungbook, printed as tables with ratios and scaling.
 * Each measurement runs in its own process (peak memory is per run). Benchmarks are never
 * assertions: they print what they measure.
 *   Engine: generated releases at 1x, 4x, 16x the demo size; time per stage, peak memory, and the
 *   ratio of one dense N x N GLS solve to one structured solve of the same problem (dense solves
 *   are run at 1x and 4x; at 16x the dense time is extrapolated as N^3 from the 4x run unless
 *   --dense-all is given, because it would take tens of minutes and over 1.5 GB).
 *   Report build: the demo from a cold cache, again with nothing changed, and 20 releases.
 *   Comparison: a full comparison with attribution of the demo pair, in one thread and with two
 *   worker threads, and at 16x the demo size, against the 10 s target for the demo pair.
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
  timingsMs: { calibrate: number; compare: number; leaveOneOut?: number; generate: number; site: number; total: number };
  pages: number;
  files: number;
  bytes: number;
  largestPage: { path: string; bytes: number } | null;
}
const buildOut = execFileSync(process.execPath, ['--import', 'tsx', here('./bench/build.ts')], { encoding: 'utf8', maxBuffer: 1 << 24 });
const b = JSON.parse(buildOut.trim().split('\n').pop()!) as { cold: BuildRun; warm: BuildRun; twenty: BuildRun };
console.log('\nreport build (rungbook build)');
console.log('case | wall s | calibrate s | compare s | leave-one-out s | pages+figures s | astro s | pages | dist MB | largest page');
for (const [name, r] of [
  ['demo, cold cache', b.cold],
  ['demo, nothing changed', b.warm],
  ['20 generated releases', b.twenty],
] as const) {
  console.log(
    [name, fmt(r.wallMs / 1000), fmt(r.timingsMs.calibrate / 1000), fmt(r.timingsMs.compare / 1000), fmt((r.timingsMs.leaveOneOut ?? 0) / 1000), fmt(r.timingsMs.generate / 1000), fmt(r.timingsMs.site / 1000), r.pages, fmt(r.bytes / 1e6, 2), r.largestPage ? `${r.largestPage.path} (${fmt(r.largestPage.bytes / 1024, 0)} KB)` : '-'].join(' | '),
  );
}
console.log(`  rebuild with nothing changed: ${fmt((100 * b.warm.timingsMs.site) / b.warm.wallMs, 0)} % of its time in Astro`);

// ---- release comparison (issue: comparing data releases) --------------------------------------
interface DiffRun {
  scale: number;
  rows: { a: number; b: number };
  groups: number;
  hybrids: number;
  threads: boolean;
  ms: number;
  wallMs: number;
  stages: Record<string, number>;
  peakRssMb: number;
}
/** Target for the demo pair on a 2-core machine (issue). */
const DIFF_TARGET_MS = 10_000;
const runDiff = (scale: number, workers: string): DiffRun =>
  JSON.parse(
    execFileSync(process.execPath, ['--import', 'tsx', here('./bench/diff.ts'), '--scale', String(scale), '--workers', workers], { encoding: 'utf8', maxBuffer: 1 << 24 })
      .trim()
      .split('\n')
      .pop()!,
  ) as DiffRun;
console.log('\nrelease comparison with attribution (rungbook diff 2026.2 -> 2026.3; one process per case)');
console.log('case | rows a+b | groups | hybrids | threads | comparison s | of 10 s target | peak MB | slowest step');
const diffRuns: [string, DiffRun][] = [
  ['demo, in one thread', runDiff(1, '0')],
  ['demo, 2 worker threads', runDiff(1, '2')],
  ['16x demo, auto', runDiff(16, 'auto')],
];
for (const [name, r] of diffRuns) {
  const slowest = Object.entries(r.stages).sort((x, y) => y[1] - x[1])[0];
  console.log(
    [name, r.rows.a + r.rows.b, r.groups, r.hybrids, r.threads ? 'yes' : 'no', fmt(r.ms / 1000, 2), `${fmt((100 * r.ms) / DIFF_TARGET_MS, 0)} %`, fmt(r.peakRssMb, 0), slowest ? `${slowest[0]} (${fmt(slowest[1] / 1000, 2)} s)` : '-'].join(' | '),
  );
}
const d1 = diffRuns[0]![1];
const d16 = diffRuns[2]![1];
const rowRatio = (d16.rows.a + d16.rows.b) / (d1.rows.a + d1.rows.b);
console.log(`  scaling 1x -> 16x: rows x${fmt(rowRatio, 1)}, time x${fmt(d16.ms / d1.ms, 1)} -> ${fmt(d16.ms / d1.ms / rowRatio, 2)} per row (1.0 = linear)`);
console.log(`  worker threads at 1x: ${fmt(diffRuns[1]![1].ms / d1.ms, 2)} of the one-thread time (thread start-up included)`);
