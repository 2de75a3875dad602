/**
 * Demo releases: determinism, what changes between releases and what does not,
 * the committed folders, the scenario's shape, and the truth-file guard.
 * [edge] bytes and structure; [statistics] none here.
 */
import { existsSync, mkdtempSync, readFileSync, readdirSync, rmSync } from 'node:fs';
import { tmpdir } from 'node:os';
import { dirname, join } from 'node:path';
import { fileURLToPath } from 'node:url';
import { parse as parseYaml } from 'yaml';
import { afterAll, describe, expect, it } from 'vitest';
import { DEMO_SEED, MH_OFFSET_MAG, generateDemoReleases, generateUniverse, offsetHosts, writeGeneratedRelease } from '../../src/demo/index.ts';
import { ANALYSIS_KEYS } from '../../src/types/analysis.ts';
import { TABLE_NAMES } from '../../src/types/release.ts';
import { HALF_UNIT_3RD_DECIMAL, HALF_UNIT_4TH_DECIMAL } from '../tolerances.ts';
import { ecsvRecords, parseEcsvText } from './ecsvText.ts';

const ROOT = join(dirname(fileURLToPath(import.meta.url)), '..', '..');
const RELEASES_DIR = join(ROOT, 'content', 'releases');
const IDS = ['2026.1', '2026.2', '2026.3'];
const TABLE_FILES = TABLE_NAMES.map((t) => `${t}.ecsv`);

const demo = generateDemoReleases(DEMO_SEED, 1);
const byId = new Map(demo.map((r) => [r.truth.releaseId, r.files]));
const files = (id: string): Record<string, string> => byId.get(id)!;

/** Columns of each table in the release format (the contract as agreed, content/guide/input-format.md; kept by hand, independent of the registry). */
const CONTRACT_COLUMNS: Record<string, string[]> = {
  systems: ['system', 'kind', 'feh', 'feh_err', 'ebv', 'ebv_err', 'age_gyr'],
  parallax: ['star', 'system', 'parallax', 'parallax_err', 'ra', 'dec'],
  main_sequence: ['star', 'system', 'color', 'color_err', 'mag', 'mag_err'],
  cepheids: ['star', 'system', 'period', 'm_h', 'm_h_err', 'm_v', 'm_v_err', 'm_i', 'm_i_err', 'oh'],
  sn_calibrators: ['sn', 'system', 'm_b', 'm_b_err', 'x1', 'x1_err', 'c', 'c_err', 'cov_mb_x1', 'cov_mb_c', 'cov_x1_c', 'host_logmass'],
  sn_hubble_flow: ['sn', 'z', 'z_err', 'm_b', 'm_b_err', 'x1', 'x1_err', 'c', 'c_err', 'cov_mb_x1', 'cov_mb_c', 'cov_x1_c', 'host_logmass'],
};
const OPTIONAL = new Set(['feh', 'feh_err', 'ebv', 'ebv_err', 'age_gyr', 'ra', 'dec', 'oh', 'cov_mb_x1', 'cov_mb_c', 'cov_x1_c', 'host_logmass']);

describe('determinism [edge]', () => {
  it('the same seed gives identical bytes', () => {
    const again = generateDemoReleases(DEMO_SEED, 1);
    again.forEach((r, k) => expect(r.files).toEqual(demo[k]!.files));
  });

  it('another seed changes every table', () => {
    const other = generateDemoReleases(DEMO_SEED + 1, 1)[0]!.files;
    for (const f of TABLE_FILES) expect(other[f], f).not.toBe(files('2026.1')[f]);
  });

  it('the committed releases are exactly what the generator writes (no hand edits, no truth file)', () => {
    for (const id of IDS) {
      const dir = join(RELEASES_DIR, id);
      // blinding.json is written by `rungbook blind`, recovery.json by `rungbook recover` (tests/recover)
      const onDisk = readdirSync(dir)
        .filter((f) => f !== 'blinding.json' && f !== 'recovery.json')
        .sort();
      expect(onDisk).toEqual(Object.keys(files(id)).sort());
      for (const name of onDisk) expect(readFileSync(join(dir, name), 'utf8'), `${id}/${name}`).toBe(files(id)[name]);
      expect(existsSync(join(dir, 'truth.json'))).toBe(false);
    }
  });
});

