/**
 * The pages' only way to the generated data: typed access to the collections,
 * with clear errors when something the page needs is missing.
 */
import { getCollection, getEntry } from 'astro:content';
import type { ReleaseData, SiteData, SystemPageFile } from '../../src/layout/pageSchema.ts';

export type {
  FigureRef,
  Headline,
  KeyValue,
  PageLink,
  PublishedView,
  ReleaseData,
  RungData,
  SiteData,
  SystemPageFile,
  SystemPageView,
  TableView,
  HistoryView,
} from '../../src/layout/pageSchema.ts';

export async function allReleases(): Promise<ReleaseData[]> {
  const entries = await getCollection('releases');
  return entries.map((e) => e.data).sort((a, b) => a.id.localeCompare(b.id));
}

export async function siteData(): Promise<SiteData> {
  const entry = await getEntry('site', 'site');
  if (!entry) throw new Error('rungbook: generated site data (data/site.json) is missing; run `rungbook build`, not `astro build` alone, on a clean checkout.');
  return entry.data;
}

/** The authored method note with this id (file content/methods/<id>.md); the build stops without it. */
export async function methodNote(id: string) {
  const entry = await getEntry('methods', id);
  if (!entry) {
    throw new Error(`rungbook: method note "${id}" is missing: expected content/methods/${id}.md with frontmatter title, rung, sources and cautions.`);
  }
  return entry;
}

/** The authored guide page with this id (file content/guide/<id>.md). */
export async function guidePage(id: string) {
  const entry = await getEntry('guide', id);
  if (!entry) throw new Error(`rungbook: guide page "${id}" is missing: expected content/guide/${id}.md with frontmatter title and summary.`);
  return entry;
}

export async function proseEntry(id: string) {
  const entry = await getEntry('prose', id);
  if (!entry) throw new Error(`rungbook: generated prose "${id}" is missing from the build folder.`);
  return entry;
}

/** Every system page of every release. */
export async function allSystemPages(): Promise<SystemPageFile[]> {
  const entries = await getCollection('systems');
  return entries.map((e) => e.data).sort((a, b) => a.release.localeCompare(b.release) || a.segment.localeCompare(b.segment));
}
