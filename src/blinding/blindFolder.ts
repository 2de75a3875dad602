/**
 * `rungbook blind` on a folder: read the release, blind its files (blindFiles.ts), write
 * the blinded release into a temporary folder beside the destination, read it back and
 * check it against the original, then move it into place with renames. A reader never
 * sees a half-written release, and on any failure nothing changes.
 *
 * Destination: with `out`, a new folder (named as the release id, not existing yet); the
 * source is left as it is. Without `out`, the release folder itself, allowed only while
 * no file of it is tracked by Git: a committed release has its true magnitudes in the
 * history, so blinding it would hide nothing.
 */
import { execFileSync } from 'node:child_process';
import { mkdirSync, mkdtempSync, readdirSync, readFileSync, renameSync, rmSync, statSync, writeFileSync } from 'node:fs';
import { basename, dirname, join, resolve } from 'node:path';
import { isDeepStrictEqual } from 'node:util';
import { BLINDING_FILE } from '../io/folder.ts';
import { loadRelease } from '../io/release.ts';
import type { Release } from '../types/release.ts';
import { restoreHubbleFlowMagnitudes } from './apply.ts';
import { blindReleaseFiles, type BlindOptions, type FileContent } from './blindFiles.ts';
import { BlindingError } from './errors.ts';
import { parseBlindingRecord, type BlindingRecord } from './record.ts';
import { deriveOffsetUnits, keyCheck } from './scheme.ts';

export interface BlindFolderOptions extends BlindOptions {
  /** Write the blinded release here instead of replacing the folder. */
  out?: string;
}

export interface BlindFolderResult {
  dir: string;
  record: BlindingRecord;
  /** Things the user should know (files left out, a source tracked by Git). */
  notes: string[];
}

/** The regular files of a release folder (not hidden ones), as bytes; other entries are listed. */
export function readFolderFiles(dir: string): { files: Record<string, Buffer>; skipped: string[] } {
  const files: Record<string, Buffer> = {};
  const skipped: string[] = [];
  for (const entry of readdirSync(dir, { withFileTypes: true })) {
    const path = join(dir, entry.name);
    if (entry.name.startsWith('.')) skipped.push(entry.name);
    else if (statSync(path).isFile()) files[entry.name] = readFileSync(path);
    else skipped.push(entry.name);
  }
  return { files, skipped };
}

/** Files of `dir` that Git tracks; null when Git cannot tell (no Git, not a work tree). */
export function gitTrackedFiles(dir: string): string[] | null {
  try {
    const out = execFileSync('git', ['-C', dir, 'ls-files', '--', '.'], { stdio: ['ignore', 'pipe', 'ignore'], encoding: 'utf8' });
    return out.split('\n').filter((l) => l !== '');
  } catch {
    return null;
  }
}

/**
 * A release beside the destination that was unblinded with the same key and blinding id
 * has made this offset public: blinding with it again would hide nothing.
 */
function revealedBy(parent: string, key: Uint8Array, blindingId: string): string | null {
  const check = keyCheck(key);
  let entries: string[];
  try {
    entries = readdirSync(parent);
  } catch {
    return null;
  }
  for (const name of entries.sort()) {
    const path = join(parent, name, BLINDING_FILE);
    if (!statSync(path, { throwIfNoEntry: false })?.isFile()) continue;
    let r: BlindingRecord;
    try {
      r = parseBlindingRecord(readFileSync(path, 'utf8'), path);
    } catch {
      continue;
    }
    if (r.unblinded && r.blinding_id === blindingId && r.key_check === check) return name;
  }
  return null;
}

