/**
 * Load a data release folder into the typed, in-memory Release: the manifest
 * and analysis choices (release.yaml), every table present, the notes, and a
 * description of every input file. All problems of all files are collected and
 * thrown together as one InputError. The folder is only read, never written.
 */
import { readdirSync, readFileSync, statSync, type Dirent } from 'node:fs';
import { basename, join, resolve } from 'node:path';
import { InputError, type InputIssue } from '../types/issues.ts';
import { TABLE_NAMES, type InputFile, type Release, type TableName } from '../types/release.ts';
import { classifyFolder, MANIFEST_FILE, NOTES_FILE, type EntryKind, type FolderEntry } from './folder.ts';
import { finishFileIssues, newFileIssues, shown, type FileIssues, type Problem } from './issues.ts';
import { parseManifestBytes, readManifestFile, type ManifestRead } from './manifest.ts';
import { TABLE_SPECS, type TableRows } from '../registry/tables.ts';
import { nearest } from './suggest.ts';
import { parseTable, type TableRead } from './table.ts';
import { decodeUtf8, sha256Hex } from './text.ts';
import { verifyPublishedFolder } from './publishedRecord.ts';

/** Tables whose `system` column must name a row of `systems`. */
const REFERENCING_TABLES = TABLE_NAMES.filter((t) => TABLE_SPECS[t].systemRef !== undefined);

type Reads = { [T in TableName]?: TableRead<T> };

function entryKind(abs: string, d: Dirent): EntryKind {
  if (d.isSymbolicLink()) {
    let target;
    try {
      target = statSync(join(abs, d.name), { throwIfNoEntry: false });
    } catch {
      target = undefined; // a loop of links, or a link into a folder we may not enter
    }
    if (!target) return 'broken-link';
    return target.isFile() ? 'file' : target.isDirectory() ? 'directory' : 'other';
  }
  return d.isFile() ? 'file' : d.isDirectory() ? 'directory' : 'other';
}

/** Every entry of a release folder with what it is (symbolic links followed). */
export function releaseFolderEntries(dir: string): FolderEntry[] {
  const abs = resolve(dir);
  return readdirSync(abs, { withFileTypes: true }).map((d) => ({ name: d.name, kind: entryKind(abs, d) }));
}

/**
 * The bytes of a file, or the problem of a file that exists but cannot be read
 * (no read permission, an input/output error): named, never an internal error.
 */
function readBytes(path: string): { bytes: Uint8Array } | { problem: Problem } {
  try {
    return { bytes: readFileSync(path) };
  } catch (e) {
    const code = (e as NodeJS.ErrnoException).code ?? 'error';
    return {
      problem: {
        code: 'unreadable-file',
        message: 'the file cannot be read',
        expected: 'a file that the user running rungbook may read',
        found: `${code} (${(e as Error).message.replace(/^[A-Z]+: /, '').replace(/, open .*$/, '')})`,
        hint: code === 'EACCES' ? 'give read permission (chmod a+r)' : undefined,
      },
    };
  }
}

/**
 * Only release.yaml of the release in `dir` (for listing and ordering releases
 * without reading their tables). Throws InputError with its problems.
 */
export function readManifest(dir: string): Pick<Release, 'manifest' | 'analysis' | 'analysisKeysSet' | 'variants'> {
  const fileName = join(dir, MANIFEST_FILE);
  const path = join(resolve(dir), MANIFEST_FILE);
  if (!statSync(path, { throwIfNoEntry: false })?.isFile()) {
    throw new InputError([
      {
        code: 'missing-file',
        file: fileName,
        message: 'the release has no release.yaml',
        expected: 'release.yaml with id, title and date',
        found: 'no such file',
      },
    ]);
  }
  const read = readManifestFile(path, basename(resolve(dir)));
  const c = newFileIssues(fileName);
  c.problems.push(...read.problems);
  const { issues, omitted } = finishFileIssues(c);
  if (issues.length > 0 || !read.manifest) throw new InputError(issues, omitted);
  return { manifest: read.manifest, analysis: read.analysis, analysisKeysSet: read.analysisKeysSet, variants: read.variants };
}

type FolderLayout = ReturnType<typeof classifyFolder>;
type IssuesOf = (fileName: string) => Problem[];

