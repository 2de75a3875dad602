// Kind: trust (edge case of the build's design). Nothing the build generates from a release may be
// compiled: the MDX integration is in the stack for authored, trusted pages only (DEVELOPERS.md,
// "Data never becomes code"). This test fails if a generated file is Markdown or MDX, or if a content
// collection of the site reads Markdown/MDX from the generated folder.
import { readdir, readFile, rm } from 'node:fs/promises';
import { join } from 'node:path';
import { afterAll, beforeAll, describe, expect, it } from 'vitest';
import { buildFixture, type FixtureBuild } from '../report/fixtureBuild.ts';

async function walk(dir: string): Promise<string[]> {
  const out: string[] = [];
  for (const e of await readdir(dir, { withFileTypes: true })) {
    const p = join(dir, e.name);
    if (e.isDirectory()) out.push(...(await walk(p)));
    else out.push(p);
  }
  return out;
}

describe('no generated file is compiled as Markdown or MDX', () => {
  let build: FixtureBuild;
  beforeAll(async () => {
    build = await buildFixture();
  });
  afterAll(async () => {
    if (build) await rm(build.tmp, { recursive: true, force: true });
  });

  it('the generated folder holds JSON, figure and download files, and no .md or .mdx file', async () => {
    const files = await walk(join(build.workDir, 'gen'));
    expect(files.length).toBeGreaterThan(10);
    const compiled = files.filter((f) => /\.(mdx?|markdown)$/i.test(f));
    expect(compiled).toEqual([]);
    // the prose of every release is there, as data
    expect(files.filter((f) => f.includes(`${join('gen', 'prose')}/`) && f.endsWith('.json')).length).toBeGreaterThan(0);
  });

  it('no content collection reads Markdown or MDX from the generated folder', async () => {
    const config = await readFile(new URL('../../site/content.config.ts', import.meta.url), 'utf8');
    // each loader call up to the end of its line: glob({ pattern: ..., base: ..., generateId: ... })
    const loaders = [...config.matchAll(/glob\(\{([^\n]*)/g)].map((m) => m[1]);
    expect(loaders.length).toBeGreaterThanOrEqual(4);
    const generated = loaders.filter((l) => l.includes('genDir'));
    expect(generated.length).toBeGreaterThanOrEqual(3);
    for (const loader of generated) expect(loader).not.toMatch(/\.mdx?\b/);
    // and the authored one does read Markdown (so the pattern above would see it)
    expect(loaders.some((l) => !l.includes('genDir') && /\.md\b/.test(l))).toBe(true);
  });
});
