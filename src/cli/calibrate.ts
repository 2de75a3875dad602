/**
 * `rungbook calibrate <release-dir> [--json FILE] [--workers N]`: run the ladder on one release,
 * print a readable summary to stdout and write results.json (default ./results.json). The
 * systematic variants run on N worker threads (1: this thread; default: the available cores for
 * a release of at least 10,000 input rows, this thread for a smaller one, see autoWorkers).
 */
import { resolve } from 'node:path';
import type { Results } from '../types/results.ts';
import { loadReleaseWithBlinding, withBlindingRecord } from '../blinding/apply.ts';
import { calibrateRelease } from '../ladder/calibrate.ts';
import { calibrateOnWorkers } from '../ladder/calibrateParallel.ts';
import { serializeResults } from '../io/results.ts';
import { writeFileAtomic } from '../io/atomicWrite.ts';
import { codeVersion } from '../version.ts';
import { parseArgs, UsageError, type CliIO } from './output.ts';

/**
 * Calibrate the release in a folder (the function the report build and the comparison call).
 * A release unblinded by `rungbook unblind` is calibrated on its true magnitudes (the offset
 * recorded in blinding.json added back exactly); one still blinded stays blinded.
 */
export async function calibrateReleaseDir(dir: string, workers: number | 'auto' = 1): Promise<Results> {
  const { release, record } = loadReleaseWithBlinding(dir);
  const options = { codeVersion: codeVersion() };
  const results = workers === 1 ? calibrateRelease(release, options) : await calibrateOnWorkers(release, options, workers);
  return withBlindingRecord(results, record);
}

function fmt(x: number, digits: number): string {
  return x.toFixed(digits);
}

export function summaryText(r: Results): string {
  const lines: string[] = [];
  lines.push(`Release ${r.release.id}: ${r.release.title} (${r.release.date})`);
  lines.push('Internal result for collaboration review.');
  if (r.blinded) {
    lines.push('BLINDED: H0, the intercept a_B and the H0 of every variant carry a hidden offset (M_B is marked with them).');
    lines.push('         Do not quote or compare them; diagnostics, and shifts between releases blinded alike, are meaningful.');
  }
  if (r.unblinding) {
    const o = r.unblinding.offset_mag;
    lines.push(
      `Unblinded on ${r.unblinding.date} by ${r.unblinding.by} (offset ${o >= 0 ? '+' : ''}${fmt(o, 4)} mag added back): the values below are the true ones.`,
    );
  }
  if (r.h0) {
    const tag = r.blinded ? '  [BLINDED: carries a hidden offset]' : '';
    lines.push(
      `H0 = ${fmt(r.h0.value, 2)} ± ${fmt(r.h0.stat, 2)} (stat) ± ${fmt(r.h0.sys, 2)} (sys) km/s/Mpc` +
        `  [total ± ${fmt(r.h0.total, 2)}, ${fmt((100 * r.h0.total) / r.h0.value, 1)} %]${tag}`,
    );
  } else {
    lines.push(`H0 not measured: the ladder stops at the ${r.reached.replace('_', ' ')} rung.`);
  }
  lines.push('');
  lines.push('Parameters');
  for (const [name, p] of Object.entries(r.parameters)) {
    const note = p.fixed ? ' (fixed)' : p.blinded ? ' (BLINDED)' : '';
    lines.push(`  ${name.padEnd(20)} ${fmt(p.value, 4).padStart(10)} ± ${fmt(p.err, 4).padEnd(8)} ${p.unit}${note}`);
  }
  lines.push('');
  const f = r.fit;
  lines.push(
    `Fit: chi2 = ${fmt(f.chi2, 1)} for ${f.dof} degrees of freedom (chi2/dof = ${fmt(f.dof > 0 ? f.chi2 / f.dof : 0, 3)}, ` +
      `p = ${fmt(f.p_value, 3)}); ${f.n_data} rows, ${f.n_parameters} parameters, ${f.iterations} iterations` +
      (f.converged ? '' : ', NOT CONVERGED'),
  );
  lines.push(`Rejected as outliers: ${r.rejected.length}`);
  for (const x of r.rejected.slice(0, 10)) {
    lines.push(`  ${x.table}:${x.line} ${x.id}${x.system ? ` (${x.system})` : ''}  ${fmt(x.residual_sigma, 2)} sigma`);
  }
  if (r.rejected.length > 10) lines.push(`  ... and ${r.rejected.length - 10} more (see results.json)`);
  if (r.variants.length) {
    lines.push('');
    lines.push(
      `Systematic variants (per source: half the range of H0 over baseline and alternatives, shifts less the noise of a change of data; sources in quadrature)${r.blinded ? ' [BLINDED: all carry the same hidden offset]' : ''}`,
    );
    const noise = (v: (typeof r.variants)[number]) => (v.changes_data && v.noise_h0 ? `, noise ${fmt(v.noise_h0, 2)}` : '');
    for (const v of r.variants) {
      lines.push(
        v.h0 === null
          ? `  ${v.name.padEnd(28)} failed: ${v.error}`
          : `  ${v.name.padEnd(28)} H0 = ${fmt(v.h0, 2)}  (${v.delta_h0! >= 0 ? '+' : ''}${fmt(v.delta_h0!, 2)}${noise(v)})`,
      );
    }
    for (const s of r.systematics ?? []) lines.push(`  source ${s.label}: ${fmt(s.sigma_h0, 2)}`);
  }
  const failed = r.checks.filter((c) => !c.passed && c.severity === 'warning');
  if (failed.length) {
    lines.push('');
    lines.push('Warnings');
    for (const c of failed) lines.push(`  ${c.title}: ${c.detail}`);
  }
  return lines.join('\n') + '\n';
}

export async function runCalibrate(args: string[], io: CliIO): Promise<number> {
  const { positional, values } = parseArgs(args, { values: ['json', 'workers'] });
  if (positional.length !== 1) throw new UsageError('usage: rungbook calibrate <release-dir> [--json FILE] [--workers N]');
  let workers: number | 'auto' = 'auto';
  if (values.workers !== undefined) {
    workers = Number(values.workers);
    if (!Number.isInteger(workers) || workers < 1) {
      throw new UsageError(`--workers: expected a whole number of at least 1, found "${values.workers}"`);
    }
  }
  const results = await calibrateReleaseDir(positional[0], workers);
  const out = resolve(values.json ?? 'results.json');
  writeFileAtomic(out, serializeResults(results));
  io.stdout(summaryText(results));
  io.stdout(`\nresults written to ${out}\n`);
  return 0;
}
