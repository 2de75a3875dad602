/**
 * Writes the committed demo releases content/releases/2026.1 to 2026.4 from one
 * seeded universe (src/demo). Deterministic: running it twice gives identical files.
 * It never writes the truth beside the releases.
 *
 * 2026.4 is published blinded: it is observed unblinded in memory, blinded with the
 * demo key below, and only the blinded files (with blinding.json) reach the disk.
 *
 *   npx tsx scripts/generate-demo.ts [--out DIR]
 */
import { readdirSync } from 'node:fs';
import { join, resolve } from 'node:path';
import { fileURLToPath } from 'node:url';
import { DEMO_SEED, generateDemoReleases, writeReleaseFiles } from '../src/demo/index.ts';
import { blindReleaseFiles } from '../src/blinding/blindFiles.ts';

/**
 * DEMO ONLY, PUBLIC ON PURPOSE. The key that blinded the synthetic demo release 2026.4,
 * published (here and in the README) so that anyone can try `rungbook unblind` on a copy
 * of it. A real collaboration's key never enters the repository: `rungbook blind` reads it
 * from --key-file (a file outside the repository) or RUNGBOOK_BLINDING_KEY. Since the demo
 * key is public, the demo's hidden H0 is hidden only from readers of the report, which is
 * what the demo shows; the scheme itself keeps a real offset unrecoverable without the key.
 */
export const DEMO_BLINDING_KEY = 'lantern-demo-key-NOT-SECRET-7c1f0e9a2b5d4863';

const root = resolve(fileURLToPath(new URL('..', import.meta.url)));
const args = process.argv.slice(2);
const outIndex = args.indexOf('--out');
const outDir = outIndex >= 0 && args[outIndex + 1] ? resolve(args[outIndex + 1]!) : join(root, 'content', 'releases');

function main(): void {
  for (const { files, truth, blindForPublication } of generateDemoReleases(DEMO_SEED, 1)) {
    const dir = join(outDir, truth.releaseId);
    const published = blindForPublication
      ? (blindReleaseFiles(files, Buffer.from(DEMO_BLINDING_KEY, 'utf8'), blindForPublication).files as Record<string, string>)
      : files;
    const written = writeReleaseFiles(dir, published);
    const others = readdirSync(dir).filter((f) => !written.includes(f) && f !== 'blinding.json');
    const rows = Object.entries(truth.rows)
      .map(([t, n]) => `${t} ${n}`)
      .join(', ');
    process.stdout.write(`${dir}: ${written.length} files (${rows})${blindForPublication ? ', BLINDED' : ''}\n`);
    if (others.length > 0) process.stderr.write(`  note: other files present, left alone: ${others.join(', ')}\n`);
  }
}

// Run only as a script, so that tests can import the demo key without writing anything.
if (process.argv[1] && resolve(process.argv[1]) === fileURLToPath(import.meta.url)) main();
