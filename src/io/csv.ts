/**
 * Plain CSV reader (RFC 4180): a header row of column names, then one row per
 * record. Plain CSV declares no units or datatypes, so every value is taken in
 * the contract's unit for its column.
 */
import { parseDelimited } from './delimited.ts';
import type { Problem } from './issues.ts';
import type { ParsedTable, RawColumn } from './raw-table.ts';
import { decodeUtf8, stripBom } from './text.ts';

export function readCsv(bytes: Uint8Array): ParsedTable {
  const decoded = decodeUtf8(bytes);
  if ('problem' in decoded) return { problems: [decoded.problem] };
  const problems: Problem[] = [];
  if (decoded.text.startsWith('# %ECSV')) {
    problems.push({
      code: 'ecsv-named-csv',
      line: 1,
      message: 'this file is ECSV but is named .csv',
      expected: 'a plain CSV header row',
      found: '"# %ECSV" signature',
      hint: 'rename the file to .ecsv so that its header (and units) are read',
    });
    return { problems };
  }
  const { records, problem } = parseDelimited(stripBom(bytes), ',', 0);
  if (problem) problems.push(problem);
  const namesRow = records[0];
  if (!namesRow) {
    if (!problem) {
      problems.push({ code: 'no-column-names', line: 1, message: 'the file is empty', expected: 'a header row with the column names', found: 'nothing' });
    }
    return { problems };
  }
  const columns: RawColumn[] = namesRow.cells.map((name) => ({ name, line: namesRow.line }));
  return { table: { columns, headerLine: namesRow.line, rows: records.slice(1) }, problems };
}
