/**
 * The publication record of a release: `<release>/published.json`, written once
 * by `rungbook publish` and never by hand. It freezes what the collaboration
 * circulated: the full results.json as published, the code version that made
 * them, who published and when, and the SHA-256 of every file of the folder.
 *
 *   {
 *     "schema": "rungbook.published/1",
 *     "release": "2026.1",
 *     "published_on": "2026-03-01",
 *     "published_by": "A. Person" | null,
 *     "code_version": "0.1.0+0123456789ab",
 *     "files": [{ "file": "cepheids.ecsv", "bytes": 51234, "sha256": "…" }, …],
 *     "results": { …results.json as published… }
 *   }
 *
 * A published folder is frozen: every command that reads it (check, calibrate,
 * build, and whatever else loads a release) first compares the folder with the
 * recorded checksums and refuses a changed, missing or added file, naming it.
 * Only contents are compared (never times). Hidden files (".git…", editor
 * swap files) and published.json itself are not part of the record.
 */
import { readdirSync, readFileSync, statSync } from 'node:fs';
import { join } from 'node:path';
import type { InputIssue } from '../types/issues.ts';
import type { Results } from '../types/results.ts';
import { isIgnoredName } from './folder.ts';
import { sha256Hex } from './text.ts';

export const PUBLISHED_FILE = 'published.json';
export const PUBLISHED_SCHEMA = 'rungbook.published/1';

export interface RecordedFile {
  file: string;
  bytes: number;
  sha256: string;
}

export interface PublishedRecord {
  schema: typeof PUBLISHED_SCHEMA;
  release: string;
  /** YYYY-MM-DD. */
  published_on: string;
  published_by: string | null;
  /** Version of the code that computed `results` (results.provenance.code_version). */
  code_version: string;
  files: RecordedFile[];
  results: Results;
}

/**
 * The files a publication records: regular files directly in the folder, except the record itself and the
 * hidden files and editor backups that no reader reads (src/io/folder.ts); sorted.
 */
export function recordedFileNames(dir: string): string[] {
  return readdirSync(dir, { withFileTypes: true })
    .filter((d) => !isIgnoredName(d.name) && d.name !== PUBLISHED_FILE)
    .filter((d) => d.isFile() || (d.isSymbolicLink() && statSync(join(dir, d.name), { throwIfNoEntry: false })?.isFile()))
    .map((d) => d.name)
    .sort();
}

/** Size and SHA-256 of every recorded file of the folder. Cost: one read of each file. */
export function fileChecksums(dir: string): RecordedFile[] {
  return recordedFileNames(dir).map((file) => {
    const bytes = readFileSync(join(dir, file));
    return { file, bytes: bytes.length, sha256: sha256Hex(bytes) };
  });
}

export function hasPublishedRecord(dir: string): boolean {
  return statSync(join(dir, PUBLISHED_FILE), { throwIfNoEntry: false })?.isFile() === true;
}

const DATE = /^\d{4}-\d{2}-\d{2}$/;
const SHA256 = /^[0-9a-f]{64}$/;

/** Why a parsed value is not a publication record, or null when it is one. */
function recordProblem(x: unknown): string | null {
  if (x === null || typeof x !== 'object' || Array.isArray(x)) return 'it is not a JSON object';
  const r = x as Record<string, unknown>;
  if (r.schema !== PUBLISHED_SCHEMA) return `its schema is ${JSON.stringify(r.schema)}, expected "${PUBLISHED_SCHEMA}"`;
  if (typeof r.release !== 'string') return '"release" is not a string';
  if (typeof r.published_on !== 'string' || !DATE.test(r.published_on)) return '"published_on" is not a YYYY-MM-DD date';
  if (r.published_by !== null && typeof r.published_by !== 'string') return '"published_by" is neither a string nor null';
  if (typeof r.code_version !== 'string') return '"code_version" is not a string';
  if (!Array.isArray(r.files)) return '"files" is not a list';
  for (const [i, f] of (r.files as unknown[]).entries()) {
    const e = f as Record<string, unknown> | null;
    if (!e || typeof e.file !== 'string' || typeof e.bytes !== 'number' || typeof e.sha256 !== 'string' || !SHA256.test(e.sha256)) {
      return `files[${i}] is not { file, bytes, sha256 }`;
    }
  }
  const res = r.results as Record<string, unknown> | null;
  if (!res || typeof res !== 'object' || typeof res.schema !== 'string' || !res.schema.startsWith('rungbook.results/'))
    return '"results" is not a results.json object';
  return null;
}

/**
 * The publication record of the release in `dir`: null when the release is not
 * published, the record, or the issue that makes it unreadable (naming published.json).
 */
export function readPublishedRecord(dir: string): { record: PublishedRecord } | { issue: InputIssue } | null {
  if (!hasPublishedRecord(dir)) return null;
  const file = join(dir, PUBLISHED_FILE);
  const bad = (found: string): { issue: InputIssue } => ({
    issue: {
      code: 'bad-published-record',
      file,
      message: 'the publication record cannot be read',
      expected: `a record written by \`rungbook publish\` (schema ${PUBLISHED_SCHEMA})`,
      found,
      hint: 'published.json is written by `rungbook publish` and never edited; restore it from version control',
    },
  });
  let parsed: unknown;
  try {
    parsed = JSON.parse(readFileSync(file, 'utf8'));
  } catch (e) {
    return bad(`text that is not JSON (${(e as Error).message})`);
  }
  const problem = recordProblem(parsed);
  return problem === null ? { record: parsed as PublishedRecord } : bad(problem);
}

const short = (sha: string): string => `${sha.slice(0, 16)}…`;

/**
 * Compare a published folder with its record. Returns one issue per changed,
 * missing or added file (and one for an unreadable record); none when the
 * folder is not published or unchanged. Cost: one read of each file.
 */
export function verifyPublishedFolder(dir: string): InputIssue[] {
  const read = readPublishedRecord(dir);
  if (read === null) return [];
  if ('issue' in read) return [read.issue];
  const { record } = read;
  const when = `published on ${record.published_on}`;
  const hint = 'a published release is frozen: restore the file as published (for example from version control), or put new data in a new release folder';
  const now = new Map(fileChecksums(dir).map((f) => [f.file, f]));
  const issues: InputIssue[] = [];
  for (const f of record.files) {
    const current = now.get(f.file);
    if (!current) {
      issues.push({
        code: 'published-file-missing',
        file: join(dir, f.file),
        message: `the release was ${when} with this file, which is now missing`,
        expected: `the file as published (sha256 ${short(f.sha256)})`,
        found: 'no such file',
        hint,
      });
    } else if (current.sha256 !== f.sha256) {
      issues.push({
        code: 'published-file-changed',
        file: join(dir, f.file),
        message: `the release was ${when} and this file has changed since`,
        expected: `sha256 ${short(f.sha256)} (${f.bytes} bytes) as recorded in ${PUBLISHED_FILE}`,
        found: `sha256 ${short(current.sha256)} (${current.bytes} bytes)`,
        hint,
      });
    }
  }
  const recorded = new Set(record.files.map((f) => f.file));
  for (const name of now.keys()) {
    if (!recorded.has(name)) {
      issues.push({
        code: 'published-file-added',
        file: join(dir, name),
        message: `the file was added after the release was ${when}`,
        expected: `only the files recorded in ${PUBLISHED_FILE}`,
        found: 'a new file',
        hint,
      });
    }
  }
  return issues;
}
