/**
 * A constructed pair: release 2026.2 copied twice, the second edited cell by cell in its files.
 * Every edit must come back from the comparison with its table, id, column and the old and
 * new values as written in the files; a renamed column and changed units must be reported.
 */
import { join } from 'node:path';
import { afterAll, beforeAll, describe, expect, it } from 'vitest';
import { compareReleaseDirs } from '../../src/diff/compare.ts';
import type { DiffReport } from '../../src/diff/types.ts';
import { cell, copyDemoRelease, editEcsv, editText, readEcsv, setCell, tempDir } from './fixtures.ts';

const tmp = tempDir('rows');
let report: DiffReport;
/** Expected changed cells as "table|id|column|a|b" (numbers as written in the files). */
const expected: string[] = [];
let parallaxRows = 0;

beforeAll(async () => {
  const a = copyDemoRelease('2026.2', tmp.dir, 'rows-a');
  const b = copyDemoRelease('2026.2', tmp.dir, 'rows-b');
  const put = (table: string, id: string, column: string, from: string | null, to: string | null) =>
    expected.push([table, id, column, from === null ? 'null' : Number(from), to === null ? 'null' : Number(to)].join('|'));

  editEcsv(join(b, 'cepheids.ecsv'), (t) => {
    const edit = (id: string, column: string, to: string) => {
      put('cepheids', id, column, cell(t, id, column), to);
      setCell(t, id, column, to);
    };
    edit('Juniperfold-C001', 'm_h', '26.31'); // a correction: uncertainty kept
    edit('Juniperfold-C002', 'period', '8.3');
    edit('Juniperfold-C003', 'm_h', '25.7'); // remeasured: value and uncertainty
    edit('Juniperfold-C003', 'm_h_err', '0.2');
    const added = [...t.rows.find((r) => r[0] === 'Juniperfold-C006')!];
    added[0] = 'Juniperfold-C999';
    t.rows = t.rows.filter((r) => r[0] !== 'Juniperfold-C004' && r[0] !== 'Juniperfold-C005');
    t.rows.push(added);
  });
  editEcsv(join(b, 'sn_hubble_flow.ecsv'), (t) => {
    put('sn_hubble_flow', 'hf-0001', 'z', cell(t, 'hf-0001', 'z'), '0.0288');
    setCell(t, 'hf-0001', 'z', '0.0288');
  });
  editEcsv(join(b, 'systems.ecsv'), (t) => {
    put('systems', 'Alder', 'age_gyr', cell(t, 'Alder', 'age_gyr'), null);
    setCell(t, 'Alder', 'age_gyr', '');
  });
  editEcsv(join(b, 'main_sequence.ecsv'), (t) => {
    put('main_sequence', 'Alder-003', 'color', cell(t, 'Alder-003', 'color'), '0.7586');
    setCell(t, 'Alder-003', 'color', '0.7586');
  });
  // parallax.ecsv: column ra renamed ra_deg (no longer read: every ra value disappears);
  // parallax and parallax_err written in uas instead of mas (same values after conversion).
  const before = readEcsv(join(a, 'parallax.ecsv'));
  parallaxRows = before.rows.length;
  for (const r of before.rows) put('parallax', r[0], 'ra', r[before.header.indexOf('ra')], null);
  editEcsv(join(b, 'parallax.ecsv'), (t) => {
    t.comments = t.comments.map((c) =>
      c
        .replace('{name: ra,', '{name: ra_deg,')
        .replace('{name: parallax, unit: mas,', '{name: parallax, unit: uas,')
        .replace('{name: parallax_err, unit: mas,', '{name: parallax_err, unit: uas,'),
    );
    t.header[t.header.indexOf('ra')] = 'ra_deg';
    for (const col of ['parallax', 'parallax_err']) {
      const k = t.header.indexOf(col);
      // x 1000 by moving the decimal point in the text (no rounding)
      for (const r of t.rows) r[k] = String(Number((Number(r[k]) * 1000).toFixed(3)));
    }
  });
  editText(join(b, 'release.yaml'), (t) => t);
  report = await compareReleaseDirs(a, b);
});
afterAll(() => tmp.remove());

const key = (c: { table: string; id: string; column: string; a: unknown; b: unknown }) => [c.table, c.id, c.column, c.a ?? 'null', c.b ?? 'null'].join('|');

describe('changed rows of a constructed pair', () => {
  it('every changed cell is found, with its column and both values, and nothing else', () => {
    expect(report.input_changes.cells.map(key).sort()).toEqual([...expected].sort());
  });

  it('added and removed rows are listed', () => {
    expect(report.input_changes.added_rows.map((r) => `${r.table}|${r.id}`)).toEqual(['cepheids|Juniperfold-C999']);
    expect(report.input_changes.removed_rows.map((r) => `${r.table}|${r.id}`).sort()).toEqual(['cepheids|Juniperfold-C004', 'cepheids|Juniperfold-C005']);
    const ceph = report.inputs.find((t) => t.table === 'cepheids')!;
    expect([ceph.added, ceph.removed, ceph.changed, ceph.corrected, ceph.remeasured]).toEqual([1, 2, 3, 2, 1]);
  });

  it('per-column summaries count the changes and give the change with its sign and unit', () => {
    const ceph = report.inputs.find((t) => t.table === 'cepheids')!;
    const mh = ceph.columns.find((c) => c.column === 'm_h')!;
    expect(mh.changed).toBe(2);
    expect(mh.unit).toBe('mag');
    // 26.28 -> 26.31 (+0.03) and 25.684 -> 25.7 (+0.016): median +0.023, largest +0.03
    expect(mh.median!).toBeCloseTo(0.023, 12);
    expect(mh.largest!).toBeCloseTo(0.03, 12);
    expect(mh.largest_id).toBe('Juniperfold-C001');
    const sys = report.inputs.find((t) => t.table === 'systems')!;
    expect(sys.columns).toEqual([{ column: 'age_gyr', unit: 'Gyr', changed: 1, appeared: 0, disappeared: 1, median: null, largest: null, largest_id: null }]);
    const par = report.inputs.find((t) => t.table === 'parallax')!;
    expect(par.columns.map((c) => [c.column, c.changed, c.disappeared])).toEqual([['ra', parallaxRows, parallaxRows]]);
  });

  it('the renamed column and the changed units are reported', () => {
    const par = report.inputs.find((t) => t.table === 'parallax')!;
    const changes = par.column_changes.map((c) => [c.kind, c.column_a, c.column_b, c.unit_a, c.unit_b]);
    expect(changes).toContainEqual(['renamed', 'ra', 'ra_deg', 'deg', 'deg']);
    expect(changes).toContainEqual(['unit', 'parallax', 'parallax', 'mas', 'uas']);
    expect(changes).toContainEqual(['unit', 'parallax_err', 'parallax_err', 'mas', 'uas']);
    expect(changes.length).toBe(3);
  });
});
