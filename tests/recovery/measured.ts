/**
 * The recovery test's measured table, committed so that the method notes can show it:
 * content/methods/measured/recovery.json. It is written only by a test run's own code path
 * (`npm run recovery:campaign -- --write`, which runs the test's seed set) and never typed by
 * hand; the recovery test fails when the committed table differs from what it measures, so a
 * note can never quote a table the current engine does not produce.
 */
import { mkdirSync, readFileSync, writeFileSync } from 'node:fs';
import { dirname } from 'node:path';
import { fileURLToPath } from 'node:url';
import type { PullSummary } from './harness.ts';

export const MEASURED_FILE = fileURLToPath(new URL('../../content/methods/measured/recovery.json', import.meta.url));
export const MEASURED_SCHEMA = 'rungbook.measured-recovery/1';

export interface MeasuredRecovery {
  schema: typeof MEASURED_SCHEMA;
  /** How to make it again. */
  command: string;
  seeds: { base: number; count: number };
  blend_fraction: number;
  quantities: PullSummary[];
}

export function measuredRecovery(base: number, count: number, blendFraction: number, quantities: PullSummary[]): MeasuredRecovery {
  return {
    schema: MEASURED_SCHEMA,
    command: `npm run recovery:campaign -- --base ${base} --seeds ${count} --write`,
    seeds: { base, count },
    blend_fraction: blendFraction,
    quantities,
  };
}

export function writeMeasured(m: MeasuredRecovery): void {
  mkdirSync(dirname(MEASURED_FILE), { recursive: true });
  writeFileSync(MEASURED_FILE, `${JSON.stringify(m, null, 2)}\n`);
}

export function readMeasured(): MeasuredRecovery {
  return JSON.parse(readFileSync(MEASURED_FILE, 'utf8')) as MeasuredRecovery;
}
