/**
 * Content collections of the report site.
 *
 * - releases: one JSON file per release, written by src/report (ReleaseData).
 * - site:     the list of releases for the home page (SiteData).
 * - prose:    generated prose as data: one JSON file per text holding HTML that
 *             src/report made from a sanitised syntax tree (summary paragraphs,
 *             release notes). It is inserted as it is, never compiled: no text of
 *             a release ever reaches MDX or a template (DEVELOPERS.md).
 * - systems:  one JSON file per system page of a release (SystemPageView).
 * - methods:  the authored method notes under content/methods, one per rung.
 *
 * Ids are given explicitly (never the default slug, which drops dots and would
 * make "2026.1" and "20261" collide). The schemas check the fields the pages
 * rely on and let the rest through; src/report/types.ts documents all of it.
 */
import { defineCollection, z } from 'astro:content';
import { glob } from 'astro/loaders';
import { pathToFileURL } from 'node:url';
import { genDir, methodsDir } from './lib/paths.ts';

const dirUrl = (dir: string) => pathToFileURL(dir.endsWith('/') ? dir : `${dir}/`);

const headline = z.object({
  state: z.enum(['measured', 'blinded', 'not_reached']),
  value: z.string().nullable(),
  stat: z.string().nullable(),
  sys: z.string().nullable(),
  total: z.string().nullable(),
  unit: z.string(),
  text: z.string(),
});

const releases = defineCollection({
  loader: glob({ pattern: '*.json', base: dirUrl(`${genDir}/data/releases`), generateId: ({ data }) => String(data.id) }),
  schema: z
    .object({
      generated: z.string(),
      id: z.string().regex(/^[A-Za-z0-9][A-Za-z0-9._-]*$/),
      title: z.string(),
      date: z.string(),
      previous: z.string().nullable(),
      blinded: z.boolean(),
      headline,
      figures: z.record(z.object({ id: z.string(), svg: z.string(), png: z.string(), csv: z.string(), page: z.string() }).passthrough()),
      rungs: z.array(z.object({ slug: z.string(), note: z.string(), title: z.string() }).passthrough()),
      pages: z.array(z.object({ path: z.string(), title: z.string() })),
    })
    .passthrough(),
});

const site = defineCollection({
  loader: glob({ pattern: 'site.json', base: dirUrl(`${genDir}/data`), generateId: () => 'site' }),
  schema: z
    .object({
      generated: z.string(),
      releases: z.array(z.object({ id: z.string(), title: z.string(), date: z.string(), blinded: z.boolean(), headline, path: z.string() }).passthrough()),
      latest: z.string().nullable(),
    })
    .passthrough(),
});

const prose = defineCollection({
  loader: glob({ pattern: '**/*.json', base: dirUrl(`${genDir}/prose`), generateId: ({ entry }) => entry.replace(/\.json$/, '') }),
  schema: z.object({ generated: z.string(), html: z.string() }),
});

// One page per system of a release (SystemPageView): data/systems/<release>/<segment>.json.
const systems = defineCollection({
  loader: glob({ pattern: '*/*.json', base: dirUrl(`${genDir}/data/systems`), generateId: ({ data }) => `${String(data.release)}/${String(data.segment)}` }),
  schema: z
    .object({
      generated: z.string(),
      release: z.string().regex(/^[A-Za-z0-9][A-Za-z0-9._-]*$/),
      system: z.string(),
      segment: z.string().regex(/^[A-Za-z0-9][A-Za-z0-9._-]*$/),
      path: z.string(),
      tables: z.array(z.object({ id: z.string() }).passthrough()),
    })
    .passthrough(),
});

const source = z.union([z.string(), z.object({ ref: z.string(), note: z.string().optional(), checked: z.boolean().optional() })]);

const methods = defineCollection({
  loader: glob({ pattern: ['*.md', '!README.md'], base: dirUrl(methodsDir), generateId: ({ entry }) => entry.replace(/\.md$/, '') }),
  schema: z.object({
    title: z.string(),
    rung: z.string(),
    summary: z.string().optional(),
    sources: z.array(source).default([]),
    cautions: z.array(z.string()).default([]),
    assumptions: z.array(z.string()).default([]),
  }),
});

export const collections = { releases, site, prose, methods, systems };
