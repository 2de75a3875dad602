import { describe, expect, test } from 'vitest';
import { readCsv } from '../../src/io/csv.ts';
import { csvText, ecsvText, lineOf, type TableDef } from './fixtures.ts';

const enc = (s: string): Uint8Array => new TextEncoder().encode(s);

const T: TableDef = {
  columns: [
    { name: 'star', datatype: 'string' },
    { name: 'system', datatype: 'string' },
    { name: 'parallax', datatype: 'float64' },
    { name: 'comment', datatype: 'string' },
  ],
  rows: [
    ['p-1', 'alder', '1.5', 'a, b and c'],
    ['p-2', 'alder', '2.5', 'line one\nline two'],
    ['p-3', 'alder', '3.5', 'he said ""no"" twice'],
    ['p-4', 'alder', '4.5', ''],
  ],
};

describe('plain CSV (RFC 4180)', () => {
  test('header row gives the columns, with no units or datatypes', () => {
    const text = csvText(T);
    const p = readCsv(enc(text));
    expect(p.problems).toEqual([]);
    expect(p.table?.columns).toEqual(T.columns.map((c) => ({ name: c.name, line: 1 })));
  });

  test('commas, line breaks and doubled quotes inside quoted fields; lines after a two-line field', () => {
    const text = csvText(T);
    const rows = readCsv(enc(text)).table!.rows;
    expect(rows.map((r) => r.cells)).toEqual(T.rows);
    expect(rows.map((r) => r.line)).toEqual([2, 3, 5, 6]);
    expect(rows.map((r) => r.line)).toEqual(['p-1', 'p-2', 'p-3', 'p-4'].map((id) => lineOf(text, id)));
  });

  test('byte-order mark and CRLF: same cells, same lines', () => {
    const lf = readCsv(enc(csvText(T))).table!;
    const crlf = readCsv(enc(csvText(T, { eol: '\r\n', bom: true }))).table!;
    expect(crlf.columns[0].name).toBe('star');
    expect(crlf.rows.map((r) => [r.line, r.cells])).toEqual(lf.rows.map((r) => [r.line, r.cells]));
  });

  test('spaces around fields are trimmed, also around a quoted field, but not inside the quotes', () => {
    const p = readCsv(enc('star , parallax\n p-1 ,  "1.5" \n" p-2 ",2.5\n'));
    expect(p.problems).toEqual([]);
    expect(p.table?.columns.map((c) => c.name)).toEqual(['star', 'parallax']);
    expect(p.table?.rows.map((r) => r.cells)).toEqual([
      ['p-1', '1.5'],
      [' p-2 ', '2.5'],
    ]);
  });

  test('plain CSV has no comments: a leading # is data', () => {
    const p = readCsv(enc('star,parallax\n#12,1.5\n'));
    expect(p.table?.rows).toEqual([{ line: 2, cells: ['#12', '1.5'] }]);
  });

  test('an empty file', () => {
    expect(readCsv(enc('')).problems).toEqual([expect.objectContaining({ code: 'no-column-names', line: 1, found: 'nothing' })]);
  });

  test('an ECSV file named .csv is refused with the fix', () => {
    const p = readCsv(enc(ecsvText(T)));
    expect(p.problems).toEqual([expect.objectContaining({ code: 'ecsv-named-csv', line: 1, hint: expect.stringContaining('.ecsv') })]);
  });

  test('a stray quote: the row where it happens, and the rows before it are kept', () => {
    const text = 'star,parallax\np-1,1.5\n"p-2",2.5\np-3,3"5\np-4,4.5\n';
    const p = readCsv(enc(text));
    expect(p.problems).toEqual([expect.objectContaining({ code: 'bad-quoting', line: 4, found: 'a stray double quote' })]);
    expect(p.table?.rows.map((r) => r.cells[0])).toEqual(['p-1', 'p-2']);
  });

  test('text after a closing quote', () => {
    const p = readCsv(enc('star,parallax\r\n"p-1"x,1.5\r\n'));
    expect(p.problems).toEqual([expect.objectContaining({ code: 'bad-quoting', line: 2, found: 'more text' })]);
  });

  test('a quote never closed is reported where its row starts, not at the end of the file', () => {
    const text = 'star,parallax\np-1,1.5\np-2,"2.5\np-3,3.5\np-4,4.5\n';
    const p = readCsv(enc(text));
    expect(p.problems).toEqual([expect.objectContaining({ code: 'bad-quoting', line: 3, found: 'the end of the file' })]);
  });
});
