/**
 * The guide pages' generated part: the tables of the input contract, produced from the
 * registry (src/registry/tables.ts) and the analysis defaults (src/types/analysis.ts), so
 * the format page shows what the readers accept and cannot fall behind them. The prose
 * beside them is authored (content/guide/*.md).
 */
import { TABLE_SPECS, type ColumnSpec } from '../registry/tables.ts';
import { ANALYSIS_KEYS, ANALYSIS_UNITS, DEFAULT_ANALYSIS } from '../types/analysis.ts';
import { TABLE_NAMES } from '../types/release.ts';
import { tableView } from './tables.ts';
import type { TableView } from './types.ts';

/** What the format page says of a column besides its meaning: optional, its default, its rules. */
function columnRules(c: ColumnSpec, key: string, systemRef: string | undefined): string {
  const rules: string[] = [];
  rules.push(c.required ? 'required' : c.absent !== undefined ? `optional (absent: ${c.absent})` : 'optional');
  if (c.name === key) rules.push('unique');
  if (c.name === systemRef) rules.push('names a row of systems');
  if (c.positive) rules.push('> 0');
  if (c.oneOf) rules.push(`one of ${c.oneOf.join(', ')}`);
  if (c.needs) rules.push(`needs ${c.needs}`);
  return rules.join('; ');
}

function tableOfColumns(table: (typeof TABLE_NAMES)[number]): TableView {
  const spec = TABLE_SPECS[table];
  const rows = (spec.columns as ColumnSpec[]).map((c) => [
    c.name,
    c.type === 'text' ? 'text' : 'number',
    c.unit === null ? '' : c.unit === '' ? 'none' : c.unit,
    columnRules(c, spec.key, spec.systemRef),
    c.meaning,
  ]);
  return tableView(
    `table-${table}`,
    `${table} (one row: ${spec.meaning})`,
    [
      ['column', 'Column', null, false],
      ['type', 'Type', null, false],
      ['unit', 'Unit', null, false],
      ['rules', 'Rules', null, false],
      ['meaning', 'Meaning', null, false],
    ],
    rows,
  );
}

function analysisTable(): TableView {
  const rows = ANALYSIS_KEYS.map((k) => [k, JSON.stringify(DEFAULT_ANALYSIS[k]), ANALYSIS_UNITS[k]]);
  return tableView(
    'analysis-keys',
    'Analysis choices (release.yaml, under analysis:) and their defaults',
    [
      ['key', 'Key', null, false],
      ['default', 'Default', null, false],
      ['unit', 'Unit', null, false],
    ],
    rows,
  );
}

/** The format page's tables: one per input table, then the analysis keys. */
export function inputFormatTables(): TableView[] {
  return [...TABLE_NAMES.map(tableOfColumns), analysisTable()];
}
