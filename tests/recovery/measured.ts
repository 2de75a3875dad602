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
import { MEASURED_RECOVERY_SCHEMA, measuredRecoveryFile, measuredRecoverySchema, type MeasuredRecovery } from '../../src/report/measured.ts';
import type { PullSummary } from './harness.ts';

/** The file the report reads (src/report/measured.ts), in this repository's method notes. */
export const MEASURED_FILE = measuredRecoveryFile(fileURLToPath(new URL('../../content/methods', import.meta.url)));

export function measuredRecovery(base: number, count: number, blendFraction: number, quantities: PullSummary[]): MeasuredRecovery {
  return {
    schema: MEASURED_RECOVERY_SCHEMA,
    command: `npm run recovery:campaign -- --base ${base} --seeds ${count} --write`,
    seeds: { base, count },
    blend_fraction: blendFraction,
    quantities,
  };
}

export function writeMeasured(m: MeasuredRecovery): void {
  mkdirSync(dirname(MEASURED_FILE), { recursive: true });
  writeFileSync(MEASURED_FILE, `${JSON.stringify(measuredRecoverySchema.parse(m), null, 2)}\n`);
}

export function readMeasured(): MeasuredRecovery {
  return measuredRecoverySchema.parse(JSON.parse(readFileSync(MEASURED_FILE, 'utf8')));
}
