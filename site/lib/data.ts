/**
 * The pages' only way to the generated data: typed access to the collections,
 * with clear errors when something the page needs is missing.
 */
import { getCollection, getEntry } from 'astro:content';
import type { ReleaseData, SiteData, SystemPageView } from '../../src/report/types.ts';

export type { FigureRef, ReleaseData, RungData, SiteData, TableView, KeyValue, PublishedView, SystemPageView, HistoryView } from '../../src/report/types.ts';

export async function allReleases(): Promise<ReleaseData[]> {
  const entries = await getCollection('releases');
  return entries.map((e) => e.data as unknown as ReleaseData).sort((a, b) => a.id.localeCompare(b.id));
}

export async function siteData(): Promise<SiteData> {
  const entry = await getEntry('site', 'site');
  if (!entry) throw new Error('rungbook: generated site data (data/site.json) is missing; run `rungbook build`, not `astro build` alone, on a clean checkout.');
  return entry.data as unknown as SiteData;
}

/** The authored method note with this id (file content/methods/<id>.md); the build stops without it. */
export async function methodNote(id: string) {
  const entry = await getEntry('methods', id);
  if (!entry) {
    throw new Error(`rungbook: method note "${id}" is missing: expected content/methods/${id}.md with frontmatter title, rung, sources and cautions.`);
  }
  return entry;
}

export async function proseEntry(id: string) {
  const entry = await getEntry('prose', id);
  if (!entry) throw new Error(`rungbook: generated prose "${id}" is missing from the build folder.`);
  return entry;
}

/** Every system page of every release. */
export async function allSystemPages(): Promise<SystemPageView[]> {
  const entries = await getCollection('systems');
  return entries.map((e) => e.data as unknown as SystemPageView).sort((a, b) => a.release.localeCompare(b.release) || a.segment.localeCompare(b.segment));
}