/** The blinded release must read back as the original with only m_b shifted by the offset. */
function verifyBlinded(original: Release, blinded: Release, units: number): void {
  const same = (what: string, a: unknown, b: unknown): void => {
    if (!isDeepStrictEqual(a, b))
      throw new BlindingError(`internal check failed: the blinded release differs from the original in ${what}; nothing was written`);
  };
  same('release.yaml', { ...original.manifest, blinded: true }, blinded.manifest);
  same('the analysis choices', [original.analysis, original.analysisKeysSet, original.variants], [blinded.analysis, blinded.analysisKeysSet, blinded.variants]);
  same(
    'the tables',
    [original.systems, original.parallax, original.mainSequence, original.cepheids, original.snCalibrators, original.absentTables, original.notes],
    [blinded.systems, blinded.parallax, blinded.mainSequence, blinded.cepheids, blinded.snCalibrators, blinded.absentTables, blinded.notes],
  );
  same('the Hubble-flow table (after adding the offset back)', original.snHubbleFlow, restoreHubbleFlowMagnitudes(blinded.snHubbleFlow, units));
  const unchanged = (r: Release) => r.inputs.filter((i) => i.table !== 'release' && i.table !== 'sn_hubble_flow');
  same('the input files', unchanged(original), unchanged(blinded));
}

export function blindReleaseFolder(sourceDir: string, key: Uint8Array, options: BlindFolderOptions): BlindFolderResult {
  const source = resolve(sourceDir);
  const original = loadRelease(source);
  const notes: string[] = [];
  if (original.manifest.blinded) throw new BlindingError('release.yaml already says "blinded: true"', 'rungbook blinds only releases that are not blinded yet');
  if (statSync(join(source, BLINDING_FILE), { throwIfNoEntry: false }))
    throw new BlindingError('the release already has a blinding.json: it was blinded before');

  const dest = options.out === undefined ? source : resolve(options.out);
  const tracked = gitTrackedFiles(source);
  if (options.out === undefined) {
    if (tracked && tracked.length > 0) {
      throw new BlindingError(
        `the release is already committed (Git tracks ${tracked.length} of its files): its true magnitudes are in the history, so blinding it in place would hide nothing`,
        'blind a release before its first commit, or blind a private copy into a new folder with --out',
      );
    }
  } else {
    if (statSync(dest, { throwIfNoEntry: false })) throw new BlindingError(`--out ${options.out} already exists; give a new folder`);
    if (basename(dest) !== original.manifest.id) {
      throw new BlindingError(`--out folder must be named as the release id "${original.manifest.id}" (found "${basename(dest)}")`);
    }
    if (tracked && tracked.length > 0)
      notes.push(`the source folder is tracked by Git: its true magnitudes are in the repository history, which defeats the blinding`);
  }
  const parent = dirname(dest);
  const revealed = revealedBy(parent, key, options.blindingId);
  if (revealed) {
    throw new BlindingError(
      `release ${revealed} was unblinded with this key and blinding id "${options.blindingId}": its offset is public, so blinding with it would hide nothing`,
      'choose a new blinding id with --id',
    );
  }

  const { files, skipped } = readFolderFiles(source);
  if (skipped.length) notes.push(`left out (not regular files of the release): ${skipped.join(', ')}`);
  const blinded = blindReleaseFiles(files as Record<string, FileContent>, key, options);

  mkdirSync(parent, { recursive: true });
  const tmp = mkdtempSync(join(parent, '.rungbook-blind-'));
  const staged = join(tmp, basename(dest));
  try {
    mkdirSync(staged);
    for (const [name, content] of Object.entries(blinded.files)) writeFileSync(join(staged, name), content);
    verifyBlinded(original, loadRelease(staged), deriveOffsetUnits(key, options.blindingId));
    if (options.out === undefined) {
      const previous = join(tmp, '.original');
      renameSync(dest, previous);
      try {
        renameSync(staged, dest);
      } catch (e) {
        renameSync(previous, dest);
        throw e;
      }
    } else renameSync(staged, dest);
  } finally {
    rmSync(tmp, { recursive: true, force: true });
  }
  return { dir: dest, record: blinded.record, notes };
}
