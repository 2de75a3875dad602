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
 * make "2026.1" and "20261" collide). The generated collections use the strict schemas
 * of src/layout/pageSchema.ts, the same ones src/report checks what it writes against:
 * a field one side does not know stops the build, and the pages get typed data.
 */
import { defineCollection, z } from 'astro:content';
import { glob } from 'astro/loaders';
import { pathToFileURL } from 'node:url';
import { proseFileSchema, releaseDataSchema, siteDataSchema, systemPageFileSchema } from '../src/layout/pageSchema.ts';
import { genDir, guideDir, methodsDir } from './lib/paths.ts';

const dirUrl = (dir: string) => pathToFileURL(dir.endsWith('/') ? dir : `${dir}/`);

const releases = defineCollection({
  loader: glob({ pattern: '*.json', base: dirUrl(`${genDir}/data/releases`), generateId: ({ data }) => String(data.id) }),
  schema: releaseDataSchema,
});

const site = defineCollection({
  loader: glob({ pattern: 'site.json', base: dirUrl(`${genDir}/data`), generateId: () => 'site' }),
  schema: siteDataSchema,
});

const prose = defineCollection({
  loader: glob({ pattern: '**/*.json', base: dirUrl(`${genDir}/prose`), generateId: ({ entry }) => entry.replace(/\.json$/, '') }),
  schema: proseFileSchema,
});

// One page per system of a release (SystemPageView): data/systems/<release>/<segment>.json.
const systems = defineCollection({
  loader: glob({ pattern: '*/*.json', base: dirUrl(`${genDir}/data/systems`), generateId: ({ data }) => `${String(data.release)}/${String(data.segment)}` }),
  schema: systemPageFileSchema,
});

// Authored method notes (frontmatter written by people, not by src/report).
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

// Authored guide pages for users (content/guide): the input contract, shown with its generated tables.
const guide = defineCollection({
  loader: glob({ pattern: '*.md', base: dirUrl(guideDir), generateId: ({ entry }) => entry.replace(/\.md$/, '') }),
  schema: z.object({ title: z.string(), summary: z.string() }).strict(),
});

export const collections = { releases, site, prose, methods, systems, guide };
