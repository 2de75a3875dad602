/**
 * blinding.json: the record the blinding command writes beside release.yaml, and the
 * unblinding command completes. Schema "rungbook.blinding/1".
 *
 * While blinded it holds only public things: the blinding id, the scheme, a check value
 * of the key and the salted commitment of the offset. Never the key, the salt or the
 * offset. Unblinding adds who, when, the offset and the salt, so that anyone can then
 * recompute the commitment and see that the offset applied is the one fixed at blinding.
 */
import { readFileSync, statSync } from 'node:fs';
import { join } from 'node:path';
import { BLINDING_FILE } from '../io/folder.ts';
import { InputError, type InputIssue } from '../types/issues.ts';
import {
  BLINDING_ID_PATTERN,
  OFFSET_MAX_ABS_UNITS,
  OFFSET_MIN_ABS_UNITS,
  OFFSET_STEP_MAG,
  SCHEME_DESCRIPTION,
  LEGACY_V1,
  deriveOffsetUnits,
  deriveOffsetUnitsV1,
} from './scheme.ts';

export const BLINDING_SCHEMA = 'rungbook.blinding/1';

export interface BlindingScheme {
  description: string;
  offset_step_mag: number;
  offset_min_abs_mag: number;
  offset_max_abs_mag: number;
}

export interface UnblindingEntry {
  /** Who unblinded (as given to `rungbook unblind --by`). */
  by: string;
  /** YYYY-MM-DD. */
  date: string;
  /** The offset that was subtracted from every Hubble-flow m_b, mag (a multiple of 0.0001). */
  offset_mag: number;
  /** The salt of the commitment, hex, revealed so that anyone can check the commitment. */
  salt: string;
}

export interface BlindingRecord {
  schema: typeof BLINDING_SCHEMA;
  /** Public name of the blinding: with the key it fixes the offset. */
  blinding_id: string;
  /** The table and column that carry the offset. */
  table: string;
  column: 'm_b';
  /** Rows of the table that carry the offset (all of them). */
  rows: number;
  scheme: BlindingScheme;
  /** HMAC of a fixed text with the key: tells a wrong key from an altered record. */
  key_check: string;
  /** SHA-256(salt || offset text), hex. */
  commitment: string;
  /** YYYY-MM-DD. */
  blinded_on: string;
  unblinded: UnblindingEntry | null;
}

/** What identifies a blinding without revealing it (also carried in results.json). */
export interface BlindingRef {
  blinding_id: string;
  key_check: string;
  commitment: string;
}

export function currentScheme(): BlindingScheme {
  return {
    description: SCHEME_DESCRIPTION,
    offset_step_mag: OFFSET_STEP_MAG,
    offset_min_abs_mag: OFFSET_MIN_ABS_UNITS * OFFSET_STEP_MAG,
    offset_max_abs_mag: OFFSET_MAX_ABS_UNITS * OFFSET_STEP_MAG,
  };
}

/** The first scheme, still read and unblinded (src/blinding/scheme.ts LEGACY_V1). */
export function legacySchemeV1(): BlindingScheme {
  return {
    description: LEGACY_V1.description,
    offset_step_mag: OFFSET_STEP_MAG,
    offset_min_abs_mag: LEGACY_V1.offsetMinAbsUnits * OFFSET_STEP_MAG,
    offset_max_abs_mag: OFFSET_MAX_ABS_UNITS * OFFSET_STEP_MAG,
  };
}

/** The offset in units of 0.0001 mag that the record's scheme derives from the key. */
export function recordOffsetUnits(record: BlindingRecord, key: Uint8Array): number {
  return record.scheme.description === LEGACY_V1.description ? deriveOffsetUnitsV1(key, record.blinding_id) : deriveOffsetUnits(key, record.blinding_id);
}

