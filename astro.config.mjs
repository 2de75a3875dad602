// Astro configuration of the static report.
//
// The pages under site/ lay out what src/report generated (JSON data, prose as
// sanitised HTML inside JSON, figure files). Nothing generated is MDX: no text of a
// data release can reach a compiler (DEVELOPERS.md, "Data never becomes code"). The MDX
// integration is for authored, trusted prose only. Where those generated files live, and where the site is
// hosted, are the build's settings (src/layout/settings.ts): `rungbook build` passes them to
// the Astro process in the environment, and a plain `npx astro build` takes them from the
// environment or the defaults, through the same function:
//
//   RUNGBOOK_GEN_DIR   folder written by src/report (default .build/gen)
//   RUNGBOOK_METHODS_DIR  authored method notes (default content/methods)
//   RUNGBOOK_OUT_DIR   output folder (default dist)
//   RUNGBOOK_BASE      path prefix on the server, e.g. /reports/h0/ (default /)
//   RUNGBOOK_SITE      origin of the server, used for absolute preview-image URLs
//                      (default http://localhost/)
//
// trailingSlash 'always' keeps `${BASE_URL}x` joins correct under a base path.
import { defineConfig } from 'astro/config';
import mdx from '@astrojs/mdx';
import remarkMath from 'remark-math';
import rehypeKatex from 'rehype-katex';
import { join } from 'node:path';
import { buildSettings } from './src/layout/settings.ts';

// Astro has no opt-out in the config file itself; the environment variable is read by its telemetry module.
process.env.ASTRO_TELEMETRY_DISABLED = '1';

const settings = buildSettings({}, process.env);

/**
 * A display formula wider than the screen scrolls sideways (report.css); a scrolling region must
 * be reachable from the keyboard (WCAG 2.1.1), so each display formula is focusable and named.
 */
function focusableDisplayMath() {
  return (tree) => {
    const visit = (node) => {
      const cls = node.properties?.className;
      if (node.type === 'element' && Array.isArray(cls) && cls.includes('katex-display')) {
        node.properties = { ...node.properties, tabIndex: 0, role: 'group', ariaLabel: 'formula (scrolls sideways on narrow screens)' };
        return;
      }
      for (const child of node.children ?? []) visit(child);
    };
    visit(tree);
  };
}

export default defineConfig({
  root: settings.root,
  srcDir: './site',
  publicDir: join(settings.genDir, 'public'),
  outDir: settings.outDir,
  cacheDir: settings.astroCacheDir,
  base: settings.base,
  site: settings.site,
  trailingSlash: 'always',
  build: { format: 'directory', inlineStylesheets: 'never' },
  devToolbar: { enabled: false },
  prefetch: false,
  // Authored pages only (nothing generated from a release is ever .mdx; tests/trust/noGeneratedMdx.test.ts).
  integrations: [mdx()],
  markdown: {
    remarkPlugins: [remarkMath],
    // strict 'ignore': a method note may use \lt and friends; errors still fail the build below.
    rehypePlugins: [[rehypeKatex, { throwOnError: true, strict: 'ignore', output: 'htmlAndMathml' }], focusableDisplayMath],
    syntaxHighlight: false,
    smartypants: false,
  },
  vite: {
    // Pages are prerendered in this process; nothing is served from a CDN.
    build: { assetsInlineLimit: 0 },
    logLevel: 'warn',
  },
});
