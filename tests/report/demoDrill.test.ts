/**
 * The drill-down of the demo report, built as a user builds it: a page for every system of every
 * release (the list read from each release's own systems file, not from the results), an anchor
 * for every object row of the input files on its system's page, links from the places that name
 * objects (rejected rows, the comparison's rows that moved H0) that resolve to those anchors, the
 * leave-one-out figure on each overview, the history of the parameters with blinding respected,
 * and the shares of the comparison shown only when they mean something.
 * Kind: pipeline checks on the committed demo data.
 */
import { existsSync, readFileSync } from 'node:fs';
import { rm } from 'node:fs/promises';
import { join } from 'node:path';
import { afterAll, beforeAll, describe, expect, it } from 'vitest';
import { calibrateReleaseDir } from '../../src/cli/calibrate.ts';
import type { Results } from '../../src/types/results.ts';
import { readTable } from '../trust/releaseCopy.ts';
import { BASE, buildDemo, DEMO_BUILD_TIMEOUT_MS, DEMO_RELEASES, type DemoBuild, pageNumber } from './demoBuild.ts';
import { checkLinks } from './linkCheck.ts';

const IDS = ['2026.1', '2026.2', '2026.3', '2026.4'] as const;
/** The same budget as the fixture report's test (tests/report/report.test.ts). */
const MAX_PAGE_BYTES = 300_000;

let site: DemoBuild;
const results = new Map<string, Results>();

beforeAll(async () => {
  site = await buildDemo();
  for (const id of IDS) results.set(id, await calibrateReleaseDir(join(DEMO_RELEASES, id)));
}, DEMO_BUILD_TIMEOUT_MS);

afterAll(async () => {
  if (site) await rm(site.tmp, { recursive: true, force: true });
});

/** Values of one column of a release's input table, read from the file. */
function column(id: string, table: string, name: string): string[] {
  const path = join(DEMO_RELEASES, id, `${table}.ecsv`);
  if (!existsSync(path)) return [];
  const t = readTable(path);
  const j = t.columns.indexOf(name);
  if (j < 0) throw new Error(`${path} has no column ${name}`);
  return t.rows.map((r) => r[j]!);
}

const systemPage = (id: string, system: string) => `releases/${id}/systems/${system}/index.html`;

describe('system pages', () => {
  it('exist for every system of every demo release, and the index links each of them', () => {
    for (const id of IDS) {
      const systems = column(id, 'systems', 'system');
      expect(systems.length).toBeGreaterThan(10);
      const links = new Set(
        Array.from(
          site
            .doc(`releases/${id}/systems/index.html`)
            .querySelectorAll('#table-systems-index ~ .table-scroll a, section[aria-labelledby="table-systems-index"] a'),
        ).map((a) => a.getAttribute('href')),
      );
      for (const s of systems) {
        // Demo names are plain, so the folder is the name itself (src/layout/anchors.ts).
        expect(existsSync(join(site.dist, systemPage(id, s))), `${id}/${s}`).toBe(true);
        expect(links.has(`${BASE}releases/${id}/systems/${s}/`), `index of ${id} links ${s}`).toBe(true);
      }
    }
  });

  it('anchor every object row of the input files on its system’s page', () => {
    for (const id of IDS) {
      const tables: [string, string][] = [
        ['cepheids', 'star'],
        ['sn_calibrators', 'sn'],
        ['parallax', 'star'],
        ['main_sequence', 'star'],
      ];
      let n = 0;
      for (const [table, idCol] of tables) {
        const objects = column(id, table, idCol);
        const systems = column(id, table, 'system');
        objects.forEach((o, i) => {
          const row = site.doc(systemPage(id, systems[i]!)).getElementById(o);
          expect(row, `${id} ${table} ${o}`).not.toBeNull();
          expect(row!.tagName).toBe('TR');
          expect(row!.querySelector('th')!.textContent).toContain(o);
          n += 1;
        });
      }
      expect(n).toBeGreaterThan(1000);
    }
  });

  it('give each object its input file and line', () => {
    const doc = site.doc(systemPage('2026.3', 'Lindenmarsh'));
    const file = readFileSync(join(DEMO_RELEASES, '2026.3', 'cepheids.ecsv'), 'utf8').split('\n');
    const rows = Array.from(doc.querySelectorAll('section[aria-labelledby="table-system-cepheids"] tbody tr'));
    expect(rows.length).toBe(column('2026.3', 'cepheids', 'system').filter((s) => s === 'Lindenmarsh').length);
    for (const tr of rows) {
      const cells = Array.from(tr.children).map((c) => c.textContent!.trim());
      expect(cells[1]).toBe('cepheids.ecsv');
      // The line named on the page holds that Cepheid in the file (1-based, as an editor shows it).
      expect(file[Number(cells[2]) - 1]!.startsWith(`${tr.id},Lindenmarsh,`)).toBe(true);
    }
  });

  it('show the distance before and after the fit and the distance in every release that has the system', () => {
    const r = results.get('2026.3')!;
    const s = r.systems.find((x) => x.id === 'Lindenmarsh')!;
    const text = site.doc(systemPage('2026.3', 'Lindenmarsh')).querySelector('main')!.textContent!;
    expect(text).toContain(`${s.mu!.toFixed(3)}`);
    const hist = Array.from(site.doc(systemPage('2026.3', 'Lindenmarsh')).querySelectorAll('section[aria-labelledby="table-system-history"] tbody tr'));
    const having = IDS.filter((id) => column(id, 'systems', 'system').includes('Lindenmarsh'));
    expect(hist.map((tr) => tr.querySelector('th')!.textContent!.trim())).toEqual(having);
  });
});

