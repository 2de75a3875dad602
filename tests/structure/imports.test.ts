/**
 * The import graph of src/ and site/, read by dependency-cruiser (a general tool,
 * not ours): no cycle, no import from a lower layer into a higher one, and site/
 * reaching src/ only through the page contract (tests/structure/layers.ts).
 */
import { describe, expect, it } from 'vitest';
import { mkdirSync, mkdtempSync, readFileSync, readdirSync, rmSync, writeFileSync } from 'node:fs';
import { tmpdir } from 'node:os';
import { dirname, join, relative, resolve } from 'node:path';
import ts from 'typescript';
import { cruise, type ICruiseResult } from 'dependency-cruiser';
import { LAYERS, SITE_MAY_IMPORT, forbiddenRules, srcPart } from './layers.ts';

const ROOT = join(import.meta.dirname, '..', '..');

/** Source files under the given folders, as paths relative to the root. */
function sourceFiles(folders: string[], extension = /\.(ts|mts|mjs)$/): string[] {
  return folders.flatMap((folder) =>
    (readdirSync(join(ROOT, folder), { recursive: true }) as string[]).filter((f) => extension.test(f)).map((f) => `${folder}/${f.split('\\').join('/')}`),
  );
}

async function cruiseFolders(baseDir: string, folders: string[]): Promise<ICruiseResult> {
  const out = await cruise(
    folders,
    {
      baseDir,
      validate: true,
      ruleSet: { forbidden: forbiddenRules() } as never,
      tsPreCompilationDeps: true,
      doNotFollow: { path: 'node_modules' },
      exclude: { path: '\\.astro/|node_modules' },
    },
    { extensions: ['.ts', '.mts', '.mjs', '.js', '.astro'] },
  );
  return out.output as ICruiseResult;
}

const describeViolation = (v: ICruiseResult['summary']['violations'][number]) =>
  `${v.rule.name}: ${v.from} -> ${v.to}${v.cycle ? ` (cycle ${v.cycle.map((c) => c.name).join(' -> ')})` : ''}`;

describe('import graph of src/ and site/', () => {
  it('has no cycle, no upward edge, and site/ knows no physics', { timeout: 120_000 }, async () => {
    const result = await cruiseFolders(ROOT, ['src', 'site']);
    // the graph is real: every top-level part of src/ was reached
    const parts = new Set(result.modules.filter((m) => m.source.startsWith('src/')).map((m) => m.source.split('/')[1]));
    for (const part of LAYERS.flat()) expect(parts, part).toContain(part);
    // and every source file on disk is in it (none left out by a resolver that gave up)
    const sources = new Set(result.modules.map((m) => m.source));
    for (const file of sourceFiles(['src', 'site'])) expect(sources, file).toContain(file);
    expect(result.summary.violations.map(describeViolation)).toEqual([]);
  });

  it('.astro files (which dependency-cruiser does not read) import from src/ only through the page contract', () => {
    const files = sourceFiles(['site'], /\.astro$/);
    expect(files.length).toBeGreaterThan(10);
    const allowed = SITE_MAY_IMPORT.map((p) => new RegExp(srcPart(p)));
    const bad: string[] = [];
    for (const file of files) {
      const frontmatter = /^---\r?\n([\s\S]*?)\r?\n---/.exec(readFileSync(join(ROOT, file), 'utf8'))?.[1] ?? '';
      for (const ref of ts.preProcessFile(frontmatter, true, true).importedFiles) {
        if (!ref.fileName.startsWith('.')) continue;
        const target = relative(ROOT, resolve(ROOT, dirname(file), ref.fileName))
          .split('\\')
          .join('/');
        if (target.startsWith('src/') && !allowed.some((re) => re.test(target))) bad.push(`${file} -> ${target}`);
      }
    }
    expect(bad).toEqual([]);
  });

  it('catches a cycle and an upward edge in a small made-up tree (the rules can fail)', { timeout: 60_000 }, async () => {
    const dir = mkdtempSync(join(tmpdir(), 'rungbook-layers-'));
    try {
      for (const d of ['src/io', 'src/ladder', 'src/math']) mkdirSync(join(dir, d), { recursive: true });
      writeFileSync(join(dir, 'src/io/read.ts'), "import { fit } from '../ladder/fit.ts';\nexport const read = () => fit();\n");
      writeFileSync(join(dir, 'src/ladder/fit.ts'), "import { a } from '../math/a.ts';\nexport const fit = () => a();\n");
      writeFileSync(join(dir, 'src/math/a.ts'), "import { b } from './b.ts';\nexport const a = (): number => b();\n");
      writeFileSync(join(dir, 'src/math/b.ts'), "import { a } from './a.ts';\nexport const b = (): number => a();\n");
      const names = (await cruiseFolders(dir, ['src'])).summary.violations.map((v) => `${v.rule.name} ${v.from}`);
      expect(names).toContain('no-upward-from-io src/io/read.ts');
      expect(names.filter((n) => n.startsWith('no-cycle')).length).toBeGreaterThanOrEqual(1);
    } finally {
      rmSync(dir, { recursive: true, force: true });
    }
  });
});
