// What the budget and global-fit pages are given (src/report/pageData.ts) for the demo
// release 2026.3: every systematic source with each alternative's shift, the noise expected
// and the net shift, as in results.json; and the host-scatter test with one row per host.
// Kind: pipeline check on the committed data (page data only; the site build is checked in
// report.test.ts).
import { dirname, join } from 'node:path';
import { fileURLToPath } from 'node:url';
import { beforeAll, describe, expect, it } from 'vitest';
import { calibrateReleaseDir } from '../../src/cli/calibrate.ts';
import { releaseData } from '../../src/report/pageData.ts';
import { resultTables } from '../../src/report/resultTables.ts';
import type { Results } from '../../src/types/results.ts';

const ROOT = join(dirname(fileURLToPath(import.meta.url)), '..', '..');
let r: Results;

beforeAll(async () => {
  r = await calibrateReleaseDir(join(ROOT, 'content', 'releases', '2026.3'));
});

function data() {
  return releaseData({
    results: r,
    figures: {},
    downloads: [],
    tableDownload: (name) => ({ csv: `${name}.csv`, ecsv: `${name}.ecsv` }),
    summaryProse: 'x/summary',
    notesProse: null,
    previousBuilt: false,
  });
}

describe('budget page data', () => {
  it('one row per alternative, grouped by source, with shift, noise and net shift as in results.json', () => {
    const t = data().budget.sources!;
    expect(t.columns.map((c) => c.key)).toEqual(['source', 'sigma', 'alternative', 'delta', 'noise', 'net']);
    expect(t.rows.length).toBe(r.variants.length);
    const clip = t.rows.find((row) => row[2] === 'clipping at 3.0 sigma')!;
    const v = r.variants.find((x) => x.name === 'clipping at 3.0 sigma')!;
    expect(clip[0]).toBe('Outlier rejection threshold');
    expect(clip[3]).toBe(v.delta_h0!.toFixed(2));
    expect(clip[4]).toBe(v.noise_h0!.toFixed(2));
    expect(clip[5]).toBe(v.delta_h0_net!.toFixed(2));
    const rv = t.rows.find((row) => row[2] === 'R_V 3.3')!;
    expect(rv[4]).toBe('0 (same data)');
    // the budget table has one systematic line per source, not per variant
    expect(data().budget.table!.rows.filter((row) => row[1] === 'systematic').length).toBe(r.systematics!.length);
  });

  it('the download of the sources holds the same rows', () => {
    const tables = resultTables(r);
    const s = tables.find((t) => t.name === 'systematic_sources')!;
    expect(s.rows.length).toBe(r.variants.length);
    expect(s.rows.every((row) => typeof row.source === 'string' && typeof row.sigma_source === 'number')).toBe(true);
  });
});

describe('global-fit page data', () => {
  it('shows the host test as a key value and a table with one row per host tested', () => {
    const g = data().globalFit;
    const q = r.fit.quality!;
    expect(g.keyValues.some((kv) => kv.label.startsWith('Cepheid scatter alike') && kv.value.startsWith(q.passed ? 'passed' : 'FAILED'))).toBe(true);
    const t = g.tables.find((x) => x.id === 'host-scatter')!;
    expect(t.rows.map((row) => row[0])).toEqual(q.groups.map((x) => x.system));
    expect(q.groups.length).toBeGreaterThanOrEqual(10);
  });
});
