/**
 * The registries of tables and rungs (src/registry) against the parts they name.
 * A rung is whole when its tables, modules, parameters, page, method note and
 * figures all exist and agree with what the calibration publishes; this test fails
 * while any part is missing, so it is the checklist of DEVELOPERS.md ("Adding a
 * rung") made executable.
 */
import { describe, expect, it } from 'vitest';
import { existsSync, readFileSync, readdirSync } from 'node:fs';
import { join } from 'node:path';
import { parse as parseYaml } from 'yaml';
import { RUNGS, HIDDEN_WHEN_BLINDED, parameterSpec } from '../../src/registry/rungs.ts';
import { TABLE_SPECS, type ColumnSpec } from '../../src/registry/tables.ts';
import { TABLE_NAMES, type Release } from '../../src/types/release.ts';
import { RELEASE_FIGURES } from '../../src/report/figures/index.ts';
import { RUNG_PAGES } from '../../src/report/pageData.ts';
import { loadRelease } from '../../src/io/release.ts';
import { calibrateRelease } from '../../src/ladder/calibrate.ts';

const ROOT = join(import.meta.dirname, '..', '..');
const METHODS = join(ROOT, 'content', 'methods');
const DEMO = join(ROOT, 'content', 'releases');

function frontmatter(file: string): Record<string, unknown> {
  const text = readFileSync(file, 'utf8');
  const m = /^---\r?\n([\s\S]*?)\r?\n---/.exec(text);
  if (!m) throw new Error(`${file}: no frontmatter`);
  return parseYaml(m[1]!) as Record<string, unknown>;
}

/** Column headers of a committed ECSV file: name -> { unit, description }. */
function ecsvHeader(file: string): Map<string, { unit?: string; description?: string; datatype: string }> {
  const yamlLines = readFileSync(file, 'utf8')
    .split('\n')
    .filter((l) => l.startsWith('# '))
    .map((l) => l.slice(2));
  const header = parseYaml(yamlLines.slice(1).join('\n')) as { datatype: { name: string; unit?: string; description?: string; datatype: string }[] };
  return new Map(header.datatype.map((c) => [c.name, c]));
}

describe('rung registry: every rung has all of its parts', () => {
  it('rung ids, pages, notes and parameter names are unique', () => {
    for (const key of ['id', 'page', 'note', 'reached'] as const) {
      const values = RUNGS.map((r) => r[key]);
      expect(new Set(values).size, key).toBe(values.length);
    }
    const names = RUNGS.flatMap((r) => r.parameters.map((p) => p.name));
    expect(new Set(names).size).toBe(names.length);
  });

  for (const rung of RUNGS) {
    describe(rung.id, () => {
      it('reads tables of the registry, and its modules exist under src/ladder', () => {
        expect(rung.tables.length).toBeGreaterThan(0);
        for (const t of rung.tables) expect(TABLE_NAMES).toContain(t);
        expect(rung.modules.length).toBeGreaterThan(0);
        for (const m of rung.modules) expect(existsSync(join(ROOT, 'src', 'ladder', m)), `src/ladder/${m}`).toBe(true);
      });

      it('has its method note, whose frontmatter names this rung and carries cautions and sources', () => {
        const file = join(METHODS, `${rung.note}.md`);
        expect(existsSync(file), `content/methods/${rung.note}.md`).toBe(true);
        const fm = frontmatter(file);
        expect(fm.rung).toBe(rung.id);
        expect((fm.cautions as unknown[] | undefined)?.length ?? 0, 'cautions').toBeGreaterThan(0);
        expect((fm.sources as unknown[] | undefined)?.length ?? 0, 'sources').toBeGreaterThan(0);
      });

      it('has its figures registered with the report', () => {
        const ids = RELEASE_FIGURES.map((f) => f.id);
        for (const f of rung.figures) expect(ids).toContain(f);
      });

      it('has its page in the report, with the same note, tables and figures', () => {
        const page = RUNG_PAGES.find((p) => p.slug === rung.page);
        expect(page, `page ${rung.page}`).toBeDefined();
        expect(page!.note).toBe(rung.note);
        expect(page!.title).toBe(rung.title);
        expect([...page!.inputs]).toEqual(rung.tables);
        expect([...page!.figures]).toEqual(rung.figures);
        expect(existsSync(join(ROOT, 'site', 'pages', 'releases', '[id]', '[rung]', 'index.astro'))).toBe(true);
      });
    });
  }

  it('every table is read by some rung', () => {
    for (const t of TABLE_NAMES)
      expect(
        RUNGS.some((r) => r.tables.includes(t)),
        t,
      ).toBe(true);
  });

  it('the blinded parameters are the Hubble-flow intercept and what the calibrators tie to it (M_B, a_B)', () => {
    // H0 follows from a_B and M_B together (5 log10 H0 = M_B + 5 a_B + 25): both carry the blinding offset.
    expect([...HIDDEN_WHEN_BLINDED].sort()).toEqual(['M_B', 'a_B']);
  });
});

describe('rung registry against a calibration: results.json publishes exactly the registered parameters', () => {
  it('demo release 2026.3 (every rung reached): each parameter once, with the registry unit and meaning', () => {
    const release = loadRelease(join(DEMO, '2026.3'));
    const results = calibrateRelease(release, { codeVersion: 'registry-test' });
    expect(results.reached).toBe(RUNGS[RUNGS.length - 1]!.reached);
    const published = Object.keys(results.parameters).sort();
    const registered = RUNGS.flatMap((r) => r.parameters.map((p) => p.name)).sort();
    expect(published).toEqual(registered);
    for (const [name, p] of Object.entries(results.parameters)) {
      const spec = parameterSpec(name)!;
      expect(p.unit, name).toBe(spec.unit);
      expect(p.description, name).toBe(spec.meaning);
    }
  });
});

describe('table registry: readers, demo files and comparison agree', () => {
  const demoReleases = readdirSync(DEMO).filter((d) => existsSync(join(DEMO, d, 'release.yaml')));

  it('every table names its key and system columns among its columns, and a Release field that holds rows', () => {
    const release: Release = loadRelease(join(DEMO, '2026.3'));
    for (const t of TABLE_NAMES) {
      const spec = TABLE_SPECS[t];
      const names = (spec.columns as ColumnSpec[]).map((c) => c.name);
      expect(names, t).toContain(spec.key);
      if (spec.systemRef) expect(names, t).toContain(spec.systemRef);
      expect(Array.isArray(release[spec.releaseField]), `${t} -> ${spec.releaseField}`).toBe(true);
      expect((release[spec.releaseField] as unknown[]).length, t).toBeGreaterThan(0);
      expect(['first-order', 'refit']).toContain(spec.rowShift);
      for (const c of spec.columns as ColumnSpec[]) expect(c.meaning.length, `${t}.${c.name}`).toBeGreaterThan(5);
    }
  });

  it.each(demoReleases)('committed demo release %s: every file states the registry columns, units and meanings in its header', (id) => {
    for (const t of TABLE_NAMES) {
      const file = join(DEMO, id, `${t}.ecsv`);
      if (!existsSync(file)) continue;
      const header = ecsvHeader(file);
      for (const c of TABLE_SPECS[t].columns as ColumnSpec[]) {
        const h = header.get(c.name);
        expect(h, `${id}/${t}.ecsv ${c.name}`).toBeDefined();
        expect(h!.description).toBe(c.meaning);
        expect(h!.datatype).toBe(c.type === 'text' ? 'string' : 'float64');
        expect(h!.unit ?? '').toBe(c.unit ?? '');
      }
    }
  });
});
