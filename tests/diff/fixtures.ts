/**
 * Release folders for the comparison tests: copies of the committed demo releases under a new
 * id, generated releases, and small edits of their ECSV tables and release.yaml. Every edit is
 * made on the text, so the expected old and new values are read from the files, not from the code
 * under test.
 */
import { cpSync, mkdtempSync, readFileSync, rmSync, writeFileSync } from 'node:fs';
import { tmpdir } from 'node:os';
import { join } from 'node:path';
import { fileURLToPath } from 'node:url';

export const DEMO_DIR = fileURLToPath(new URL('../../content/releases/', import.meta.url));

export function tempDir(prefix: string): { dir: string; remove: () => void } {
  const dir = mkdtempSync(join(tmpdir(), `rungbook-diff-${prefix}-`));
  return { dir, remove: () => rmSync(dir, { recursive: true, force: true }) };
}

/** Copy demo release `from` into `<parent>/<id>/` with release.yaml's id set to `id`. */
export function copyDemoRelease(from: string, parent: string, id: string): string {
  const dir = join(parent, id);
  cpSync(join(DEMO_DIR, from), dir, { recursive: true });
  editText(join(dir, 'release.yaml'), (t) => t.replace(/^id: .*$/m, `id: ${JSON.stringify(id)}`).replace(/^previous: .*$/m, 'previous: null'));
  return dir;
}

export function editText(path: string, edit: (text: string) => string): void {
  writeFileSync(path, edit(readFileSync(path, 'utf8')));
}

export interface EcsvText {
  comments: string[];
  header: string[];
  rows: string[][];
}

/** Split an ECSV file (comma-delimited, no quoted cells, as the demo writes) into its parts. */
export function readEcsv(path: string): EcsvText {
  const lines = readFileSync(path, 'utf8').split('\n');
  const comments = lines.filter((l) => l.startsWith('#'));
  const body = lines.filter((l) => !l.startsWith('#') && l !== '');
  return { comments, header: body[0].split(','), rows: body.slice(1).map((l) => l.split(',')) };
}

export function writeEcsv(path: string, t: EcsvText): void {
  writeFileSync(path, [...t.comments, t.header.join(','), ...t.rows.map((r) => r.join(','))].join('\n') + '\n');
}

export function editEcsv(path: string, edit: (t: EcsvText) => void): void {
  const t = readEcsv(path);
  edit(t);
  writeEcsv(path, t);
}

/** The cell of row `id` (first column) in column `column`. */
export function cell(t: EcsvText, id: string, column: string): string {
  const row = t.rows.find((r) => r[0] === id);
  if (!row) throw new Error(`no row ${id}`);
  return row[t.header.indexOf(column)];
}

export function setCell(t: EcsvText, id: string, column: string, value: string): void {
  const row = t.rows.find((r) => r[0] === id);
  if (!row) throw new Error(`no row ${id}`);
  row[t.header.indexOf(column)] = value;
}

/** Decimal places of a number as written. */
export function decimals(text: string): number {
  const i = text.indexOf('.');
  return i < 0 ? 0 : text.length - i - 1;
}

/** Add `delta` to a decimal string, keeping at least its decimal places (exact in decimal). */
export function addDecimal(text: string, delta: number, minDecimals = 0): string {
  const d = Math.max(decimals(text), minDecimals);
  return (Number(text) + delta).toFixed(d);
}
