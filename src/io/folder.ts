/**
 * Which file of a release folder is which: the manifest, the notes, one file
 * per table (by name and extension), and names that look like a misspelt table
 * or manifest name, which are errors (a silently ignored table would change a
 * result). Pure: works on the list of entries (name and kind) of the folder.
 *
 * - Hidden files and editor backups (`.x`, `x~`, `x.bak`, `x.orig`, `x.swp`) are
 *   never read; they are listed as ignored, so a backup beside a table is not
 *   taken for a table in an unsupported format.
 * - A name the release reads (a table, release.yaml, notes.md) that is not a
 *   regular file (a folder, a symbolic link to nothing, a device) is an error
 *   naming it: skipping it would calibrate without it and say nothing.
 */
import { TABLE_NAMES, type TableName } from '../types/release.ts';
import type { Problem } from './issues.ts';
import { editDistance } from './suggest.ts';
import { TABLE_EXTENSIONS, type TableFormat } from './table.ts';

export const MANIFEST_FILE = 'release.yaml';
export const NOTES_FILE = 'notes.md';
/** Written by the blinding command and read by it; the readers leave it alone. */
export const BLINDING_FILE = 'blinding.json';

/** A stem within this many edits of a table name is taken as a misspelling of it. */
const MISSPELLING_DISTANCE = 2;

export interface TableFileRef {
  fileName: string;
  format: TableFormat;
}

/** What a folder entry is (symbolic links followed). */
export type EntryKind = 'file' | 'directory' | 'broken-link' | 'other';

export interface FolderEntry {
  name: string;
  kind: EntryKind;
}

export interface FolderLayout {
  tables: Partial<Record<TableName, TableFileRef>>;
  hasManifest: boolean;
  hasNotes: boolean;
  /** Hidden files and editor backups, never read (sorted). */
  ignored: string[];
  /** Names the release reads that exist but are not regular files (their problems are in `problems`). */
  notFiles: string[];
  /** Problems, each with the file name it is about. */
  problems: { fileName: string; problem: Problem }[];
}

/** Hidden files and the backups editors and merge tools leave beside a file. */
const IGNORED_NAME = /^\.|~$|\.(?:bak|orig|swp)$/i;

/** A name the readers never look at: a hidden file or an editor backup. */
export function isIgnoredName(name: string): boolean {
  return IGNORED_NAME.test(name);
}

const KIND_FOUND: Record<Exclude<EntryKind, 'file'>, string> = {
  directory: 'a folder',
  'broken-link': 'a symbolic link to nothing',
  other: 'a special file (device, pipe or socket)',
};

function notAFile(name: string, what: string, kind: Exclude<EntryKind, 'file'>, hint: string): { fileName: string; problem: Problem } {
  return {
    fileName: name,
    problem: { code: 'not-a-file', message: `${what} is not a regular file, so it cannot be read`, expected: 'a regular file', found: KIND_FOUND[kind], hint },
  };
}

const EXT_FORMAT = new Map(TABLE_EXTENSIONS.map((e) => [e.ext, e.format]));
const EXT_LIST = TABLE_EXTENSIONS.map((e) => '.' + e.ext).join(', ');

/** A name of a table file of the contract ("parallax.ecsv", "systems.vot"). */
function isTableFileName(name: string): boolean {
  const dot = name.indexOf('.');
  return dot > 0 && (TABLE_NAMES as readonly string[]).includes(name.slice(0, dot)) && EXT_FORMAT.has(name.slice(dot + 1));
}

function nearestTable(stem: string): { table: TableName; distance: number } | undefined {
  let best: { table: TableName; distance: number } | undefined;
  for (const t of TABLE_NAMES) {
    const distance = editDistance(stem, t);
    if (!best || distance < best.distance) best = { table: t, distance };
  }
  return best && best.distance <= MISSPELLING_DISTANCE ? best : undefined;
}

