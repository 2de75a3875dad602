/**
 * Copies of the committed demo releases for tests that damage or edit them:
 * a copy in a fresh temporary folder, and small table edits that keep the
 * rest of each file byte for byte (the ECSV header is kept as written; the
 * body is parsed as RFC 4180 CSV and written back with the quoting rules of
 * src/io/writeEcsv.ts, so any text can be put into a cell).
 */
import { cpSync, mkdtempSync, readFileSync, writeFileSync } from 'node:fs';
import { tmpdir } from 'node:os';
import { join } from 'node:path';
import { fileURLToPath } from 'node:url';
import { parse } from 'csv-parse/sync';

export const REPO = fileURLToPath(new URL('../../', import.meta.url));
export const DEMO_RELEASES = join(REPO, 'content', 'releases');
export const DEMO_IDS = ['2026.1', '2026.2', '2026.3'] as const;

/** A fresh temporary folder (the caller removes it). */
export function tempDir(prefix = 'rungbook-trust-'): string {
  return mkdtempSync(join(tmpdir(), prefix));
}

/** Copy demo release `id` into `parent/<name>` (default name: the id) and return the new folder. */
export function copyDemo(id: string, parent: string, name = id): string {
  const dir = join(parent, name);
  cpSync(join(DEMO_RELEASES, id), dir, { recursive: true });
  if (name !== id) setManifestId(dir, name);
  return dir;
}

/** Point release.yaml's id at a new folder name (the id must equal the folder's name). */
export function setManifestId(dir: string, id: string): void {
  const file = join(dir, 'release.yaml');
  const text = readFileSync(file, 'utf8');
  writeFileSync(file, text.replace(/^id: .*$/m, `id: ${JSON.stringify(id)}`));
}

/** Replace one top-level or analysis key's value in release.yaml (the line `key: ...`). */
export function setManifestValue(dir: string, key: string, yamlValue: string): void {
  const file = join(dir, 'release.yaml');
  const text = readFileSync(file, 'utf8');
  const re = new RegExp(`^(\\s*)${key}: .*$`, 'm');
  if (!re.test(text)) throw new Error(`release.yaml of ${dir} has no key ${key}`);
  writeFileSync(
    file,
    text.replace(re, (_m, indent: string) => `${indent}${key}: ${yamlValue}`),
  );
}

export interface EditableTable {
  /** Lines before the column-name line (the ECSV header), kept verbatim. */
  head: string[];
  columns: string[];
  rows: string[][];
}

/** Read a comma-delimited ECSV (or CSV) table of a demo release copy. */
export function readTable(path: string): EditableTable {
  const lines = readFileSync(path, 'utf8').split('\n');
  const head: string[] = [];
  let i = 0;
  while (i < lines.length && lines[i]!.startsWith('#')) head.push(lines[i++]!);
  const records = parse(lines.slice(i).join('\n'), { relax_column_count: false, skip_empty_lines: true }) as string[][];
  const [columns, ...rows] = records;
  return { head, columns: columns!, rows };
}

/** RFC 4180 field, quoted when it holds a delimiter, quote or line break, starts with '#', or has blanks at its ends. */
export function csvField(s: string): string {
  return /[",\r\n]|^#|^\s|\s$/.test(s) || s === '' ? `"${s.replace(/"/g, '""')}"` : s;
}

export function writeTable(path: string, t: EditableTable): void {
  const body = [t.columns, ...t.rows].map((r) => r.map((c, j) => (c === '' && j > 0 ? '' : csvField(c))).join(','));
  writeFileSync(path, [...t.head, ...body, ''].join('\n'));
}

/** Edit one table of a release folder in place. */
export function editTable(dir: string, table: string, edit: (t: EditableTable, col: (name: string) => number) => void): void {
  const path = join(dir, `${table}.ecsv`);
  const t = readTable(path);
  const col = (name: string): number => {
    const j = t.columns.indexOf(name);
    if (j < 0) throw new Error(`${table} has no column ${name}`);
    return j;
  };
  edit(t, col);
  writeTable(path, t);
}
