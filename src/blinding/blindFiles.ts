/**
 * Blind a release given as its files (name -> content): subtract the hidden offset from
 * every m_b of the Hubble-flow table, set `blinded: true` in release.yaml and add
 * blinding.json. Pure: the same files, key, blinding id and date give the same bytes,
 * which is what lets the demo generator reproduce a committed blinded release.
 *
 * Exactness: each m_b is shifted as an exact decimal and written with
 * max(its own decimals, 4) decimals, so adding the offset back gives the original
 * number exactly (src/blinding/decimal.ts). The offset itself is never returned.
 */
import { parse as parseYaml } from 'yaml';
import { BLINDING_FILE, classifyFolder, MANIFEST_FILE } from '../io/folder.ts';
import { addDecimal, formatDecimal, rescale, sameDecimal, survivesDouble } from './decimal.ts';
import { BlindingError } from './errors.ts';
import { setBlindedTrue } from './manifestText.ts';
import { BLINDING_SCHEMA, currentScheme, isIsoDate, serializeBlindingRecord, type BlindingRecord } from './record.ts';
import { BLINDING_ID_PATTERN, commitment, deriveOffsetUnits, deriveSalt, keyCheck, MIN_KEY_BYTES, OFFSET_DECIMALS, offsetDecimal } from './scheme.ts';
import { rewriteColumn, TableTextError, type DelimitedFormat } from './tableText.ts';

export type FileContent = string | Uint8Array;

export interface BlindOptions {
  /** Public name of the blinding; with the key it fixes the offset. */
  blindingId: string;
  /** Date of blinding, YYYY-MM-DD (kept in blinding.json only, never in results.json). */
  date: string;
}

export interface BlindedFiles {
  /** Every input file, with release.yaml and the Hubble-flow table replaced and blinding.json added. */
  files: Record<string, FileContent>;
  record: BlindingRecord;
  /** File name of the table that now carries the offset. */
  tableFile: string;
}

export const HUBBLE_FLOW_COLUMN = 'm_b';

const utf8 = new TextDecoder('utf-8', { fatal: true, ignoreBOM: true });

function asText(name: string, content: FileContent): string {
  if (typeof content === 'string') return content;
  try {
    return utf8.decode(content);
  } catch {
    throw new BlindingError(`${name} is not valid UTF-8 text`);
  }
}

export function checkBlindingInputs(key: Uint8Array, options: BlindOptions): void {
  if (key.length < MIN_KEY_BYTES) {
    throw new BlindingError(
      `the blinding key is too short (${key.length} bytes; at least ${MIN_KEY_BYTES})`,
      'make one with, for example, `openssl rand -hex 32`',
    );
  }
  if (!BLINDING_ID_PATTERN.test(options.blindingId)) {
    throw new BlindingError(
      `blinding id ${JSON.stringify(options.blindingId)} is not valid`,
      'use 1-64 letters, digits, ".", "_" or "-", starting with a letter or digit',
    );
  }
  if (!isIsoDate(options.date)) throw new BlindingError(`date ${JSON.stringify(options.date)} is not a date YYYY-MM-DD`);
}

/** Blind the files of one release. Throws BlindingError when the release cannot be blinded. */
export function blindReleaseFiles(files: Record<string, FileContent>, key: Uint8Array, options: BlindOptions): BlindedFiles {
  checkBlindingInputs(key, options);
  if (files[BLINDING_FILE] !== undefined) throw new BlindingError('the release already has a blinding.json: it was blinded before');
  const manifest = files[MANIFEST_FILE];
  if (manifest === undefined) throw new BlindingError('the release has no release.yaml');
  const manifestText = asText(MANIFEST_FILE, manifest);
  let parsed: unknown;
  try {
    parsed = parseYaml(manifestText);
  } catch (e) {
    throw new BlindingError(`release.yaml cannot be read: ${(e as Error).message}`);
  }
  if ((parsed as { blinded?: unknown } | null)?.blinded === true) {
    throw new BlindingError(
      'release.yaml already says "blinded: true" but the release has no blinding.json',
      'rungbook blinds only releases that are not blinded yet',
    );
  }

  const layout = classifyFolder(Object.keys(files));
  const ref = layout.tables.sn_hubble_flow;
  if (!ref) throw new BlindingError('the release has no Hubble-flow table (sn_hubble_flow): there is no H0 to hide');
  if (ref.format === 'votable') {
    throw new BlindingError(
      `${ref.fileName} is a VOTable; blinding edits the table text cell by cell and supports ECSV and CSV`,
      'convert the table to sn_hubble_flow.ecsv first',
    );
  }
  const tableText = asText(ref.fileName, files[ref.fileName]!);

  const units = deriveOffsetUnits(key, options.blindingId);
  const minus = offsetDecimal(-units);
  const plus = offsetDecimal(units);
  let rewritten: ReturnType<typeof rewriteColumn>;
  try {
    rewritten = rewriteColumn(tableText, ref.format as DelimitedFormat, HUBBLE_FLOW_COLUMN, (value, line) => {
      const scale = Math.max(value.scale, OFFSET_DECIMALS);
      const blinded = rescale(addDecimal(value, minus), scale);
      if (!survivesDouble(blinded) || !sameDecimal(addDecimal(blinded, plus), value)) {
        throw new BlindingError(
          `${ref.fileName}:${line}: m_b has more significant digits than a double keeps, so unblinding could not restore it exactly`,
          'write m_b with at most 15 significant digits',
        );
      }
      return formatDecimal(blinded);
    });
  } catch (e) {
    if (e instanceof TableTextError) throw new BlindingError(`${ref.fileName}${e.line ? `:${e.line}` : ''}: ${e.message}`);
    throw e;
  }
  if (rewritten.cells.length === 0) throw new BlindingError(`${ref.fileName} has no rows: there is nothing to blind`);

  const record: BlindingRecord = {
    schema: BLINDING_SCHEMA,
    blinding_id: options.blindingId,
    table: ref.fileName,
    column: 'm_b',
    rows: rewritten.cells.length,
    scheme: currentScheme(),
    key_check: keyCheck(key),
    commitment: commitment(deriveSalt(key, options.blindingId), units),
    blinded_on: options.date,
    unblinded: null,
  };
  return {
    files: {
      ...files,
      [MANIFEST_FILE]: setBlindedTrue(manifestText),
      [ref.fileName]: rewritten.text,
      [BLINDING_FILE]: serializeBlindingRecord(record),
    },
    record,
    tableFile: ref.fileName,
  };
}
