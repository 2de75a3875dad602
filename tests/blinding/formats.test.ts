// Blinding edits only the m_b cells of the Hubble-flow table, in every text layout the
// readers accept, and unblinding restores the values exactly. Kind: edge cases of the
// table text (delimiters, quoting, comments, CRLF, byte-order mark, exponent notation,
// many decimals) checked through the real readers.
import { readFileSync, readdirSync } from 'node:fs';
import { join } from 'node:path';
import { describe, expect, it } from 'vitest';
import { applyBlindingRecord } from '../../src/blinding/apply.ts';
import { blindReleaseFolder } from '../../src/blinding/blindFolder.ts';
import { addDecimal, formatDecimal, parseDecimal } from '../../src/blinding/decimal.ts';
import { BlindingError } from '../../src/blinding/errors.ts';
import { readBlindingRecord } from '../../src/blinding/record.ts';
import { deriveOffsetUnits, offsetDecimal } from '../../src/blinding/scheme.ts';
import { columnCells } from '../../src/blinding/tableText.ts';
import { unblindRecord } from '../../src/blinding/unblind.ts';
import { loadRelease } from '../../src/io/release.ts';
import { edited, setCell, validRelease, writeRelease, type ReleaseDef, type WriteOptions } from '../io/fixtures.ts';
import { TEST_KEY } from './helpers.ts';

const key = Buffer.from(TEST_KEY);
const ID = 'formats';
const units = deriveOffsetUnits(key, ID);
const DATE = '2026-05-01';

/** Blind a fixture release in place; returns the folder, the original texts and the blinded ones. */
function blindFixture(def: ReleaseDef, opts: WriteOptions = {}) {
  const dir = writeRelease(def, opts);
  const before = Object.fromEntries(readdirSync(dir).map((f) => [f, readFileSync(join(dir, f), 'utf8')]));
  const original = loadRelease(dir);
  blindReleaseFolder(dir, key, { blindingId: ID, date: DATE });
  const after = Object.fromEntries(readdirSync(dir).map((f) => [f, readFileSync(join(dir, f), 'utf8')]));
  return { dir, before, after, original, blinded: loadRelease(dir) };
}

/** The blinded table text with every m_b cell put back to its original text equals the original text. */
function onlyMbChanged(beforeText: string, afterText: string, format: 'ecsv' | 'csv'): void {
  const a = columnCells(beforeText, format, 'm_b');
  const b = columnCells(afterText, format, 'm_b');
  expect(b.map((c) => c.line)).toEqual(a.map((c) => c.line));
  let rebuilt = afterText;
  for (let i = b.length - 1; i >= 0; i--) rebuilt = rebuilt.slice(0, b[i]!.start) + a[i]!.text + rebuilt.slice(b[i]!.end);
  expect(rebuilt).toBe(beforeText);
  // Each blinded cell is the original minus the offset, as exact decimals.
  b.forEach((cell, i) => {
    const orig = parseDecimal(a[i]!.text)!;
    const back = addDecimal(parseDecimal(cell.text)!, offsetDecimal(units));
    expect(formatDecimal(back).replace(/\.?0+$/, ''), `line ${cell.line}`).toBe(formatDecimal(orig).replace(/\.?0+$/, ''));
  });
}

function unblindsExactly(dir: string, original: ReturnType<typeof loadRelease>): void {
  const record = unblindRecord(readBlindingRecord(dir)!, key, { by: 'Test Person', date: '2026-06-01' });
  const restored = applyBlindingRecord(loadRelease(dir), record);
  expect(restored.snHubbleFlow).toEqual(original.snHubbleFlow);
  for (const r of restored.snHubbleFlow) expect(Object.is(r.mB, original.snHubbleFlow.find((o) => o.sn === r.sn)!.mB)).toBe(true);
}

