/**
 * Writes the committed demo releases content/releases/2026.1, 2026.2 and 2026.3
 * from one seeded universe (src/demo). Deterministic: running it twice gives
 * identical files. It never writes the truth beside the releases.
 *
 *   npx tsx scripts/generate-demo.ts [--out DIR]
 */
import { readdirSync } from 'node:fs';
import { join, resolve } from 'node:path';
import { fileURLToPath } from 'node:url';
import { DEMO_SEED, generateDemoReleases, writeReleaseFiles } from '../src/demo/index.ts';

const root = resolve(fileURLToPath(new URL('..', import.meta.url)));
const args = process.argv.slice(2);
const outIndex = args.indexOf('--out');
const outDir = outIndex >= 0 && args[outIndex + 1] ? resolve(args[outIndex + 1]!) : join(root, 'content', 'releases');

for (const { files, truth } of generateDemoReleases(DEMO_SEED, 1)) {
  const dir = join(outDir, truth.releaseId);
  const written = writeReleaseFiles(dir, files);
  const others = readdirSync(dir).filter((f) => !written.includes(f) && f !== 'blinding.json');
  const rows = Object.entries(truth.rows).map(([t, n]) => `${t} ${n}`).join(', ');
  process.stdout.write(`${dir}: ${written.length} files (${rows})\n`);
  if (others.length > 0) process.stderr.write(`  note: other files present, left alone: ${others.join(', ')}\n`);
}