describe('differences between releases [edge]', () => {
  const same = (a: string, b: string, f: string): boolean => files(a)[f] === files(b)[f];

  it('2026.2 replaces only the parallaxes (and its manifest and notes)', () => {
    for (const f of TABLE_FILES) expect(same('2026.1', '2026.2', f), f).toBe(f !== 'parallax.ecsv');
  });

  it('2026.3 changes only the Cepheids and the Hubble flow', () => {
    for (const f of TABLE_FILES) expect(same('2026.2', '2026.3', f), f).toBe(f !== 'cepheids.ecsv' && f !== 'sn_hubble_flow.ecsv');
  });

  it("catalogue B parallax errors are 0.6 times catalogue A's, star by star", () => {
    const a = ecsvRecords(files('2026.1')['parallax.ecsv']!);
    const b = ecsvRecords(files('2026.2')['parallax.ecsv']!);
    expect(b.map((r) => r.star)).toEqual(a.map((r) => r.star));
    // Both errors are rounded to 4 decimals: the ratio holds to 1.6 half-units of the 4th decimal.
    a.forEach((r, i) => expect(Math.abs((b[i]!.parallax_err as number) - 0.6 * (r.parallax_err as number))).toBeLessThan(1.6 * HALF_UNIT_4TH_DECIMAL));
  });

  it('2026.3 extends the Hubble flow from 150 to 250 rows, the first 150 unchanged', () => {
    const body = (id: string): string[] => parseEcsvText(files(id)['sn_hubble_flow.ecsv']!).cells.map((c) => c.join(','));
    const before = body('2026.2');
    const after = body('2026.3');
    expect(before.length).toBe(150);
    expect(after.length).toBe(250);
    expect(after.slice(0, 150)).toEqual(before);
  });

  it('2026.3 corrects m_h of the two offset hosts by 0.03 mag and leaves every other Cepheid value alone', () => {
    const hosts = offsetHosts(generateUniverse(DEMO_SEED, 1));
    expect(hosts.length).toBe(2);
    const before = ecsvRecords(files('2026.2')['cepheids.ecsv']!);
    const after = ecsvRecords(files('2026.3')['cepheids.ecsv']!);
    expect(after.map((r) => r.star)).toEqual(before.map((r) => r.star));
    let corrected = 0;
    after.forEach((r, i) => {
      const old = before[i]!;
      for (const col of CONTRACT_COLUMNS.cepheids!) {
        if (col === 'm_h' && hosts.includes(r.system as string)) {
          // Values are rounded to 3 decimals before and after, so the step is 0.03 within two half-units.
          expect(Math.abs((old.m_h as number) - (r.m_h as number) - MH_OFFSET_MAG)).toBeLessThanOrEqual(2 * HALF_UNIT_3RD_DECIMAL);
          corrected++;
        } else expect(r[col], `${r.star} ${col}`).toBe(old[col]);
      }
    });
    expect(corrected).toBeGreaterThanOrEqual(40);
  });
});

