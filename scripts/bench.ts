/**
 * `npm run bench`: speed and memory of rungbook, printed as tables with ratios and scaling.
 * Each measurement runs in its own process (peak memory is per process). Benchmarks are never
 * assertions: they print what they measure.
 *   Engine: the demo's release 2026.3 generated at 1x, 4x, 8x, 16x its size (with its five
 *   systematic variants, and a copy without them): time per stage in one thread; whole
 *   `rungbook calibrate` processes (start to results.json) without variants, and with the
 *   variants on 1 and 2 worker threads; and an independent dense GLS in Python + numpy
 *   (scripts/bench/dense_gls.py: the N x N covariance of the same rows at the same fixed
 *   scatters, alpha and beta, solved with numpy.linalg) with the ratio and the H0 agreement.
 *   Options: --scales 1,4,8,16 (default), --dense-max-scale S (skip the dense solve above S;
 *   at 16x it needs about 2 GB and, with Debian's reference BLAS, tens of minutes),
 *   --sections engine,recovery,build,diff (default: all).
 *   Recovery seeds: 8 injection-recovery seeds on 1 and 2 worker threads.
 *   Report build: the demo from a cold cache, again with nothing changed, and 20 releases.
 *   Comparison: a full comparison with attribution of the demo pair, in one thread and with two
 *   worker threads, and at 16x the demo size, against the 10 s target for the demo pair.
 */
import { execFileSync, spawnSync } from 'node:child_process';
import { mkdtempSync, rmSync } from 'node:fs';
import { tmpdir } from 'node:os';
import { join } from 'node:path';
import { fileURLToPath } from 'node:url';

const here = (p: string) => fileURLToPath(new URL(p, import.meta.url));
const option = (name: string, fallback: string) => {
  const i = process.argv.indexOf(`--${name}`);
  return i >= 0 ? process.argv[i + 1]! : fallback;
};
const scales = option('scales', '1,4,8,16').split(',').map(Number);
/** The numpy dense solve runs up to 8x (minutes); at 16x it needs about 2 GB and tens of minutes with Debian's reference BLAS. */
const denseMaxScale = Number(option('dense-max-scale', '8'));
const DENSE_SKIP_REASON = `skipped above ${denseMaxScale}x: the N x N covariance needs about 2 GB at 16x and Debian's reference BLAS takes tens of minutes (--dense-max-scale 16 runs it)`;
const sections = new Set(option('sections', 'engine,recovery,build,diff').split(','));
const PYTHON = process.env.RUNGBOOK_PYTHON ?? '/usr/bin/python3';

interface EngineRun {
  scale: number;
  rows: number;
  fitRows: number;
  params: number;
  variants: number;
  ms: { read: number; rungs: number; globalFit: number; baseline: number; variants: number; writing: number };
  iterations: number;
  h0: number;
  h0StatGls: number;
  peakRssMb: number;
}
interface ProcessRun {
  wallMs: number;
  /** CPU time of the process, all threads (user + system). */
  cpuMs: number;
  peakMb: number;
}
interface DenseRun {
  rows: number;
  params: number;
  h0: number;
  h0_stat: number;
  build_ms: number;
  solve_ms: number;
  peak_mb: number;
  wallMs: number;
}

const fmt = (x: number | null | undefined, d = 1) => (x === null || x === undefined || !Number.isFinite(x) ? '-' : x.toFixed(d));
const lastLine = (out: string) => out.trim().split('\n').pop()!;

/** A whole `rungbook calibrate` process: wall time from spawn to exit, peak memory. */
function calibrateProcess(dir: string, workers: number, out: string): ProcessRun {
  const t = performance.now();
  const r = spawnSync(
    process.execPath,
    ['--import', here('./bench/peak-rss.mjs'), here('./rungbook.mjs'), 'calibrate', dir, '--workers', String(workers), '--json', out],
    { encoding: 'utf8', maxBuffer: 1 << 26 },
  );
  const wallMs = performance.now() - t;
  if (r.status !== 0) throw new Error(`rungbook calibrate failed: ${r.stderr}`);
  const kb = Number(/peak-rss-kb (\d+)/.exec(r.stderr)?.[1] ?? NaN);
  const cpuMs = Number(/cpu-ms ([\d.]+)/.exec(r.stderr)?.[1] ?? NaN);
  return { wallMs, cpuMs, peakMb: kb / 1024 };
}