/** blinding.json text: fixed key order, two-space indentation, final newline. */
export function serializeBlindingRecord(r: BlindingRecord): string {
  const ordered: BlindingRecord = {
    schema: r.schema,
    blinding_id: r.blinding_id,
    table: r.table,
    column: r.column,
    rows: r.rows,
    scheme: {
      description: r.scheme.description,
      offset_step_mag: r.scheme.offset_step_mag,
      offset_min_abs_mag: r.scheme.offset_min_abs_mag,
      offset_max_abs_mag: r.scheme.offset_max_abs_mag,
    },
    key_check: r.key_check,
    commitment: r.commitment,
    blinded_on: r.blinded_on,
    unblinded: r.unblinded ? { by: r.unblinded.by, date: r.unblinded.date, offset_mag: r.unblinded.offset_mag, salt: r.unblinded.salt } : null,
  };
  return JSON.stringify(ordered, null, 2) + '\n';
}

const HEX64 = /^[0-9a-f]{64}$/;
const DATE = /^\d{4}-\d{2}-\d{2}$/;

/** A real calendar date written YYYY-MM-DD. */
export function isIsoDate(s: string): boolean {
  if (!DATE.test(s)) return false;
  const d = new Date(`${s}T00:00:00Z`);
  return !Number.isNaN(d.getTime()) && d.toISOString().slice(0, 10) === s;
}

/** The text as one JSON object, or an InputError naming the file. */
function recordObject(text: string, file: string): Record<string, unknown> {
  let data: unknown;
  try {
    data = JSON.parse(text.replace(/^\uFEFF/, ''));
  } catch (e) {
    throw new InputError([
      {
        code: 'bad-json',
        file,
        message: `not valid JSON (${(e as Error).message})`,
        expected: 'the record written by rungbook blind',
        found: 'unreadable text',
        hint: 'blinding.json is written by the tool, never by hand',
      },
    ]);
  }
  if (!data || typeof data !== 'object' || Array.isArray(data)) {
    throw new InputError([
      { code: 'bad-blinding-record', file, message: 'blinding.json must hold one JSON object', expected: 'an object', found: typeof data },
    ]);
  }
  return data as Record<string, unknown>;
}

/** The `unblinded` entry: null, or {by, date, offset_mag, salt} checked field by field (each problem through `bad`). */
function readUnblinded(o: Record<string, unknown>, bad: (field: string, expected: string, found: unknown) => void): UnblindingEntry | null {
  let unblinded: UnblindingEntry | null = null;
  if (o.unblinded !== null) {
    const u = o.unblinded as Record<string, unknown> | undefined;
    if (!u || typeof u !== 'object' || Array.isArray(u)) bad('unblinded', 'null or {by, date, offset_mag, salt}', o.unblinded);
    else {
      if (typeof u.by !== 'string' || u.by.trim() === '') bad('unblinded.by', 'a name', u.by);
      if (typeof u.date !== 'string' || !isIsoDate(u.date)) bad('unblinded.date', 'a date YYYY-MM-DD', u.date);
      else if (typeof o.blinded_on === 'string' && u.date < o.blinded_on) bad('unblinded.date', `a date not before blinded_on (${o.blinded_on})`, u.date);
      if (typeof u.offset_mag !== 'number' || !Number.isFinite(u.offset_mag)) bad('unblinded.offset_mag', 'a number', u.offset_mag);
      if (typeof u.salt !== 'string' || !HEX64.test(u.salt)) bad('unblinded.salt', '64 lower-case hex digits', u.salt);
      const extra = Object.keys(u).filter((k) => !['by', 'date', 'offset_mag', 'salt'].includes(k));
      if (extra.length) bad('unblinded', 'only by, date, offset_mag, salt', extra.join(', '));
      unblinded = { by: u.by as string, date: u.date as string, offset_mag: u.offset_mag as number, salt: u.salt as string };
    }
  }
  return unblinded;
}

/**
 * Parse and check blinding.json. Throws InputError naming the file and the field.
 * `file` is the path shown in messages.
 */
