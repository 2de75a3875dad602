/**
 * Column definitions of the six release tables as the demo writes them: the
 * names, units and meanings of the table registry (src/registry/tables.ts), so
 * the demo files and the readers cannot disagree about a column.
 */
import type { EcsvColumn } from '../io/writeEcsv.ts';
import { TABLE_SPECS, type ColumnSpec } from '../registry/tables.ts';
import { TABLE_NAMES, type TableName } from '../types/release.ts';

/** Text columns are ECSV strings; numbers are float64 with the contract's unit (none when dimensionless). */
function ecsvColumn(c: ColumnSpec): EcsvColumn {
  if (c.type === 'text') return { name: c.name, datatype: 'string', description: c.meaning };
  return c.unit ? { name: c.name, datatype: 'float64', unit: c.unit, description: c.meaning } : { name: c.name, datatype: 'float64', description: c.meaning };
}

export const TABLE_COLUMNS: Readonly<Record<TableName, readonly EcsvColumn[]>> = Object.freeze(
  Object.fromEntries(TABLE_NAMES.map((t) => [t, (TABLE_SPECS[t].columns as ColumnSpec[]).map(ecsvColumn)])) as Record<TableName, EcsvColumn[]>,
);
