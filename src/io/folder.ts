/**
 * Which file of a release folder is which: the manifest, the notes, one file
 * per table (by name and extension), and names that look like a misspelt table
 * or manifest name, which are errors (a silently ignored table would change a
 * result). Pure: works on the list of file names.
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

export interface FolderLayout {
  tables: Partial<Record<TableName, TableFileRef>>;
  hasManifest: boolean;
  hasNotes: boolean;
  /** Problems, each with the file name it is about. */
  problems: { fileName: string; problem: Problem }[];
}

const EXT_FORMAT = new Map(TABLE_EXTENSIONS.map((e) => [e.ext, e.format]));
const EXT_LIST = TABLE_EXTENSIONS.map((e) => '.' + e.ext).join(', ');

function nearestTable(stem: string): { table: TableName; distance: number } | undefined {
  let best: { table: TableName; distance: number } | undefined;
  for (const t of TABLE_NAMES) {
    const distance = editDistance(stem, t);
    if (!best || distance < best.distance) best = { table: t, distance };
  }
  return best && best.distance <= MISSPELLING_DISTANCE ? best : undefined;
}

export function classifyFolder(fileNames: readonly string[]): FolderLayout {
  const layout: FolderLayout = { tables: {}, hasManifest: false, hasNotes: false, problems: [] };
  const sorted = [...fileNames].sort();
  for (const name of sorted) {
    if (name.startsWith('.')) continue;
    if (name === MANIFEST_FILE) {
      layout.hasManifest = true;
      continue;
    }
    if (name === NOTES_FILE) {
      layout.hasNotes = true;
      continue;
    }
    if (name === BLINDING_FILE) continue;
    const dot = name.indexOf('.');
    const stem = dot < 0 ? name : name.slice(0, dot);
    const ext = dot < 0 ? '' : name.slice(dot + 1);
    const format = EXT_FORMAT.get(ext);
    if ((TABLE_NAMES as readonly string[]).includes(stem) && format) {
      const table = stem as TableName;
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
      continue;
    }
    const stemN = stem.toLowerCase().replace(/[-\s]/g, '_');
    const extN = ext.toLowerCase();
    const near = nearestTable(stemN);
    if (near && EXT_FORMAT.has(extN)) {
      const right = `${near.table}.${extN}`;
      layout.problems.push({
        fileName: name,
        problem: {
          code: 'misspelt-file-name',
          message: 'the file name looks like a misspelt table name, so the table would be ignored',
          expected: `a table name (${TABLE_NAMES.join(', ')})`,
          found: JSON.stringify(name),
          hint: `did you mean "${right}"?`,
        },
      });
    } else if (near && near.distance === 0) {
      layout.problems.push({
        fileName: name,
        problem: {
          code: 'unsupported-table-format',
          message: `the file has the name of the table "${near.table}" but a format that is not read`,
          expected: `${near.table} with extension ${EXT_LIST}`,
          found: JSON.stringify(name),
          hint: `convert it to ${near.table}.ecsv`,
        },
      });
    } else if ((extN === 'yaml' || extN === 'yml') && editDistance(stemN, 'release') <= MISSPELLING_DISTANCE) {
      layout.problems.push({
        fileName: name,
        problem: {
          code: 'misspelt-file-name',
          message: 'the file name looks like a misspelt manifest name',
          expected: JSON.stringify(MANIFEST_FILE),
          found: JSON.stringify(name),
          hint: `did you mean "${MANIFEST_FILE}"?`,
        },
      });
    }
  }
  return layout;
}
