/**
 * A small valid release built in code, and writers for its tables in ECSV,
 * plain CSV and VOTable, so each test can break one thing and check the
 * reader's message. All names are invented. Line numbers that tests expect are
 * found in the written text (lineOf), never taken from the reader.
 */
import { mkdirSync, mkdtempSync, rmSync, writeFileSync } from 'node:fs';
import { tmpdir } from 'node:os';
import { join } from 'node:path';
import { afterAll } from 'vitest';
import { InputError, type InputIssue } from '../../src/types/issues.ts';
import type { Release, TableName } from '../../src/types/release.ts';
import { loadRelease } from '../../src/io/release.ts';

export interface ColumnDef {
  name: string;
  datatype: string;
  unit?: string;
  description?: string;
}

export interface TableDef {
  columns: ColumnDef[];
  /** Cells as written (a cell '' is an empty value). */
  rows: string[][];
}

export interface ReleaseDef {
  /** Text of release.yaml (null: no file). */
  manifest: string | null;
  tables: Partial<Record<TableName, TableDef>>;
  /** Other files to write, by name. */
  extraFiles?: Record<string, string | Uint8Array>;
}

export const RELEASE_ID = '2026.1';

export const VALID_MANIFEST = `id: "${RELEASE_ID}"
title: "First test release"
date: 2026-03-01
previous: null
blinded: false
analysis:
  z_min: 0.02
  clip_sigma: 3.0
  variants:
    - { name: "no metallicity term", fit_pl_metallicity: false }
`;

const f64 = (name: string, unit?: string): ColumnDef => ({ name, datatype: 'float64', ...(unit !== undefined ? { unit } : {}) });
const str = (name: string): ColumnDef => ({ name, datatype: 'string' });

/** The valid release: four systems (two clusters, a galaxy, a field group) and every table. */
export function validRelease(): ReleaseDef {
  return {
    manifest: VALID_MANIFEST,
    tables: {
      systems: {
        columns: [str('system'), str('kind'), f64('feh', 'dex'), f64('feh_err', 'dex'), f64('ebv', 'mag'), f64('ebv_err', 'mag'), f64('age_gyr', 'Gyr')],
        rows: [
          ['alder', 'cluster', '0.10', '0.03', '0.010', '0.005', '0.6'],
          ['birch', 'cluster', '0.00', '0.05', '', '', '1.2'],
          ['cedar', 'galaxy', '', '', '', '', ''],
          ['dune', 'field', '', '', '', '', ''],
        ],
      },
      parallax: {
        columns: [str('star'), str('system'), f64('parallax', 'mas'), f64('parallax_err', 'mas'), f64('ra', 'deg'), f64('dec', 'deg')],
        rows: [
          ['a-001', 'alder', '21.50', '0.05', '66.70', '15.90'],
          ['a-002', 'alder', '21.40', '0.06', '66.80', '16.00'],
          ['d-001', 'dune', '3.20', '0.02', '', ''],
        ],
      },
      main_sequence: {
        columns: [str('star'), str('system'), f64('color', 'mag'), f64('color_err', 'mag'), f64('mag', 'mag'), f64('mag_err', 'mag')],
        rows: [
          ['a-101', 'alder', '0.55', '0.01', '6.90', '0.02'],
          ['b-101', 'birch', '0.60', '0.01', '9.80', '0.02'],
        ],
      },
      cepheids: {
        columns: [
          str('star'),
          str('system'),
          f64('period', 'd'),
          f64('m_h', 'mag'),
          f64('m_h_err', 'mag'),
          f64('m_v', 'mag'),
          f64('m_v_err', 'mag'),
          f64('m_i', 'mag'),
          f64('m_i_err', 'mag'),
          f64('oh', 'dex'),
        ],
        rows: [
          ['d-001', 'dune', '9.8', '4.10', '0.02', '5.90', '0.02', '5.10', '0.02', '0.00'],
          ['c-201', 'cedar', '25.3', '22.10', '0.05', '24.80', '0.05', '23.90', '0.05', '-0.10'],
        ],
      },
      sn_calibrators: {
        columns: [
          str('sn'),
          str('system'),
          f64('m_b', 'mag'),
          f64('m_b_err', 'mag'),
          f64('x1'),
          f64('x1_err'),
          f64('c', 'mag'),
          f64('c_err', 'mag'),
          f64('cov_mb_x1', 'mag'),
          f64('cov_mb_c', 'mag2'),
          f64('cov_x1_c', 'mag'),
          f64('host_logmass', 'dex'),
        ],
        rows: [['sn-c1', 'cedar', '12.40', '0.03', '0.30', '0.10', '-0.05', '0.03', '0.001', '0.0002', '-0.002', '10.3']],
      },
      sn_hubble_flow: {
        columns: [str('sn'), f64('z'), f64('z_err'), f64('m_b', 'mag'), f64('m_b_err', 'mag'), f64('x1'), f64('x1_err'), f64('c', 'mag'), f64('c_err', 'mag')],
        rows: [
          ['sn-h1', '0.031', '0.001', '16.30', '0.05', '-0.20', '0.20', '0.01', '0.03'],
          ['sn-h2', '0.052', '0.001', '17.50', '0.05', '0.50', '0.20', '-0.03', '0.03'],
        ],
      },
    },
  };
}

