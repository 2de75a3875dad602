/**
 * A recovery campaign on any seed set, with the checks of the recovery test
 * (tests/recovery/verdict.ts): prints every published quantity's pull summary, the pooled
 * distance pulls, the systems whose mean pull is largest, and what misses a bound.
 *
 *   npm run recovery:campaign -- --base 20261205 --seeds 1000 [--workers N] [--blend-fraction F] [--write]
 *
 * --write stores the table in content/methods/measured/recovery.json for the method notes
 * (tests/recovery/measured.ts); the recovery test then checks it against its own run.
 *
 * Exit code 1 when any check misses its bound. Used to repeat the test's campaign on other
 * seed sets, and to measure before/after a change of the engine.
 */
import { parseArgs } from 'node:util';
import { defaultWorkers } from '../../src/parallel/pool.ts';
import { RECOVERY_BLEND_FRACTION, formatSummary, intervalCoverage, summarisePulls } from './harness.ts';
import { MEASURED_FILE, measuredRecovery, writeMeasured } from './measured.ts';
import { recoverSeeds } from './pool.ts';
import { GLOBAL_BOUNDS, distanceFamily, globalFailures, pooledFailures, systemFailures } from './verdict.ts';

const { values } = parseArgs({
  options: {
    base: { type: 'string', default: '20261205' },
    seeds: { type: 'string', default: '1000' },
    workers: { type: 'string' },
    'blend-fraction': { type: 'string' },
    write: { type: 'boolean', default: false },
  },
});
const base = Number(values.base);
const count = Number(values.seeds);
const workers = values.workers ? Number(values.workers) : defaultWorkers();
const seeds = Array.from({ length: count }, (_, i) => base + i);
const blend = values['blend-fraction'];

const started = performance.now();
const pulls = await recoverSeeds(seeds, blend === undefined ? {} : { parameters: { blendFraction: Number(blend) } }, workers);
const seconds = (performance.now() - started) / 1000;

const summary = summarisePulls(pulls);
const pooled = summarisePulls(pulls, (p) => distanceFamily(p.name));
const perSystem = summarisePulls(pulls, (p) => (p.system ? `${p.name} ${p.system}` : null)).sort((a, b) => Math.abs(b.mean) - Math.abs(a.mean));

console.log(`seeds ${base}..${base + count - 1} (${count}), ${workers} workers, ${seconds.toFixed(0)} s`);
console.log(formatSummary([...summary, ...pooled]));
for (const i of intervalCoverage(pulls)) console.log(`${i.name}: 68 % interval covers the truth in ${(100 * i.coverage).toFixed(1)} % of ${i.n} seeds`);
console.log('\nlargest per-system mean pulls:');
console.log(formatSummary(perSystem.slice(0, 6)));

const failures = [
  ...summary.filter((s) => !s.name.startsWith('mu')).flatMap((s) => globalFailures(s).map((f) => `${s.name}: ${f}`)),
  ...pooled.flatMap((s) => pooledFailures(s).map((f) => `${s.name}: ${f}`)),
  ...perSystem.flatMap((s) => systemFailures(s).map((f) => `${s.name}: ${f}`)),
  ...intervalCoverage(pulls)
    .filter((i) => i.coverage < GLOBAL_BOUNDS.coverage1[0] || i.coverage > GLOBAL_BOUNDS.coverage1[1])
    .map((i) => `${i.name}: 68 % interval coverage ${i.coverage.toFixed(3)} (in [${GLOBAL_BOUNDS.coverage1.join(', ')}])`),
];
console.log(failures.length ? `\nverdict: FAIL\n${failures.join('\n')}` : '\nverdict: pass (every check within its bound)');
if (values.write) {
  writeMeasured(measuredRecovery(base, count, blend === undefined ? RECOVERY_BLEND_FRACTION : Number(blend), [...summary, ...pooled]));
  console.log(`wrote ${MEASURED_FILE}`);
}
process.exitCode = failures.length ? 1 : 0;
