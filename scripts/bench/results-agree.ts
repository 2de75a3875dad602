/**
 * Do two results.json files agree? Walks both trees together and reports every number whose
 * relative difference exceeds the tolerance (default 1e-9; |a - b| / max(|a|, |b|), with
 * differences below 1e-300 in absolute value ignored), and every other difference in
 * structure or text. The provenance block (code version, timings) is skipped. Exit 1 on
 * disagreement. Used to check that a change of the numerical engine moves no result:
 *   tsx scripts/bench/results-agree.ts before.json after.json [--tol 1e-9]
 */
import { readFileSync } from 'node:fs';

const args = process.argv.slice(2);
const tolIdx = args.indexOf('--tol');
const tol = tolIdx >= 0 ? Number(args[tolIdx + 1]) : 1e-9;
const [fa, fb] = args.filter((a, i) => !a.startsWith('--') && (tolIdx < 0 || i !== tolIdx + 1));
const a = JSON.parse(readFileSync(fa!, 'utf8'));
const b = JSON.parse(readFileSync(fb!, 'utf8'));
const SKIP = new Set(['provenance', 'code_version']);
let worst = { rel: 0, path: '' };
let numbers = 0;
const problems: string[] = [];

function walk(x: unknown, y: unknown, path: string): void {
  if (typeof x === 'number' && typeof y === 'number') {
    numbers++;
    const d = Math.abs(x - y);
    const rel = d < 1e-300 ? 0 : d / Math.max(Math.abs(x), Math.abs(y));
    if (rel > worst.rel) worst = { rel, path };
    if (rel > tol) problems.push(`${path}: ${x} vs ${y} (relative ${rel.toExponential(2)})`);
    return;
  }
  if (Array.isArray(x) && Array.isArray(y)) {
    if (x.length !== y.length) problems.push(`${path}: length ${x.length} vs ${y.length}`);
    for (let i = 0; i < Math.min(x.length, y.length); i++) walk(x[i], y[i], `${path}[${i}]`);
    return;
  }
  if (x && y && typeof x === 'object' && typeof y === 'object') {
    const keys = new Set([...Object.keys(x), ...Object.keys(y)]);
    for (const k of keys) {
      if (SKIP.has(k)) continue;
      if (!(k in x) || !(k in y)) problems.push(`${path}.${k}: only in ${k in x ? 'first' : 'second'}`);
      else walk((x as Record<string, unknown>)[k], (y as Record<string, unknown>)[k], `${path}.${k}`);
    }
    return;
  }
  if (x !== y) problems.push(`${path}: ${JSON.stringify(x)} vs ${JSON.stringify(y)}`);
}

walk(a, b, '$');
console.log(`${numbers} numbers compared; largest relative difference ${worst.rel.toExponential(2)} at ${worst.path || '-'}`);
for (const p of problems.slice(0, 40)) console.log(`  ${p}`);
if (problems.length > 40) console.log(`  ... and ${problems.length - 40} more`);
process.exitCode = problems.length ? 1 : 0;
