/**
 * The layers of src/, lowest first. A module may import from its own layer and the
 * layers below it, never from a layer above: the pipeline runs one way (read ->
 * calibrate -> compare -> report -> command line), and a lower layer that reached
 * up would tie the physics to its presentation. site/ sits beside the report: it
 * reads the page contract (src/layout) and knows no physics. DEVELOPERS.md
 * ("Where code goes") explains each layer.
 */
export const LAYERS: readonly (readonly string[])[] = [
  // facts and tools with no knowledge of the ladder's steps
  ['constants', 'types', 'math', 'registry', 'layout', 'version.ts'],
  ['io'],
  ['publish'],
  ['parallel'],
  ['ladder'],
  ['blinding'],
  ['demo'],
  ['diff'],
  ['recover'],
  ['report'],
  ['cli'],
];

/** What site/ may import from src/: the page contract and the URL names, nothing of the physics. */
export const SITE_MAY_IMPORT: readonly string[] = ['layout'];

const escape = (s: string) => s.replace(/[.*+?^${}()|[\]\\]/g, '\\$&');
/** A path pattern for one top-level part of src/ (a folder, or a file such as version.ts). */
export function srcPart(name: string): string {
  return name.endsWith('.ts') ? `^src/${escape(name)}$` : `^src/${escape(name)}/`;
}

/** dependency-cruiser's forbidden rules: no cycle, no upward edge, site/ only through its contract. */
export function forbiddenRules() {
  const rules: { name: string; comment: string; severity: 'error'; from: Record<string, unknown>; to: Record<string, unknown> }[] = [
    {
      name: 'no-cycle',
      comment: 'an import cycle makes the order of the pipeline unreadable',
      severity: 'error',
      from: { path: '^(src|site)/' },
      to: { circular: true },
    },
  ];
  LAYERS.forEach((layer, i) => {
    const above = LAYERS.slice(i + 1).flat();
    if (above.length === 0) return;
    rules.push({
      name: `no-upward-from-${layer.join('+')}`,
      comment: `${layer.join(', ')} may not import from a higher layer (${above.join(', ')})`,
      severity: 'error',
      from: { path: layer.map(srcPart).join('|') },
      to: { path: above.map(srcPart).join('|') },
    });
  });
  const notForSite = LAYERS.flat().filter((p) => !SITE_MAY_IMPORT.includes(p));
  rules.push({
    name: 'site-knows-no-physics',
    comment: `site/ imports from src/ only ${SITE_MAY_IMPORT.join(', ')}`,
    severity: 'error',
    from: { path: '^site/' },
    to: { path: notForSite.map(srcPart).join('|') },
  });
  rules.push({
    name: 'src-knows-no-astro',
    comment: 'src/ never imports site/ or Astro',
    severity: 'error',
    from: { path: '^src/' },
    to: { path: '^site/|node_modules/(astro|@astrojs)/' },
  });
  return rules;
}