export interface TextOptions {
  eol?: '\n' | '\r\n';
  bom?: boolean;
}

export interface EcsvOptions extends TextOptions {
  delimiter?: ',' | ' ';
  /** Leave the delimiter key out of the header. */
  omitDelimiter?: boolean;
}

/** Quote a cell when it holds the delimiter, a quote, a line break or (space-delimited) is empty. */
function cellText(cell: string, delimiter: string): string {
  const needs =
    cell.includes(delimiter) || cell.includes('"') || cell.includes('\n') || cell.includes('\r') || cell !== cell.trim() || (delimiter === ' ' && cell === '');
  return needs ? `"${cell.replace(/"/g, '""')}"` : cell;
}

function finish(lines: string[], opts: TextOptions): string {
  const text = lines.join(opts.eol ?? '\n') + (opts.eol ?? '\n');
  return (opts.bom ? '\uFEFF' : '') + text;
}

export function ecsvText(t: TableDef, opts: EcsvOptions = {}): string {
  const d = opts.delimiter ?? ',';
  const lines = ['# %ECSV 1.0', '# ---'];
  if (!opts.omitDelimiter) lines.push(`# delimiter: '${d}'`);
  lines.push('# datatype:');
  for (const c of t.columns) {
    const parts = [`name: ${c.name}`];
    if (c.unit !== undefined) parts.push(`unit: ${JSON.stringify(c.unit)}`);
    parts.push(`datatype: ${c.datatype}`);
    if (c.description) parts.push(`description: ${JSON.stringify(c.description)}`);
    lines.push(`# - {${parts.join(', ')}}`);
  }
  lines.push('# schema: astropy-2.0');
  lines.push(t.columns.map((c) => cellText(c.name, d)).join(d));
  for (const r of t.rows) lines.push(r.map((c) => cellText(c, d)).join(d));
  return finish(lines, opts);
}

export function csvText(t: TableDef, opts: TextOptions = {}): string {
  const lines = [t.columns.map((c) => cellText(c.name, ',')).join(',')];
  for (const r of t.rows) lines.push(r.map((c) => cellText(c, ',')).join(','));
  return finish(lines, opts);
}