export function parseBlindingRecord(text: string, file: string): BlindingRecord {
  const issues: InputIssue[] = [];
  const bad = (field: string, expected: string, found: unknown): void => {
    issues.push({
      code: 'bad-blinding-record',
      file,
      column: field,
      message: `blinding.json: ${field} is not valid`,
      expected,
      found: JSON.stringify(found) ?? String(found),
    });
  };
  const o = recordObject(text, file);
  const str = (k: string, test: (s: string) => boolean, expected: string): string => {
    const v = o[k];
    if (typeof v !== 'string' || !test(v)) bad(k, expected, v);
    return v as string;
  };
  if (o.schema !== BLINDING_SCHEMA) bad('schema', JSON.stringify(BLINDING_SCHEMA), o.schema);
  const blindingId = str('blinding_id', (s) => BLINDING_ID_PATTERN.test(s), 'a blinding id (letters, digits, . _ -)');
  const table = str('table', (s) => /^sn_hubble_flow\.(ecsv|csv)$/.test(s), 'sn_hubble_flow.ecsv or sn_hubble_flow.csv');
  if (o.column !== 'm_b') bad('column', '"m_b"', o.column);
  if (typeof o.rows !== 'number' || !Number.isSafeInteger(o.rows) || o.rows < 1) bad('rows', 'a positive whole number', o.rows);
  const s = o.scheme as Record<string, unknown> | undefined;
  // the current scheme, or the first one (LEGACY_V1) of releases blinded before zero was a possible offset
  const ours = [currentScheme(), legacySchemeV1()].find(
    (x) =>
      s &&
      typeof s === 'object' &&
      s.description === x.description &&
      s.offset_step_mag === x.offset_step_mag &&
      s.offset_min_abs_mag === x.offset_min_abs_mag &&
      s.offset_max_abs_mag === x.offset_max_abs_mag,
  );
  if (!ours) {
    bad('scheme', 'the scheme this rungbook implements (see src/blinding/scheme.ts)', s);
  }
  const keyCheck = str('key_check', (x) => HEX64.test(x), '64 lower-case hex digits');
  const commitment = str('commitment', (x) => HEX64.test(x), '64 lower-case hex digits');
  const blindedOn = str('blinded_on', isIsoDate, 'a date YYYY-MM-DD');
  const unblinded = readUnblinded(o, bad);
  const known = ['schema', 'blinding_id', 'table', 'column', 'rows', 'scheme', 'key_check', 'commitment', 'blinded_on', 'unblinded'];
  const extra = Object.keys(o).filter((k) => !known.includes(k));
  if (extra.length) bad(extra[0]!, `only the keys ${known.join(', ')}`, extra.join(', '));
  if (issues.length) throw new InputError(issues.map((i) => ({ ...i, hint: 'blinding.json is written by the tool, never by hand' })));
  return {
    schema: BLINDING_SCHEMA,
    blinding_id: blindingId,
    table,
    column: 'm_b',
    rows: o.rows as number,
    scheme: ours!,
    key_check: keyCheck,
    commitment,
    blinded_on: blindedOn,
    unblinded,
  };
}

/** blinding.json of the release in `dir`, or null when the folder has none. */
export function readBlindingRecord(dir: string): BlindingRecord | null {
  const path = join(dir, BLINDING_FILE);
  const stat = statSync(path, { throwIfNoEntry: false });
  if (!stat) return null;
  if (!stat.isFile()) {
    throw new InputError([
      { code: 'bad-blinding-record', file: path, message: 'blinding.json is not a file', expected: 'a file', found: 'a folder or other entry' },
    ]);
  }
  return parseBlindingRecord(readFileSync(path, 'utf8'), path);
}

export function blindingRefOf(r: BlindingRecord): BlindingRef {
  return { blinding_id: r.blinding_id, key_check: r.key_check, commitment: r.commitment };
}