describe('release.yaml and tables follow the release format [edge]', () => {
  it('manifests: quoted id equal to the folder, previous chain, not blinded, known analysis keys, 3-8 variants', () => {
    const previous: Record<string, string | null> = { '2026.1': null, '2026.2': '2026.1', '2026.3': '2026.2' };
    for (const id of IDS) {
      const text = files(id)['release.yaml']!;
      expect(text).toContain(`id: "${id}"`);
      const y = parseYaml(text) as Record<string, unknown> & { analysis: Record<string, unknown> & { variants: Record<string, unknown>[] } };
      expect(Object.keys(y).sort()).toEqual(['analysis', 'blinded', 'date', 'id', 'previous', 'title']);
      expect(y.id).toBe(id);
      expect(y.previous).toBe(previous[id]);
      expect(y.blinded).toBe(false);
      expect(String(y.date)).toMatch(/^2026-\d\d-\d\d$/);
      for (const key of Object.keys(y.analysis)) expect([...ANALYSIS_KEYS, 'variants']).toContain(key);
      expect(y.analysis.variants.length).toBeGreaterThanOrEqual(3);
      // up to 8: the extinction law and the clipping threshold have an alternative on each side of the baseline, and the host-mass step one
      expect(y.analysis.variants.length).toBeLessThanOrEqual(8);
      for (const v of y.analysis.variants) {
        expect(typeof v.name).toBe('string');
        for (const key of Object.keys(v)) expect(['name', ...ANALYSIS_KEYS]).toContain(key);
      }
      expect(typeof y.analysis.parallax_zero_point).toBe('number');
    }
    const err = (id: string): unknown => (parseYaml(files(id)['release.yaml']!) as { analysis: Record<string, unknown> }).analysis.parallax_zero_point_err;
    expect(err('2026.1')).toBe(0.01);
    expect(err('2026.2')).toBe(0.004);
    const dates = IDS.map((id) => String((parseYaml(files(id)['release.yaml']!) as { date: unknown }).date));
    expect([...dates].sort()).toEqual(dates);
  });

  it('tables have the contract columns with one description each, finite required cells and positive errors', () => {
    for (const id of IDS) {
      for (const table of TABLE_NAMES) {
        const parsed = parseEcsvText(files(id)[`${table}.ecsv`]!);
        expect(parsed.names, `${id} ${table}`).toEqual(CONTRACT_COLUMNS[table]);
        for (const col of parsed.header.datatype) expect(col.description, `${table}.${col.name}`).toMatch(/\S/);
        const rows = ecsvRecords(files(id)[`${table}.ecsv`]!);
        expect(rows.length).toBeGreaterThan(0);
        const idCol = parsed.names[0]!;
        expect(new Set(rows.map((r) => r[idCol])).size, `${table}: unique ids`).toBe(rows.length);
        for (const r of rows) {
          for (const col of parsed.header.datatype) {
            const v = r[col.name];
            if (v === null) expect(OPTIONAL.has(col.name), `${table}.${col.name} empty`).toBe(true);
            else if (col.datatype === 'float64') {
              expect(Number.isFinite(v), `${table}.${col.name}`).toBe(true);
              if (col.name.endsWith('_err')) expect(v as number).toBeGreaterThan(0);
            }
          }
        }
      }
    }
  });

  it('every system named by another table exists; field stars appear in both parallax and cepheids', () => {
    const f = files('2026.3');
    const systems = new Set(ecsvRecords(f['systems.ecsv']!).map((r) => r.system));
    for (const t of ['parallax', 'main_sequence', 'cepheids', 'sn_calibrators']) {
      for (const r of ecsvRecords(f[`${t}.ecsv`]!)) expect(systems.has(r.system), `${t} ${r.system}`).toBe(true);
    }
    const kinds = new Map(ecsvRecords(f['systems.ecsv']!).map((r) => [r.system, r.kind]));
    const fieldParallax = ecsvRecords(f['parallax.ecsv']!)
      .filter((r) => kinds.get(r.system) === 'field')
      .map((r) => r.star);
    const fieldCepheids = ecsvRecords(f['cepheids.ecsv']!)
      .filter((r) => kinds.get(r.system) === 'field')
      .map((r) => r.star);
    expect(fieldParallax.length).toBe(40);
    expect(fieldCepheids).toEqual(fieldParallax);
  });
});