/** A table's file: recorded in the layout, or the problem of a second file for the table or of an entry that is no file. */
function addTableFile(layout: FolderLayout, name: string, kind: EntryKind, table: TableName, format: TableFormat): void {
  if (kind !== 'file') {
    layout.notFiles.push(name);
    layout.problems.push(
      notAFile(name, `the file of the table "${table}"`, kind, 'replace it with the table file, or remove it if the release does not provide this table'),
    );
    return;
  }
  const already = layout.tables[table];
  if (already) {
    layout.problems.push({
      fileName: name,
      problem: {
        code: 'duplicate-table',
        message: `the table "${table}" is given twice`,
        expected: `one file for "${table}"`,
        found: `${already.fileName} and ${name}`,
        hint: 'keep one format of each table',
      },
    });
  } else layout.tables[table] = { fileName: name, format };
}

/**
 * The problem of a file that is nearly one of the release's files: a misspelt table name, a
 * table in a format that is not read, a misspelt manifest name; null for any other file.
 */
function nearMissProblem(name: string, stem: string, ext: string): Problem | null {
  const stemN = stem.toLowerCase().replace(/[-\s]/g, '_');
  const extN = ext.toLowerCase();
  const near = nearestTable(stemN);
  if (near && EXT_FORMAT.has(extN)) {
    const right = `${near.table}.${extN}`;
    return {
      code: 'misspelt-file-name',
      message: 'the file name looks like a misspelt table name, so the table would be ignored',
      expected: `a table name (${TABLE_NAMES.join(', ')})`,
      found: JSON.stringify(name),
      hint: `did you mean "${right}"?`,
    };
  }
  if (near && near.distance === 0) {
    return {
      code: 'unsupported-table-format',
      message: `the file has the name of the table "${near.table}" but a format that is not read`,
      expected: `${near.table} with extension ${EXT_LIST}`,
      found: JSON.stringify(name),
      hint: `convert it to ${near.table}.ecsv`,
    };
  }
  if ((extN === 'yaml' || extN === 'yml') && editDistance(stemN, 'release') <= MISSPELLING_DISTANCE) {
    return {
      code: 'misspelt-file-name',
      message: 'the file name looks like a misspelt manifest name',
      expected: JSON.stringify(MANIFEST_FILE),
      found: JSON.stringify(name),
      hint: `did you mean "${MANIFEST_FILE}"?`,
    };
  }
  return null;
}

/** Entries of a folder (plain names count as regular files). */
export function classifyFolder(entries: readonly (string | FolderEntry)[]): FolderLayout {
  const layout: FolderLayout = { tables: {}, hasManifest: false, hasNotes: false, ignored: [], notFiles: [], problems: [] };
  const sorted = entries
    .map((e): FolderEntry => (typeof e === 'string' ? { name: e, kind: 'file' } : e))
    .sort((a, b) => (a.name < b.name ? -1 : a.name > b.name ? 1 : 0));
  for (const { name, kind } of sorted) {
    if (isIgnoredName(name)) {
      layout.ignored.push(name);
      continue;
    }
    if (name === MANIFEST_FILE) {
      if (kind === 'file') layout.hasManifest = true;
      else {
        layout.notFiles.push(name);
        layout.problems.push(notAFile(name, 'the manifest release.yaml', kind, 'replace it with the release.yaml file'));
      }
      continue;
    }
    if (name === NOTES_FILE) {
      if (kind === 'file') layout.hasNotes = true;
      else {
        layout.notFiles.push(name);
        layout.problems.push(notAFile(name, 'the release notes notes.md', kind, 'replace it with the notes file, or remove it if the release has no notes'));
      }
      continue;
    }
    // Any other entry that is not a regular file is none of the release's files: left alone, as before.
    if (name === BLINDING_FILE || (kind !== 'file' && !isTableFileName(name))) continue;
    const dot = name.indexOf('.');
    const stem = dot < 0 ? name : name.slice(0, dot);
    const ext = dot < 0 ? '' : name.slice(dot + 1);
    const format = EXT_FORMAT.get(ext);
    if ((TABLE_NAMES as readonly string[]).includes(stem) && format) {
      addTableFile(layout, name, kind, stem as TableName, format);
      continue;
    }
    const problem = nearMissProblem(name, stem, ext);
    if (problem) layout.problems.push({ fileName: name, problem });
  }
  return layout;
}