const XML_ESCAPES: Record<string, string> = { '&': '&amp;', '<': '&lt;', '>': '&gt;', '"': '&quot;' };
const xml = (s: string): string => s.replace(/[&<>"]/g, (c) => XML_ESCAPES[c]);
const VOT_TYPE: Record<string, string> = { string: 'char', float64: 'double', float32: 'float', int64: 'long', int32: 'int' };

export function votableText(t: TableDef, opts: TextOptions = {}): string {
  const lines = [
    '<?xml version="1.0" encoding="UTF-8"?>',
    '<VOTABLE version="1.4" xmlns="http://www.ivoa.net/xml/VOTable/v1.3">',
    '  <RESOURCE>',
    '    <TABLE name="test">',
  ];
  for (const c of t.columns) {
    const type = VOT_TYPE[c.datatype] ?? c.datatype;
    const size = type === 'char' ? ' arraysize="*"' : '';
    const unit = c.unit !== undefined ? ` unit="${xml(c.unit)}"` : '';
    lines.push(`      <FIELD name="${xml(c.name)}" datatype="${type}"${size}${unit}/>`);
  }
  lines.push('      <DATA>', '        <TABLEDATA>');
  for (const r of t.rows) lines.push(`          <TR>${r.map((c) => `<TD>${xml(c)}</TD>`).join('')}</TR>`);
  lines.push('        </TABLEDATA>', '      </DATA>', '    </TABLE>', '  </RESOURCE>', '</VOTABLE>');
  return finish(lines, opts);
}

const created: string[] = [];

/** A fresh folder under the system's temporary folder, removed after the test file. */
export function tempDir(): string {
  const dir = mkdtempSync(join(tmpdir(), 'rungbook-io-'));
  created.push(dir);
  return dir;
}

afterAll(() => {
  for (const dir of created.splice(0)) rmSync(dir, { recursive: true, force: true });
});

export type FixtureFormat = 'ecsv' | 'csv' | 'vot' | 'xml';

export interface WriteOptions {
  /** Folder name (default RELEASE_ID, which the manifest's id equals). */
  folder?: string;
  formats?: Partial<Record<TableName, FixtureFormat>>;
  ecsv?: EcsvOptions;
  text?: TextOptions;
}

/** Text of one table in a format (csv ignores units: values must already be in contract units). */
export function tableText(t: TableDef, format: FixtureFormat, opts: WriteOptions = {}): string {
  if (format === 'ecsv') return ecsvText(t, { ...opts.text, ...opts.ecsv });
  if (format === 'csv') return csvText(t, opts.text);
  return votableText(t, opts.text);
}

/** Write the release into a fresh temporary folder; returns the release folder's path. */
export function writeRelease(def: ReleaseDef, opts: WriteOptions = {}): string {
  const parent = tempDir();
  const dir = join(parent, opts.folder ?? RELEASE_ID);
  mkdirSync(dir);
  if (def.manifest !== null) writeFileSync(join(dir, 'release.yaml'), def.manifest);
  for (const [name, t] of Object.entries(def.tables) as [TableName, TableDef][]) {
    const format = opts.formats?.[name] ?? 'ecsv';
    writeFileSync(join(dir, `${name}.${format}`), tableText(t, format, opts));
  }
  for (const [name, content] of Object.entries(def.extraFiles ?? {})) writeFileSync(join(dir, name), content);
  return dir;
}

/** A deep copy of the valid release, changed by `edit`. */
export function edited(edit: (def: ReleaseDef) => void): ReleaseDef {
  const def = structuredClone(validRelease());
  edit(def);
  return def;
}

/** Set one cell, by table, row index and column name. */
export function setCell(def: ReleaseDef, table: TableName, row: number, column: string, value: string): void {
  const t = def.tables[table]!;
  const at = t.columns.findIndex((c) => c.name === column);
  if (at < 0) throw new Error(`fixture has no column ${column} in ${table}`);
  t.rows[row][at] = value;
}

/** Remove a column (and its cells). */
export function dropColumn(def: ReleaseDef, table: TableName, column: string): void {
  const t = def.tables[table]!;
  const at = t.columns.findIndex((c) => c.name === column);
  if (at < 0) throw new Error(`fixture has no column ${column} in ${table}`);
  t.columns.splice(at, 1);
  for (const r of t.rows) r.splice(at, 1);
}

export function setUnit(def: ReleaseDef, table: TableName, column: string, unit: string | undefined): void {
  const c = def.tables[table]!.columns.find((x) => x.name === column);
  if (!c) throw new Error(`fixture has no column ${column} in ${table}`);
  if (unit === undefined) delete c.unit;
  else c.unit = unit;
}

/** 1-based line of the first line of `text` that contains `needle` (after `from`, a line number). */
export function lineOf(text: string, needle: string, from = 0): number {
  const lines = text.split('\n');
  for (let i = from; i < lines.length; i++) if (lines[i].includes(needle)) return i + 1;
  throw new Error(`fixture text has no line containing ${JSON.stringify(needle)}`);
}

/** The issues loadRelease reports for a folder ([] if it loads). */
export function issuesOf(dir: string): InputIssue[] {
  try {
    loadRelease(dir);
    return [];
  } catch (err) {
    if (err instanceof InputError) return err.issues;
    throw err;
  }
}

/** Load a folder that must be valid; on failure the error lists its issues. */
export function loadValid(dir: string): Release {
  try {
    return loadRelease(dir);
  } catch (err) {
    if (err instanceof InputError) throw new Error('expected a valid release:\n' + err.issues.map((i) => JSON.stringify(i)).join('\n'), { cause: err });
    throw err;
  }
}

/** The one issue with this code (fails with the full list otherwise). */
export function onlyIssue(issues: InputIssue[], code: string): InputIssue {
  const matching = issues.filter((i) => i.code === code);
  if (matching.length !== 1) {
    throw new Error(`expected exactly one "${code}" issue, got ${matching.length}:\n${issues.map((i) => JSON.stringify(i)).join('\n')}`);
  }
  return matching[0];
}
