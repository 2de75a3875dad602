/**
 * Links inside the site. Paths come from src/layout/routes.ts (site-relative, no leading slash);
 * the base path Astro was configured with is added here, with the one normalisation of
 * routes.ts.
 */
import { absoluteUrl, withBase } from '../../src/layout/routes.ts';
import { DEFAULT_SITE } from '../../src/layout/settings.ts';

export function href(path: string): string {
  return withBase(import.meta.env.BASE_URL, path);
}

/** Absolute URL (for preview tags), from the configured site origin and the base path. */
export function absolute(path: string, site: URL | undefined): string {
  return absoluteUrl(site ?? DEFAULT_SITE, import.meta.env.BASE_URL, path);
}
