/**
 * Reading a release with its blinding record: a release that was unblinded is calibrated
 * on its true magnitudes (the recorded offset added back exactly), one still blinded is
 * calibrated as it is and marked blinded. This is the only place where the offset of an
 * unblinded release reaches the analysis.
 */
import { join } from 'node:path';
import { BLINDING_FILE } from '../io/folder.ts';
import { loadRelease } from '../io/release.ts';
import { InputError, type InputIssue } from '../types/issues.ts';
import type { Release, SnHubbleFlowRow } from '../types/release.ts';
import type { Results } from '../types/results.ts';
import { addDecimal, decimalOfDouble, formatDecimal } from './decimal.ts';
import { blindingRefOf, readBlindingRecord, type BlindingRecord, type BlindingRef } from './record.ts';
import { commitment, offsetDecimal, offsetInRange, unitsOfOffsetMag } from './scheme.ts';

/** results.unblinding: who unblinded, when, and the offset. */
export type UnblindingSummary = NonNullable<Results['unblinding']>;

/**
 * The Hubble-flow rows with `units` (0.0001 mag) added back to m_b, exactly: each m_b is
 * taken as the decimal it was read from (at most 15 significant digits, which blinding
 * guarantees), the offset is added as a decimal and the sum is read as a double, which
 * gives the same double as reading the never-blinded text.
 */
export function restoreHubbleFlowMagnitudes(rows: readonly SnHubbleFlowRow[], units: number): SnHubbleFlowRow[] {
  const offset = offsetDecimal(units);
  return rows.map((row) => ({ ...row, mB: Number(formatDecimal(addDecimal(decimalOfDouble(row.mB), offset))) }));
}

function recordIssue(file: string, message: string, expected: string, found: string, hint?: string): InputError {
  const issue: InputIssue = { code: 'blinding-record-mismatch', file, message, expected, found };
  if (hint) issue.hint = hint;
  return new InputError([issue]);
}

/**
 * The offset of an unblinded record, checked against the commitment made at blinding
 * (anyone can check it: the salt is revealed at unblinding). Throws InputError if the
 * record does not hold together. Null while the record is still blinded.
 */
export function verifiedOffsetUnits(record: BlindingRecord, file: string): number | null {
  const u = record.unblinded;
  if (!u) return null;
  const units = unitsOfOffsetMag(u.offset_mag);
  if (units === null || !offsetInRange(units)) {
    throw recordIssue(
      file,
      'blinding.json: the recorded offset is not one the scheme can produce',
      'a multiple of 0.0001 mag with |offset| <= 0.25',
      String(u.offset_mag),
    );
  }
  if (commitment(Buffer.from(u.salt, 'hex'), units) !== record.commitment) {
    throw recordIssue(
      file,
      'blinding.json: the recorded offset and salt do not match the commitment made at blinding',
      `SHA-256(salt || offset) = ${record.commitment}`,
      'a different hash',
      'the record was altered after unblinding; restore it from the repository history',
    );
  }
  return units;
}

/**
 * The release as the calibration should see it. `record` is the release's blinding.json
 * (null if it has none):
 * - no record: the release as read (blinded if release.yaml says so: blinded by other means);
 * - a record still blinded: the release as read, which release.yaml must mark blinded;
 * - an unblinded record: m_b of the Hubble flow restored exactly, and marked not blinded.
 * Throws InputError when release.yaml and the record disagree.
 */
export function applyBlindingRecord(release: Release, record: BlindingRecord | null, file = join(release.dir, BLINDING_FILE)): Release {
  if (!record) return release;
  if (!release.manifest.blinded) {
    throw recordIssue(
      file,
      'the release has a blinding record but release.yaml says "blinded: false"',
      '"blinded: true" in release.yaml (its Hubble-flow magnitudes still carry the offset)',
      '"blinded: false"',
      'restore "blinded: true"; only `rungbook unblind` makes the true values available',
    );
  }
  const hubbleFile = release.inputs.find((i) => i.table === 'sn_hubble_flow')?.file;
  if (hubbleFile !== record.table || release.snHubbleFlow.length !== record.rows) {
    throw recordIssue(
      file,
      "the blinding record does not describe this release's Hubble-flow table",
      `${record.table} with ${record.rows} rows`,
      `${hubbleFile ?? 'no Hubble-flow table'} with ${release.snHubbleFlow.length} rows`,
    );
  }
  const units = verifiedOffsetUnits(record, file);
  if (units === null) return release;
  return {
    ...release,
    manifest: { ...release.manifest, blinded: false },
    snHubbleFlow: restoreHubbleFlowMagnitudes(release.snHubbleFlow, units),
  };
}

export function unblindingSummary(record: BlindingRecord | null): UnblindingSummary | null {
  const u = record?.unblinded;
  return u ? { by: u.by, date: u.date, offset_mag: u.offset_mag } : null;
}

/** Load a release folder and its blinding record, ready to calibrate. */
export function loadReleaseWithBlinding(dir: string): { release: Release; record: BlindingRecord | null } {
  const read = loadRelease(dir);
  const record = readBlindingRecord(dir);
  return { release: applyBlindingRecord(read, record, join(dir, BLINDING_FILE)), record };
}

/**
 * results.json of a release with its blinding record: `unblinding` filled in from an
 * unblinded record and `blinding` (id, key check, commitment) placed after it, so that
 * comparisons can tell releases blinded alike. Key order stays fixed.
 */
export function withBlindingRecord(results: Results, record: BlindingRecord | null): Results {
  const out: Record<string, unknown> = {};
  const ref: BlindingRef | null = record ? blindingRefOf(record) : null;
  for (const [k, v] of Object.entries(results)) {
    if (k === 'blinding') continue;
    out[k] = k === 'unblinding' ? unblindingSummary(record) : v;
    if (k === 'unblinding') out.blinding = ref;
  }
  return out as unknown as Results;
}