/** Refuse a path that is not a folder. */
function requireFolder(dir: string, abs: string): void {
  const stat = statSync(abs, { throwIfNoEntry: false });
  if (!stat?.isDirectory()) {
    throw new InputError([
      {
        code: 'no-release-folder',
        file: dir,
        message: stat ? 'not a folder' : 'no such folder',
        expected: 'a release folder holding release.yaml and systems.ecsv',
        found: stat ? 'a file' : 'nothing',
      },
    ]);
  }
}

/** release.yaml: its content (with its own problems), the missing file, or the unreadable one. */
function readManifestOf(layout: FolderLayout, abs: string, folderName: string, issuesOf: IssuesOf, inputs: InputFile[]): ManifestRead | undefined {
  const manifestBytes = layout.hasManifest ? readBytes(join(abs, MANIFEST_FILE)) : null;
  if (manifestBytes !== null && 'problem' in manifestBytes) {
    issuesOf(MANIFEST_FILE).push(manifestBytes.problem);
    return undefined;
  }
  if (manifestBytes === null) {
    // release.yaml that is there but no file has its problem already (layout.problems).
    if (!layout.notFiles.includes(MANIFEST_FILE))
      issuesOf(MANIFEST_FILE).push({
        code: 'missing-file',
        message: 'the release has no release.yaml',
        expected: 'release.yaml with id, title and date',
        found: 'no such file',
      });
    return undefined;
  }
  const read = parseManifestBytes(manifestBytes.bytes, folderName);
  issuesOf(MANIFEST_FILE).push(...read.problems);
  inputs.push({ table: 'release', file: MANIFEST_FILE, format: 'yaml', sha256: sha256Hex(read.bytes), rows: 0, extraColumns: [], columnUnits: {} });
  return read;
}

/** Every table present, parsed and checked on its own; the absent ones listed (systems is required). */
function readTables(layout: FolderLayout, abs: string, issuesOf: IssuesOf, inputs: InputFile[]): { reads: Reads; absentTables: TableName[] } {
  const reads: Reads = {};
  const absentTables: TableName[] = [];
  for (const table of TABLE_NAMES) {
    const ref = layout.tables[table];
    if (!ref) {
      absentTables.push(table);
      if (table === 'systems' && !layout.notFiles.some((f) => f.startsWith('systems.'))) {
        issuesOf('systems.ecsv').push({
          code: 'missing-table',
          message: 'the release has no systems table; every release needs one',
          expected: 'systems.ecsv (or systems.csv, .vot, .xml)',
          found: 'no such file',
        });
      }
      continue;
    }
    const bytes = readBytes(join(abs, ref.fileName));
    if ('problem' in bytes) {
      issuesOf(ref.fileName).push(bytes.problem);
      continue;
    }
    const read = parseTable(table, ref.fileName, ref.format, bytes.bytes);
    (reads as Record<string, TableRead<TableName>>)[table] = read;
    issuesOf(ref.fileName).push(...read.problems);
    inputs.push(read.input);
  }
  return { reads, absentTables };
}

/** notes.md as text (null when absent or not UTF-8). */
function readNotes(layout: FolderLayout, abs: string, issuesOf: IssuesOf, inputs: InputFile[]): string | null {
  let notes: string | null = null;
  const notesBytes = layout.hasNotes ? readBytes(join(abs, NOTES_FILE)) : null;
  if (notesBytes !== null && 'problem' in notesBytes) issuesOf(NOTES_FILE).push(notesBytes.problem);
  else if (notesBytes !== null) {
    const bytes = notesBytes.bytes;
    const decoded = decodeUtf8(bytes);
    if ('problem' in decoded) issuesOf(NOTES_FILE).push(decoded.problem);
    else notes = decoded.text;
    inputs.push({ table: 'notes', file: NOTES_FILE, format: 'markdown', sha256: sha256Hex(bytes), rows: 0, extraColumns: [], columnUnits: {} });
  }
  return notes;
}

/** One error for the whole release: every file's issues, in the order the files were first named. */
function throwCollectedIssues(
  collectors: Map<string, FileIssues>,
  manifest: ManifestRead | undefined,
): asserts manifest is ManifestRead & { manifest: NonNullable<ManifestRead['manifest']> } {
  const issues: InputIssue[] = [];
  let omitted = 0;
  for (const collector of collectors.values()) {
    const done = finishFileIssues(collector);
    issues.push(...done.issues);
    omitted += done.omitted;
  }
  if (issues.length > 0 || !manifest?.manifest) {
    if (issues.length === 0) throw new Error('release.yaml was not read but no problem was recorded');
    throw new InputError(issues, omitted);
  }
}