if (sections.has('engine')) {
  console.log('rungbook benchmark — engine (release 2026.3 of the demo generated at each scale; one process per measurement)');
  console.log(`machine load at start (1-min average): ${(await import('node:os')).loadavg()[0].toFixed(2)}\n`);
  const rowsOut: { e: EngineRun; nv: ProcessRun; w1: ProcessRun; w2: ProcessRun; dense: DenseRun | null }[] = [];
  for (const scale of scales) {
    const dir = mkdtempSync(join(tmpdir(), 'rungbook-bench-'));
    try {
      const e = JSON.parse(
        lastLine(
          execFileSync(process.execPath, ['--import', 'tsx', here('./bench/engine.ts'), '--scale', String(scale), '--dir', dir], {
            encoding: 'utf8',
            maxBuffer: 1 << 26,
          }),
        ),
      ) as EngineRun;
      const nv = calibrateProcess(join(dir, 'bench-nv'), 1, join(dir, 'nv.json'));
      const w1 = calibrateProcess(join(dir, 'bench'), 1, join(dir, 'w1.json'));
      const w2 = calibrateProcess(join(dir, 'bench'), 2, join(dir, 'w2.json'));
      let dense: DenseRun | null = null;
      if (scale <= denseMaxScale) {
        const t = performance.now();
        const out = execFileSync(PYTHON, [here('./bench/dense_gls.py'), join(dir, 'problem.json')], { encoding: 'utf8', maxBuffer: 1 << 24 });
        dense = { ...(JSON.parse(lastLine(out)) as DenseRun), wallMs: performance.now() - t };
      }
      if (!dense) console.error(`  (${scale}x) numpy dense solve ${DENSE_SKIP_REASON}`);
      rowsOut.push({ e, nv, w1, w2, dense });
      console.error(`  (${scale}x measured) ${JSON.stringify({ e, nv, w1, w2, dense })}`);
    } finally {
      rmSync(dir, { recursive: true, force: true });
    }
  }

  console.log('stages of one calibration in one thread (ms): read | rungs | global fit | variants | writing');
  console.log('scale | input rows | fit rows | params | read | rungs | global fit | variants (5) | writing | iterations | peak MB');
  for (const { e } of rowsOut) {
    console.log(
      [
        `${e.scale}x`,
        e.rows,
        e.fitRows,
        e.params,
        fmt(e.ms.read, 0),
        fmt(e.ms.rungs, 0),
        fmt(e.ms.globalFit, 0),
        fmt(e.ms.variants, 0),
        fmt(e.ms.writing, 0),
        e.iterations,
        fmt(e.peakRssMb, 0),
      ].join(' | '),
    );
  }

  console.log('\nwhole `rungbook calibrate` processes (start to results.json) against the numpy dense GLS of the same release');
  console.log(
    'scale | calibrate, no variants s (CPU s) | peak MB | dense build+solve s | dense peak MB | dense / calibrate | H0 engine | H0 dense | |dH0| / sigma',
  );
  for (const { e, nv, dense } of rowsOut) {
    const dt = dense ? (dense.build_ms + dense.solve_ms) / 1000 : null;
    const agree = dense ? Math.abs(dense.h0 - e.h0) / e.h0StatGls : null;
    console.log(
      [
        `${e.scale}x`,
        `${fmt(nv.wallMs / 1000, 2)} (${fmt(nv.cpuMs / 1000, 2)})`,
        fmt(nv.peakMb, 0),
        fmt(dt, 2),
        fmt(dense?.peak_mb, 0),
        dt !== null ? `${fmt(dt / (nv.wallMs / 1000), 1)}x` : `not run (${DENSE_SKIP_REASON})`,
        fmt(e.h0, 6),
        fmt(dense?.h0, 6),
        agree !== null ? agree.toExponential(1) : '-',
      ].join(' | '),
    );
  }

  console.log('\nwith the five variants: whole processes on 1 and 2 worker threads');
  console.log('scale | 1 thread s (CPU s) | peak MB | 2 workers s (CPU s) | peak MB | 2 workers / 1 thread (wall)');
  for (const { e, w1, w2 } of rowsOut) {
    console.log(
      [
        `${e.scale}x`,
        `${fmt(w1.wallMs / 1000, 2)} (${fmt(w1.cpuMs / 1000, 2)})`,
        fmt(w1.peakMb, 0),
        `${fmt(w2.wallMs / 1000, 2)} (${fmt(w2.cpuMs / 1000, 2)})`,
        fmt(w2.peakMb, 0),
        fmt(w2.wallMs / w1.wallMs, 2),
      ].join(' | '),
    );
  }

  const base = rowsOut[0];
  console.log('\nlinear time: time per input row against 1x (1.0 = linear)');
  console.log(
    'scale | rows x | global fit | calibrate, no variants (wall; CPU) | calibrate with variants, 1 thread (wall; CPU) | with variants, 2 workers (wall)',
  );
  for (const r of rowsOut) {
    const k = r.e.rows / base.e.rows;
    const per = (a: number, b: number) => fmt(a / b / k, 2);
    console.log(
      [
        `${r.e.scale}x`,
        fmt(k, 2),
        per(r.e.ms.globalFit, base.e.ms.globalFit),
        `${per(r.nv.wallMs, base.nv.wallMs)}; ${per(r.nv.cpuMs, base.nv.cpuMs)}`,
        `${per(r.w1.wallMs, base.w1.wallMs)}; ${per(r.w1.cpuMs, base.w1.cpuMs)}`,
        per(r.w2.wallMs, base.w2.wallMs),
      ].join(' | '),
    );
  }
}