describe('scenario shape at scale 1 and scaling [edge]', () => {
  const u = generateUniverse(DEMO_SEED, 1);
  const groups = (g: string) => u.systems.filter((s) => s.group === g);
  const count = <T extends { system: string | null }>(xs: T[], id: string) => xs.filter((x) => x.system === id).length;

  it('anchors, field group, targets, galaxy, hosts and Hubble flow as specified', () => {
    expect(groups('anchor').length).toBe(5);
    for (const a of groups('anchor')) {
      expect(a.distancePc!).toBeGreaterThanOrEqual(40);
      expect(a.distancePc!).toBeLessThanOrEqual(400);
      const n = count(u.parallaxStars, a.id);
      expect(n).toBeGreaterThanOrEqual(30);
      expect(n).toBeLessThanOrEqual(120);
    }
    expect(groups('anchor').filter((a) => count(u.cepheids, a.id) === 0).length).toBeGreaterThan(0);
    const field = u.parallaxStars.filter((s) => s.system === groups('field')[0]!.id);
    expect(field.length).toBe(40);
    for (const s of field) expect(s.distancePc >= 300 && s.distancePc <= 3000).toBe(true);
    expect(groups('ms_target').length).toBe(3);
    for (const t of groups('ms_target')) {
      expect(t.distancePc! >= 500 && t.distancePc! <= 2000).toBe(true);
      expect(t.ebvPrior!.err).not.toBeNull();
      const n = count(u.cepheids, t.id);
      expect(n >= 2 && n <= 4).toBe(true);
    }
    const galaxy = groups('galaxy')[0]!;
    expect(galaxy.mu! >= 18.4 && galaxy.mu! <= 18.6).toBe(true);
    expect(count(u.cepheids, galaxy.id)).toBe(300);
    expect(groups('sn_host').length).toBe(9);
    for (const h of groups('sn_host')) {
      expect(h.mu! >= 30.5 && h.mu! <= 33).toBe(true);
      const n = count(u.cepheids, h.id);
      expect(n >= 20 && n <= 60).toBe(true);
      const sn = count(u.snCalibrators, h.id);
      expect(sn === 1 || sn === 2).toBe(true);
    }
    const z = u.snHubbleFlow.map((s) => s.zCosmological!);
    expect(z.length).toBe(250);
    expect(Math.min(...z)).toBeLessThan(0.0233);
    expect(Math.max(...z)).toBeGreaterThan(0.15);
  });

  it('colours reach outside the analysis range 0.4-1.2, and field parallaxes of catalogue A reach fractional errors of 0.2-0.5', () => {
    const c0 = u.mainSequence.map((m) => m.color0);
    expect(c0.some((c) => c < 0.4)).toBe(true);
    expect(c0.some((c) => c > 1.2)).toBe(true);
    const parallax = ecsvRecords(files('2026.1')['parallax.ecsv']!).filter((r) => r.system === groups('field')[0]!.id);
    const frac = Math.max(...parallax.map((r) => (r.parallax_err as number) / (1000 / u.parallaxStars.find((s) => s.star === r.star)!.distancePc)));
    expect(frac).toBeGreaterThan(0.2);
    expect(frac).toBeLessThan(0.5);
  });

  it('scale 4 multiplies members, Cepheids per system, hosts and the Hubble-flow pool (rows grow linearly)', () => {
    const u4 = generateUniverse(DEMO_SEED, 4);
    expect(u4.systems.filter((s) => s.group === 'sn_host').length).toBe(36);
    expect(u4.snHubbleFlow.length).toBe(1000);
    expect(u4.cepheids.filter((c) => c.group === 'field').length).toBe(160);
    expect(u4.cepheids.filter((c) => c.group === 'galaxy').length).toBe(1200);
    // supernova hosts grow in number, not in Cepheids each, so host Cepheid rows grow as the scale
    for (const h of u4.systems.filter((s) => s.group === 'sn_host')) {
      const n = count(u4.cepheids, h.id);
      expect(n >= 20 && n <= 60).toBe(true);
    }
    const hostCepheids = (u: typeof u4) => u.cepheids.filter((c) => c.group === 'sn_host').length;
    const ratio = hostCepheids(u4) / hostCepheids(generateUniverse(DEMO_SEED, 1));
    expect(ratio).toBeGreaterThan(3);
    expect(ratio).toBeLessThan(5);
  });
});

describe('writeGeneratedRelease [edge]', () => {
  const tmp = mkdtempSync(join(tmpdir(), 'rungbook-demo-'));
  afterAll(() => rmSync(tmp, { recursive: true, force: true }));

  it('writes <dir>/<id>/ with the tables, release.yaml and truth.json, and returns the truth', () => {
    const truth = writeGeneratedRelease(tmp, 'run-7', { seed: 7, scale: 0.5 });
    expect(truth.dir).toBe(join(tmp, 'run-7'));
    const written = readdirSync(truth.dir).sort();
    expect(written).toEqual(['release.yaml', 'truth.json', ...TABLE_FILES].sort());
    expect(readFileSync(join(truth.dir, 'release.yaml'), 'utf8')).toContain('id: "run-7"');
    const onDisk = JSON.parse(readFileSync(join(truth.dir, 'truth.json'), 'utf8'));
    expect(onDisk.parameters.h0KmSMpc).toBe(truth.parameters.h0KmSMpc);
    expect(truth.mhOffsetsMag).toEqual({});
    expect(truth.rows.sn_hubble_flow).toBe(125);
  });

  it('takes overrides: truth parameters, omitted tables, analysis keys, no truth file', () => {
    const truth = writeGeneratedRelease(tmp, 'run-8', {
      seed: 8,
      scale: 0.25,
      parameters: { h0KmSMpc: 65 },
      omitTables: ['sn_calibrators', 'sn_hubble_flow'],
      analysis: { clip_sigma: null },
      writeTruth: false,
    });
    expect(truth.parameters.h0KmSMpc).toBe(65);
    const written = readdirSync(truth.dir);
    expect(written).not.toContain('truth.json');
    expect(written).not.toContain('sn_hubble_flow.ecsv');
    expect(readFileSync(join(truth.dir, 'release.yaml'), 'utf8')).toContain('clip_sigma: null');
  });

  it('refuses to write truth.json under content/releases', () => {
    expect(() => writeGeneratedRelease(join(tmp, 'content', 'releases'), 'x', { seed: 1, scale: 0.1 })).toThrow(/refusing/);
    expect(existsSync(join(tmp, 'content', 'releases', 'x', 'truth.json'))).toBe(false);
  });
});
