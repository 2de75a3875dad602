/**
 * Two builds at once in one checkout (kind: edge cases; no outside source).
 * Two `rungbook build` processes with different release sets and output folders
 * share the checkout's work and cache folders, as two commands typed in one
 * repository do. Both must succeed (the second waits for the first and says so)
 * and each output must equal, byte for byte, the one built alone with fresh
 * folders.
 */
import { spawn } from 'node:child_process';
import { cpSync, mkdirSync, readFileSync, rmSync } from 'node:fs';
import { join } from 'node:path';
import { fileURLToPath } from 'node:url';
import { afterAll, beforeAll, describe, expect, it } from 'vitest';
import { REPO, tempDir } from '../trust/releaseCopy.ts';
import { FIXTURE_RELEASES } from './fixtureBuild.ts';
import { listFilesSync } from './linkCheck.ts';

const BUILD_TIMEOUT_MS = 600_000;
const CHILD = fileURLToPath(new URL('./buildProcess.ts', import.meta.url));
const tmp = tempDir('rungbook-concurrent-');
afterAll(() => rmSync(tmp, { recursive: true, force: true }));

/** A release set of its own: copies of fixture releases. */
function releaseSet(name: string, ids: string[]): string {
  const dir = join(tmp, name);
  mkdirSync(dir);
  for (const id of ids) cpSync(join(FIXTURE_RELEASES, id), join(dir, id), { recursive: true });
  return dir;
}

interface Run {
  code: number | null;
  stdout: string;
  stderr: string;
}

function build(releases: string, out: string, work: string, cache: string): Promise<Run> {
  return new Promise((done) => {
    const child = spawn(process.execPath, ['--import', 'tsx', CHILD, releases, out, work, cache], { cwd: REPO, env: { ...process.env, CI: 'true' } });
    let stdout = '';
    let stderr = '';
    child.stdout.on('data', (b) => (stdout += b));
    child.stderr.on('data', (b) => (stderr += b));
    child.on('close', (code) => done({ code, stdout, stderr }));
  });
}

/** Files of a built site that differ from another's (missing, extra or other bytes). */
function differences(a: string, b: string): string[] {
  const fa = listFilesSync(a);
  const fb = listFilesSync(b);
  const only = [...fa.filter((f) => !fb.includes(f)), ...fb.filter((f) => !fa.includes(f))];
  return [...only, ...fa.filter((f) => fb.includes(f) && !readFileSync(join(a, f)).equals(readFileSync(join(b, f))))];
}

const a = releaseSet('set-a', ['2025.4']);
const b = releaseSet('set-b', ['2026.2']);
const together: Run[] = [];

beforeAll(async () => {
  // One checkout: one work folder and one cache folder for both.
  const work = join(tmp, 'checkout', '.build');
  const cache = join(tmp, 'checkout', '.cache', 'results');
  together.push(...(await Promise.all([build(a, join(tmp, 'dist-a'), work, cache), build(b, join(tmp, 'dist-b'), work, cache)])));
  // Each alone, with folders of its own.
  for (const [set, name] of [
    [a, 'a'],
    [b, 'b'],
  ] as const) {
    const alone = await build(set, join(tmp, `alone-${name}`), join(tmp, `work-${name}`), join(tmp, `cache-${name}`));
    expect(alone.code, alone.stderr).toBe(0);
  }
}, BUILD_TIMEOUT_MS);

describe('two builds at once in one checkout', () => {
  it('both succeed, and the one that found the other at work waited for it and said so', () => {
    for (const r of together) expect(r.code, r.stderr).toBe(0);
    const waited = together.filter((r) => r.stderr.includes('rungbook build: another build'));
    expect(waited).toHaveLength(1);
    expect(waited[0]!.stderr).toMatch(/^rungbook build: another build \(process \d+\) is using .*\/checkout\/\.build; waiting for it to finish\n/);
    expect(together.map((r) => r.stdout.split('\n')[0])).toEqual([
      `Built 1 release (2025.4) into ${join(tmp, 'dist-a')}`,
      `Built 1 release (2026.2) into ${join(tmp, 'dist-b')}`,
    ]);
  });

  it('gives each the output it gives alone, byte for byte', () => {
    expect(listFilesSync(join(tmp, 'dist-a')).length).toBeGreaterThan(20);
    expect(differences(join(tmp, 'dist-a'), join(tmp, 'alone-a'))).toEqual([]);
    expect(differences(join(tmp, 'dist-b'), join(tmp, 'alone-b'))).toEqual([]);
    // The two sets really differ.
    expect(differences(join(tmp, 'dist-a'), join(tmp, 'dist-b')).length).toBeGreaterThan(10);
  });
});
