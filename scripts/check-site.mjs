// Type-checks the Astro site (site/, astro.config.mjs) with `astro check` (run by `npm test`
// after tsc). It runs on an empty folder of generated files in a temporary folder: the types
// of the collections come from their schemas (src/layout/pageSchema.ts), not from data, and
// the build's own work folder and Astro cache (.build/) are left untouched.
import { spawnSync } from 'node:child_process';
import { mkdtempSync, mkdirSync, rmSync } from 'node:fs';
import { tmpdir } from 'node:os';
import { join } from 'node:path';
import { fileURLToPath } from 'node:url';

const root = fileURLToPath(new URL('..', import.meta.url));
const work = mkdtempSync(join(tmpdir(), 'rungbook-check-site-'));
const genDir = join(work, 'gen');
for (const d of ['data/releases', 'data/systems', 'prose', 'public']) mkdirSync(join(genDir, d), { recursive: true });
const astro = join(root, 'node_modules', 'astro', 'astro.js');
const run = spawnSync(process.execPath, [astro, 'check', '--tsconfig', 'tsconfig.site.json'], {
  cwd: root,
  stdio: 'inherit',
  env: { ...process.env, ASTRO_TELEMETRY_DISABLED: '1', RUNGBOOK_GEN_DIR: genDir },
});
rmSync(work, { recursive: true, force: true });
process.exit(run.status ?? 1);