/** Read and validate the release in `dir`; throws InputError listing every problem found. */
export function loadRelease(dir: string): Release {
  const abs = resolve(dir);
  requireFolder(dir, abs);

  // A published release is frozen: refuse it at once if a file changed since publication
  // (src/io/publishedRecord.ts), before anything is read from the changed files.
  const frozen = verifyPublishedFolder(dir);
  if (frozen.length > 0) throw new InputError(frozen);

  const collectors = new Map<string, FileIssues>();
  const issuesOf: IssuesOf = (fileName) => {
    let c = collectors.get(fileName);
    if (!c) {
      c = newFileIssues(join(dir, fileName));
      collectors.set(fileName, c);
    }
    return c.problems;
  };
  const inputs: InputFile[] = [];

  const layout = classifyFolder(releaseFolderEntries(abs));
  // Issues are listed per file in this order: release.yaml, the tables, then other files.
  issuesOf(MANIFEST_FILE);
  for (const table of TABLE_NAMES) issuesOf(layout.tables[table]?.fileName ?? `${table}.ecsv`);
  for (const { fileName, problem } of layout.problems) issuesOf(fileName).push(problem);

  const manifest = readManifestOf(layout, abs, basename(abs), issuesOf, inputs);
  const { reads, absentTables } = readTables(layout, abs, issuesOf, inputs);
  crossCheckTables(reads, layout.tables, issuesOf);
  const notes = readNotes(layout, abs, issuesOf, inputs);
  throwCollectedIssues(collectors, manifest);

  return {
    manifest: manifest.manifest,
    analysis: manifest.analysis,
    analysisKeysSet: manifest.analysisKeysSet,
    variants: manifest.variants,
    systems: reads.systems?.rows ?? [],
    parallax: reads.parallax?.rows ?? [],
    mainSequence: reads.main_sequence?.rows ?? [],
    cepheids: reads.cepheids?.rows ?? [],
    snCalibrators: reads.sn_calibrators?.rows ?? [],
    snHubbleFlow: reads.sn_hubble_flow?.rows ?? [],
    absentTables,
    inputs,
    notes,
    dir: abs,
  };
}

/**
 * Rules across tables: every system named in parallax, main_sequence, cepheids
 * and sn_calibrators exists in systems; a star in both parallax and cepheids
 * (a Cepheid anchored by its own parallax) belongs to the same system in both.
 */
function crossCheckTables(reads: Reads, files: Partial<Record<TableName, { fileName: string }>>, issuesOf: (fileName: string) => Problem[]): void {
  const systems = reads.systems;
  // Without a readable list of system ids every reference would look unknown: those
  // problems are reported on the systems file itself, so skip the check.
  if (systems?.structured && systems.keys.size > 0) {
    const known = [...systems.keys.keys()];
    for (const table of REFERENCING_TABLES) {
      const read = reads[table];
      const fileName = files[table]?.fileName;
      if (!read || !fileName) continue;
      for (const ref of read.systemRefs) {
        if (systems.keys.has(ref.system)) continue;
        const near = nearest(ref.system, known);
        issuesOf(fileName).push({
          code: 'unknown-system',
          line: ref.line,
          column: 'system',
          message: 'the row names a system that the systems table does not list',
          expected: `a system of ${files.systems?.fileName ?? 'systems'}`,
          found: shown(ref.system),
          hint: near ? `did you mean "${near}"?` : 'add the system to the systems table',
        });
      }
    }
  }

  const parallax = reads.parallax;
  const cepheids = reads.cepheids;
  const cepheidFile = files.cepheids?.fileName;
  if (parallax && cepheids && cepheidFile) {
    const anchorSystem = new Map<string, TableRows['parallax']>(parallax.rows.map((r) => [r.star, r]));
    for (const c of cepheids.rows) {
      const p = anchorSystem.get(c.star);
      if (p && p.system !== c.system) {
        issuesOf(cepheidFile).push({
          code: 'star-system-mismatch',
          line: c.line,
          column: 'system',
          message: `the star also has a parallax (${files.parallax?.fileName} line ${p.line}) but in another system`,
          expected: JSON.stringify(p.system),
          found: JSON.stringify(c.system),
        });
      }
    }
  }
}