describe('table layouts', () => {
  it('ECSV with commas: only m_b cells and the blinded line change; unblinding restores the doubles exactly', () => {
    const t = blindFixture(validRelease());
    onlyMbChanged(t.before['sn_hubble_flow.ecsv']!, t.after['sn_hubble_flow.ecsv']!, 'ecsv');
    for (const f of Object.keys(t.before)) {
      if (f === 'sn_hubble_flow.ecsv') continue;
      if (f === 'release.yaml') expect(t.after[f]).toBe(t.before[f]!.replace('blinded: false', 'blinded: true'));
      else expect(t.after[f], f).toBe(t.before[f]);
    }
    expect(t.blinded.manifest.blinded).toBe(true);
    unblindsExactly(t.dir, t.original);
  });

  it('space-delimited ECSV with a quoted id holding a space and a comment line in the body', () => {
    const def = edited((d) => setCell(d, 'sn_hubble_flow', 0, 'sn', 'sn h1'));
    const dir0 = writeRelease(def, { ecsv: { delimiter: ' ' } });
    const text = readFileSync(join(dir0, 'sn_hubble_flow.ecsv'), 'utf8');
    expect(text).toContain('"sn h1"');
    const lines = text.split('\n');
    const body = lines.findIndex((l) => !l.startsWith('#'));
    lines.splice(body + 2, 0, '# a comment between rows');
    const withComment = structuredClone(def);
    delete withComment.tables.sn_hubble_flow;
    withComment.extraFiles = { 'sn_hubble_flow.ecsv': lines.join('\n') };
    const t = blindFixture(withComment, { ecsv: { delimiter: ' ' } });
    expect(t.before['sn_hubble_flow.ecsv']).toContain('# a comment between rows');
    onlyMbChanged(t.before['sn_hubble_flow.ecsv']!, t.after['sn_hubble_flow.ecsv']!, 'ecsv');
    expect(t.blinded.snHubbleFlow.map((r) => r.line)).toEqual(t.original.snHubbleFlow.map((r) => r.line));
    unblindsExactly(t.dir, t.original);
  });

  it('plain CSV with CRLF line ends and a byte-order mark', () => {
    const t = blindFixture(validRelease(), { formats: { sn_hubble_flow: 'csv' }, text: { eol: '\r\n', bom: true } });
    const before = t.before['sn_hubble_flow.csv']!;
    const after = t.after['sn_hubble_flow.csv']!;
    expect(after.startsWith('\uFEFF')).toBe(true);
    expect(after.split('\r\n').length).toBe(before.split('\r\n').length);
    onlyMbChanged(before, after, 'csv');
    unblindsExactly(t.dir, t.original);
  });

  it('exponent notation and six decimals are shifted exactly', () => {
    const def = edited((d) => {
      setCell(d, 'sn_hubble_flow', 0, 'm_b', '1.63e1');
      setCell(d, 'sn_hubble_flow', 1, 'm_b', '17.512345');
    });
    const t = blindFixture(def);
    const cells = columnCells(t.after['sn_hubble_flow.ecsv']!, 'ecsv', 'm_b').map((c) => c.text);
    // 16.3 and 17.512345 minus the offset, with max(own decimals, 4) decimals.
    const expected = ['16.3', '17.512345'].map((v) => formatDecimal(addDecimal(parseDecimal(v)!, offsetDecimal(-units))));
    expect(cells).toEqual(expected);
    expect(cells[0]!.split('.')[1]!.length).toBe(4);
    expect(cells[1]!.split('.')[1]!.length).toBe(6);
    unblindsExactly(t.dir, t.original);
  });

  it('a VOTable Hubble-flow table is refused with a message, and nothing changes', () => {
    const dir = writeRelease(validRelease(), { formats: { sn_hubble_flow: 'vot' } });
    const before = readdirSync(dir).map((f) => readFileSync(join(dir, f), 'utf8'));
    expect(() => blindReleaseFolder(dir, key, { blindingId: ID, date: DATE })).toThrow(BlindingError);
    expect(() => blindReleaseFolder(dir, key, { blindingId: ID, date: DATE })).toThrow(/VOTable.*ECSV and CSV/);
    expect(readdirSync(dir).map((f) => readFileSync(join(dir, f), 'utf8'))).toEqual(before);
  });

  it('release.yaml without a blinded line gets one after previous, comments and CRLF kept', () => {
    const def = validRelease();
    def.manifest = def.manifest!.replace('blinded: false\n', '').replace('previous: null', 'previous: null   # first one').replace(/\n/g, '\r\n');
    const t = blindFixture(def);
    expect(t.after['release.yaml']).toBe(def.manifest.replace('previous: null   # first one\r\n', 'previous: null   # first one\r\nblinded: true\r\n'));
  });

  it('a blinded line with a comment keeps the comment', () => {
    const def = validRelease();
    def.manifest = def.manifest!.replace('blinded: false', 'blinded: false    # decided at the March meeting');
    const t = blindFixture(def);
    expect(t.after['release.yaml']).toBe(def.manifest.replace('blinded: false    #', 'blinded: true    #'));
  });
});
