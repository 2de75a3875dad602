/**
 * Links inside the site. Paths in the generated data are relative to the site
 * root; the base path (which ends with "/", see trailingSlash 'always') is added
 * here, once.
 */
export function href(path: string): string {
  const base = import.meta.env.BASE_URL;
  const b = base.endsWith('/') ? base : `${base}/`;
  return `${b}${path.replace(/^\/+/, '')}`;
}

/** Absolute URL (for preview tags), from the configured site origin and the base path. */
export function absolute(path: string, site: URL | undefined): string {
  const origin = site ?? new URL('http://localhost/');
  return new URL(href(path), origin).href;
}
