/**
 * Publishing a release: calibrate it, check that the results were computed from
 * exactly the files now in the folder, and write the publication record
 * (src/io/publishedRecord.ts) beside the data, atomically. A release is published
 * once; a blinded release is not published (its H0 carries a hidden offset).
 */
import { join } from 'node:path';
import { writeFileAtomic } from '../io/atomicWrite.ts';
import { serializeResults } from '../io/results.ts';
import { InputError, type InputIssue } from '../types/issues.ts';
import type { Results } from '../types/results.ts';
import { fileChecksums, PUBLISHED_FILE, PUBLISHED_SCHEMA, readPublishedRecord, type PublishedRecord } from '../io/publishedRecord.ts';

export interface PublishOptions {
  /** YYYY-MM-DD. */
  date: string;
  by: string | null;
  calibrate: (dir: string) => Promise<Results>;
}

/** The record as written: two-space JSON with a newline at the end. */
export function serializeRecord(record: PublishedRecord): string {
  serializeResults(record.results); // refuses non-finite numbers, so a record never holds NaN
  return `${JSON.stringify(record, null, 2)}\n`;
}

/** Calibrate and publish the release in `dir`; returns the record written to `<dir>/published.json`. */
export async function publishRelease(dir: string, o: PublishOptions): Promise<PublishedRecord> {
  const existing = readPublishedRecord(dir);
  if (existing !== null) {
    const on = 'record' in existing ? ` on ${existing.record.published_on}` : '';
    throw new InputError([
      {
        code: 'already-published',
        file: join(dir, PUBLISHED_FILE),
        message: `the release was already published${on}; a published release is frozen`,
        expected: 'a release folder without published.json',
        found: 'a publication record',
        hint: 'put new data or a new analysis in a new release folder and publish that',
      },
    ]);
  }
  const before = fileChecksums(dir);
  const results = await o.calibrate(dir);
  if (results.blinded) {
    throw new InputError([
      {
        code: 'blinded-not-publishable',
        file: join(dir, 'release.yaml'),
        column: 'blinded',
        message: 'a blinded release cannot be published: its H0 carries a hidden offset',
        expected: 'an unblinded release',
        found: 'blinded: true',
        hint: 'unblind the release first (rungbook unblind), then publish it',
      },
    ]);
  }
  // The results must come from the files being recorded: every file the calibration read
  // has the checksum recorded here, and nothing changed while it ran.
  const after = fileChecksums(dir);
  const issues: InputIssue[] = [];
  const recorded = new Map(after.map((f) => [f.file, f.sha256]));
  for (const f of before) {
    if (recorded.get(f.file) !== f.sha256)
      issues.push({
        code: 'changed-while-publishing',
        file: join(dir, f.file),
        message: 'the file changed while the release was being published',
        hint: 'publish again when nothing is writing to the folder',
      });
  }
  for (const input of results.provenance.inputs) {
    if (recorded.get(input.file) !== input.sha256) {
      issues.push({
        code: 'changed-while-publishing',
        file: join(dir, input.file),
        message: 'the file the calibration read differs from the file in the folder',
        hint: 'publish again when nothing is writing to the folder',
      });
    }
  }
  if (issues.length > 0) throw new InputError(issues);
  const record: PublishedRecord = {
    schema: PUBLISHED_SCHEMA,
    release: results.release.id,
    published_on: o.date,
    published_by: o.by,
    code_version: results.provenance.code_version,
    files: after,
    results,
  };
  writeFileAtomic(join(dir, PUBLISHED_FILE), serializeRecord(record));
  return record;
}
