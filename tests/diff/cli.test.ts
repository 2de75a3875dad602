/** `rungbook diff` on the command line: exit codes, errors that name the input, links. */
import { cpSync } from 'node:fs';
import { join } from 'node:path';
import { afterAll, describe, expect, it } from 'vitest';
import { main } from '../../src/cli/main.ts';
import { runDiff } from '../../src/cli/diff.ts';
import { DEMO_DIR, copyDemoRelease, editEcsv, readEcsv, tempDir } from './fixtures.ts';

function capture(env: Record<string, string | undefined> = {}) {
  let out = '';
  let err = '';
  return { io: { stdout: (s: string) => (out += s), stderr: (s: string) => (err += s), env, stderrIsTTY: false }, out: () => out, err: () => err };
}
const tmp = tempDir('cli');
afterAll(() => tmp.remove());

describe('rungbook diff: usage and input errors', () => {
  for (const args of [
    [DEMO_DIR],
    ['a', 'b', '--format', 'xml'],
    ['a', 'b', '--workers', 'two'],
    ['a', 'b', '--site', 'ftp://x.example.org'],
    ['a', 'b', '--colour'],
  ]) {
    it(`usage error (exit 2): ${args.slice(1).join(' ') || 'one release'}`, async () => {
      const c = capture();
      expect(await main(['diff', ...args], c.io)).toBe(2);
      expect(c.err()).toMatch(/rungbook diff: /);
      expect(c.out()).toBe('');
    });
  }

  it('a missing release folder: exit 1, naming it', async () => {
    const c = capture();
    const missing = join(tmp.dir, 'no-such-release');
    expect(await main(['diff', join(DEMO_DIR, '2026.2'), missing, '--workers', '0'], c.io)).toBe(1);
    expect(c.err()).toContain(missing);
    expect(c.out()).toBe('');
  });

  it('a bad cell in either release: exit 1, naming file, line and column', async () => {
    const bad = copyDemoRelease('2026.3', tmp.dir, 'bad');
    const path = join(bad, 'cepheids.ecsv');
    const text = readEcsv(path);
    const rowIndex = 7;
    editEcsv(path, (t) => {
      t.rows[rowIndex][t.header.indexOf('period')] = 'long';
    });
    const line = text.comments.length + 1 + rowIndex + 1; // comments, header, then the row (1-based)
    const c = capture();
    expect(await main(['diff', join(DEMO_DIR, '2026.2'), bad, '--workers', '0'], c.io)).toBe(1);
    expect(c.err()).toContain(`cepheids.ecsv:${line}`);
    expect(c.err()).toContain('"period"');
  });
});

describe('rungbook diff: output', () => {
  it('exit 0 with changes; the markdown links use RUNGBOOK_SITE and RUNGBOOK_BASE', async () => {
    const c = capture({ RUNGBOOK_SITE: 'https://ladder.example.org', RUNGBOOK_BASE: 'team/h0' });
    const code = await runDiff([join(DEMO_DIR, '2026.2'), join(DEMO_DIR, '2026.3'), '--format', 'markdown'], c.io);
    expect(code).toBe(0);
    const md = c.out();
    expect(md).toContain('(https://ladder.example.org/team/h0/releases/2026.3/compare/)');
    expect(md).toContain('(https://ladder.example.org/team/h0/releases/2026.3/figures/compare-attribution.png)');
    expect(md).toMatch(/H0 moved by [+-]\d+\.\d\d km\/s\/Mpc/);
    expect(md).toContain('Hubble-flow supernovae');
    expect(c.err()).toBe('');
  });

  it('an explicit --site overrides the environment; without either, a note on stderr', async () => {
    const dir = join(tmp.dir, 'same');
    cpSync(join(DEMO_DIR, '2026.1'), dir, { recursive: true });
    const withSite = capture({ RUNGBOOK_SITE: 'https://env.example.org' });
    expect(
      await runDiff(
        [join(DEMO_DIR, '2026.1'), join(DEMO_DIR, '2026.1'), '--format', 'markdown', '--site', 'https://flag.example.org', '--workers', '0'],
        withSite.io,
      ),
    ).toBe(0);
    expect(withSite.out()).toContain('https://flag.example.org/releases/2026.1/compare/');
    const none = capture({});
    expect(await runDiff([join(DEMO_DIR, '2026.1'), join(DEMO_DIR, '2026.1'), '--format', 'markdown', '--workers', '0'], none.io)).toBe(0);
    expect(none.err()).toContain('no site URL configured');
  });
});