// ---- injection-recovery seeds on worker threads ---------------------------------------------
if (sections.has('recovery')) {
  const recovery = (workers: number) =>
    JSON.parse(
      lastLine(
        execFileSync(process.execPath, ['--import', 'tsx', here('./bench/recovery.ts'), '--seeds', '8', '--workers', String(workers)], { encoding: 'utf8' }),
      ),
    ) as {
      seeds: number;
      workers: number;
      ms: number;
    };
  const rec1 = recovery(1);
  const rec2 = recovery(2);
  console.log('\ninjection-recovery seeds (tests/recovery, src/parallel/pool.ts)');
  console.log(
    `  ${rec1.seeds} seeds: 1 worker ${fmt(rec1.ms / 1000, 2)} s, 2 workers ${fmt(rec2.ms / 1000, 2)} s -> ${fmt(rec2.ms / rec1.ms, 2)} of the 1-worker time`,
  );
}

// ---- report build (issue: versioned report) --------------------------------------------------
if (sections.has('build')) {
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
      [
        name,
        fmt(r.wallMs / 1000),
        fmt(r.timingsMs.calibrate / 1000),
        fmt(r.timingsMs.compare / 1000),
        fmt((r.timingsMs.leaveOneOut ?? 0) / 1000),
        fmt(r.timingsMs.generate / 1000),
        fmt(r.timingsMs.site / 1000),
        r.pages,
        fmt(r.bytes / 1e6, 2),
        r.largestPage ? `${r.largestPage.path} (${fmt(r.largestPage.bytes / 1024, 0)} KB)` : '-',
      ].join(' | '),
    );
  }
  console.log(`  rebuild with nothing changed: ${fmt((100 * b.warm.timingsMs.site) / b.warm.wallMs, 0)} % of its time in Astro`);
}

// ---- release comparison (issue: comparing data releases) --------------------------------------
if (sections.has('diff')) {
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
      execFileSync(process.execPath, ['--import', 'tsx', here('./bench/diff.ts'), '--scale', String(scale), '--workers', workers], {
        encoding: 'utf8',
        maxBuffer: 1 << 24,
      })
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
      [
        name,
        r.rows.a + r.rows.b,
        r.groups,
        r.hybrids,
        r.threads ? 'yes' : 'no',
        fmt(r.ms / 1000, 2),
        `${fmt((100 * r.ms) / DIFF_TARGET_MS, 0)} %`,
        fmt(r.peakRssMb, 0),
        slowest ? `${slowest[0]} (${fmt(slowest[1] / 1000, 2)} s)` : '-',
      ].join(' | '),
    );
  }
  const d1 = diffRuns[0]![1];
  const d16 = diffRuns[2]![1];
  const rowRatio = (d16.rows.a + d16.rows.b) / (d1.rows.a + d1.rows.b);
  console.log(`  scaling 1x -> 16x: rows x${fmt(rowRatio, 1)}, time x${fmt(d16.ms / d1.ms, 1)} -> ${fmt(d16.ms / d1.ms / rowRatio, 2)} per row (1.0 = linear)`);
  console.log(`  worker threads at 1x: ${fmt(diffRuns[1]![1].ms / d1.ms, 2)} of the one-thread time (thread start-up included)`);
}
