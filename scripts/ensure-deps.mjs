#!/usr/bin/env node
// Run before `npm run report`: on a fresh clone, install the locked npm dependencies first
// (plain Node, no dependencies of its own). Quiet when node_modules is already there.
import { spawnSync } from 'node:child_process';
import { existsSync } from 'node:fs';
import { dirname, join } from 'node:path';
import { fileURLToPath } from 'node:url';

const ROOT = join(dirname(fileURLToPath(import.meta.url)), '..');
if (!existsSync(join(ROOT, 'node_modules', 'tsx')) || !existsSync(join(ROOT, 'node_modules', 'astro'))) {
  process.stderr.write('ensure-deps: installing npm dependencies (npm ci)\n');
  const r = spawnSync('npm', ['ci'], { cwd: ROOT, stdio: ['ignore', 'inherit', 'inherit'] });
  if (r.status !== 0) process.exit(r.status ?? 1);
}