describe('links to objects', () => {
  it('resolve everywhere, fragments included, with nothing loaded from outside', async () => {
    const report = await checkLinks(site.dist, BASE);
    expect(report.problems).toEqual([]);
    expect(report.fragments).toBeGreaterThan(100);
  }, 300_000);

  it('go from each rejected row to its row on its system’s page', () => {
    const rej = results.get('2026.3')!.rejected.filter((x) => x.system !== null);
    expect(rej.length).toBeGreaterThan(0);
    const doc = site.doc('releases/2026.3/global-fit/index.html');
    const hrefs = Array.from(doc.querySelectorAll('section[aria-labelledby="table-all-rejected"] tbody th a')).map((a) => a.getAttribute('href'));
    for (const x of rej) expect(hrefs).toContain(`${BASE}releases/2026.3/systems/${x.system}/#${x.id}`);
  });

  it('go from the comparison’s rows that moved H0 to the rows themselves', () => {
    const doc = site.doc('releases/2026.3/compare/index.html');
    const rows = Array.from(doc.querySelectorAll('section[aria-labelledby="table-top-objects"] tbody tr'));
    expect(rows.length).toBeGreaterThan(0);
    const linked = rows.map((tr) => tr.querySelectorAll('td')[0]!.querySelector('a')?.getAttribute('href') ?? null);
    // Hubble-flow supernovae have no system page; every other row links.
    const withSystem = rows.filter((tr) => tr.querySelectorAll('td')[1]!.textContent!.trim() !== '—');
    expect(linked.filter(Boolean).length).toBe(withSystem.length);
  });
});

describe('leave-one-out on the overview', () => {
  it('draws one point per system with its shift, and the CSV agrees with the system pages', () => {
    for (const id of ['2026.3', '2026.4']) {
      const overview = site.doc(`releases/${id}/index.html`);
      expect(overview.querySelector('#figure-leave-one-out svg')).not.toBeNull();
      const [head, ...lines] = readFileSync(join(site.dist, `releases/${id}/figures/leave-one-out.csv`), 'utf8')
        .trim()
        .split('\n');
      const cols = head!.split(',');
      const rows = lines.map((l) => Object.fromEntries(l.split(',').map((v, k) => [cols[k]!, v])));
      expect(rows.map((r) => r.system)).toEqual(column(id, 'systems', 'system'));
      const drawn = overview.querySelectorAll('#figure-leave-one-out [data-row]').length;
      expect(drawn).toBe(rows.filter((r) => r.shift_percent !== '').length);
      const lind = rows.find((r) => r.system === 'Lindenmarsh')!;
      const page = site.doc(systemPage(id, 'Lindenmarsh')).querySelector('main')!.textContent!;
      expect(page).toContain(`${Number(lind.shift_percent) < 0 ? '\u2212' : '+'}${Math.abs(Number(lind.shift_percent)).toFixed(2)} %`);
      if (id === '2026.4') {
        // Blinded: no shift in km/s/Mpc and no H0 without the system anywhere.
        expect(lind.shift).toBe('');
        expect(lind.h0_without).toBe('');
        expect(page).not.toMatch(/H0 without this system/);
      } else {
        expect(Math.abs(pageNumber(page.match(/moves by ([−+][\d.]+) ±/)![1]!) - Number(lind.shift))).toBeLessThan(0.006);
      }
    }
  });
});

describe('history across releases', () => {
  it('lists every parameter of every release, and no H0 value of the blinded one', () => {
    const doc = site.doc('history/index.html');
    const rows = Array.from(doc.querySelectorAll('section[aria-labelledby="table-parameter-history"] tbody tr')).map((tr) =>
      Array.from(tr.children).map((c) => c.textContent!.trim()),
    );
    expect(rows.map((r) => r[0]!.replace(/\s.*$/, ''))).toEqual([...IDS]);
    for (const [i, id] of IDS.entries()) {
      const r = results.get(id)!;
      const h0 = rows[i]![2]!;
      if (r.blinded) {
        expect(h0).toMatch(/^blinded/);
        expect(h0).not.toContain(r.h0!.value.toFixed(2));
      } else {
        expect(pageNumber(h0.split(' ± ')[0]!)).toBeCloseTo(r.h0!.value, 1);
      }
      // The slope of the period-luminosity relation, column 6 (release, date, H0, zero point, M_W, b_W).
      expect(pageNumber(rows[i]![5]!.split(' ± ')[0]!)).toBeCloseTo(r.parameters.b_W!.value, 2);
    }
  });
});

describe('comparison page', () => {
  it('shows shares of the H0 shift only when every contribution has the sign of the shift', () => {
    for (const id of ['2026.2', '2026.3']) {
      const doc = site.doc(`releases/${id}/compare/index.html`);
      const section = doc.querySelector('section[aria-labelledby="table-attribution"]');
      if (!section) continue;
      const cells = Array.from(section.querySelectorAll('tbody tr')).map((tr) => tr.children[4]!.textContent!.trim());
      for (const c of cells) {
        if (c === '—') continue;
        const v = pageNumber(c);
        expect(v, `${id}: share ${c}`).toBeGreaterThanOrEqual(0);
        expect(v, `${id}: share ${c}`).toBeLessThanOrEqual(100.05);
      }
    }
  });
});

describe('page weight', () => {
  it('keeps every page under the budget', () => {
    expect(site.summary.largestPage!.bytes).toBeLessThan(MAX_PAGE_BYTES);
  });
});
