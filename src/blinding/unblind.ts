/**
 * Unblinding: check a key against a release's blinding record and, if it is the key the
 * release was blinded with, record who unblinded, when, the offset and the salt. The
 * record is the only file that changes; the Hubble-flow table keeps its blinded values
 * and the calibration adds the recorded offset back (src/blinding/apply.ts).
 */
import { join } from 'node:path';
import { BLINDING_FILE } from '../io/folder.ts';
import { writeFileAtomic } from '../io/atomicWrite.ts';
import { loadRelease } from '../io/release.ts';
import { applyBlindingRecord } from './apply.ts';
import { BlindingError } from './errors.ts';
import { isIsoDate, readBlindingRecord, recordOffsetUnits, serializeBlindingRecord, type BlindingRecord } from './record.ts';
import { commitment, deriveSalt, keyCheck, offsetMag } from './scheme.ts';

export interface UnblindOptions {
  /** Who unblinds (a name, recorded as given). */
  by: string;
  /** YYYY-MM-DD. */
  date: string;
}

/**
 * The record completed with the unblinding, or BlindingError: already unblinded, a key
 * that is not the release's key, or a record whose commitment the key does not reproduce.
 */
export function unblindRecord(record: BlindingRecord, key: Uint8Array, options: UnblindOptions): BlindingRecord {
  const by = options.by.trim();
  if (by === '' || /[\r\n]/.test(by)) throw new BlindingError('--by must name who unblinds (one line of text)');
  if (!isIsoDate(options.date)) throw new BlindingError(`date ${JSON.stringify(options.date)} is not a date YYYY-MM-DD`);
  if (record.unblinded) {
    throw new BlindingError(
      `the release was already unblinded on ${record.unblinded.date} by ${record.unblinded.by}`,
      'unblinding is done once; the record stays as it is',
    );
  }
  if (keyCheck(key) !== record.key_check) {
    throw new BlindingError(
      'this key is not the key the release was blinded with (its check value differs from blinding.json); nothing was changed',
      'use the key file of the coordinator who blinded the release',
    );
  }
  const units = recordOffsetUnits(record, key);
  const salt = deriveSalt(key, record.blinding_id);
  if (commitment(salt, units) !== record.commitment) {
    throw new BlindingError(
      'the key matches but the commitment in blinding.json does not: the record was altered after blinding; nothing was changed',
      'restore blinding.json from the repository history',
    );
  }
  if (options.date < record.blinded_on) throw new BlindingError(`the unblinding date ${options.date} is before the blinding date ${record.blinded_on}`);
  return { ...record, unblinded: { by, date: options.date, offset_mag: offsetMag(units), salt: salt.toString('hex') } };
}

/**
 * Unblind the release in `dir`: only blinding.json is rewritten (atomically), and only
 * after the key was checked and the release read without problems.
 */
export function unblindReleaseDir(dir: string, key: Uint8Array, options: UnblindOptions): BlindingRecord {
  const release = loadRelease(dir);
  const record = readBlindingRecord(dir);
  if (!record) {
    throw new BlindingError(
      release.manifest.blinded
        ? 'release.yaml says "blinded: true" but there is no blinding.json: the release was not blinded by rungbook, so it cannot unblind it'
        : 'the release is not blinded (no blinding.json): there is nothing to unblind',
    );
  }
  applyBlindingRecord(release, record, join(dir, BLINDING_FILE));
  const done = unblindRecord(record, key, options);
  // The completed record must hold together before it is written.
  applyBlindingRecord(release, done, join(dir, BLINDING_FILE));
  writeFileAtomic(join(dir, BLINDING_FILE), serializeBlindingRecord(done));
  return done;
}
