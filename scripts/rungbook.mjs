#!/usr/bin/env node
// Thin launcher: runs the TypeScript command line (src/cli) through tsx,
// so `npx rungbook ...` works right after `npm ci` with no build step.
import { register } from 'tsx/esm/api';
register();
// A closed pipe (e.g. `| head`) is not an error of ours.
process.stdout.on('error', (e) => {
  if (e.code === 'EPIPE') process.exit(process.exitCode ?? 0);
  throw e;
});
const { main } = await import('../src/cli/main.ts');
process.exitCode = await main(process.argv.slice(2));
