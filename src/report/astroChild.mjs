// One Astro build, in a process of its own (started by src/report/astroBuild.ts). A child
// process gives Astro its own memory (a build of a thousand pages keeps its module graph and
// content store until the process ends), its own working directory and its own environment, so
// the calling process (the command line, a test runner building many sites) is left as it was.
// argv[2] is JSON with the repository (root) and the folder Astro writes into (outDir); every
// other setting (base path, site, generated files, method notes, cache) arrives in the
// environment, where astro.config.mjs and site/ read it with src/layout/settings.ts.
// Exit code 0 when the site was written, 1 with the error on stderr.
import { build } from 'astro';

const o = JSON.parse(process.argv[2]);
try {
  process.chdir(o.root);
  await build({ root: o.root, outDir: o.outDir, logLevel: 'warn', mode: 'production' });
  process.exit(0);
} catch (e) {
  process.stderr.write(`${e instanceof Error ? (e.stack ?? e.message) : String(e)}\n`);
  process.exit(1);
}
