// The `rungbook calibrate` and `check` commands as a user runs them (in-process through main()).
// Kind: pipeline regressions and edge cases (exit codes, nothing half-written, determinism).
import { describe, expect, it } from 'vitest';
import { cpSync, existsSync, mkdtempSync, readFileSync, writeFileSync } from 'node:fs';
import { tmpdir } from 'node:os';
import { join } from 'node:path';
import { main } from '../../src/cli/main.ts';
import { parseResults } from '../../src/io/results.ts';

function capture() {
  const out: string[] = [];
  const err: string[] = [];
  return { io: { stdout: (s: string) => void out.push(s), stderr: (s: string) => void err.push(s) }, out, err };
}

const DEMO = join(import.meta.dirname, '..', '..', 'content', 'releases', '2026.2');

describe('rungbook calibrate', () => {
  it('prints H0 with stat and sys errors and writes byte-identical results.json twice', async () => {
    const dir = mkdtempSync(join(tmpdir(), 'rb-cal-'));
    const c1 = capture();
    expect(await main(['calibrate', DEMO, '--json', join(dir, 'a.json')], c1.io)).toBe(0);
    const text = c1.out.join('');
    expect(text).toMatch(/H0 = \d+\.\d\d ± \d+\.\d\d \(stat\) ± \d+\.\d\d \(sys\) km\/s\/Mpc/);
    expect(text).toContain('Internal result for collaboration review');
    expect(text).toMatch(/chi2 = [\d.]+ for \d+ degrees of freedom/);
    const c2 = capture();
    expect(await main(['calibrate', DEMO, '--json', join(dir, 'b.json')], c2.io)).toBe(0);
    const a = readFileSync(join(dir, 'a.json'), 'utf8');
    expect(readFileSync(join(dir, 'b.json'), 'utf8')).toBe(a);
    const r = parseResults(a);
    expect(r.schema).toBe('rungbook.results/1');
    expect(r.release.id).toBe('2026.2');
    expect(r.h0!.total).toBeCloseTo(Math.hypot(r.h0!.stat, r.h0!.sys), 12);
    // the budget's parts add up to the total variance (fractions sum to one)
    expect(r.budget.reduce((s, b) => s + b.fraction, 0)).toBeCloseTo(1, 12);
    const stat2 = r.budget.filter((b) => b.kind === 'statistical').reduce((s, b) => s + b.sigma_h0 ** 2, 0);
    expect(Math.sqrt(stat2)).toBeCloseTo(r.h0!.stat, 9);
    const sys2 = r.budget.filter((b) => b.kind === 'systematic').reduce((s, b) => s + b.sigma_h0 ** 2, 0);
    expect(Math.sqrt(sys2)).toBeCloseTo(r.h0!.sys, 9);
    // the systematic error follows the rule of content/methods/variants.md: per source (analysis
    // choice), half the range of {0, net shifts of its alternatives}; sources in quadrature
    const bySource = new Map<string, number[]>();
    for (const v of r.variants) bySource.set(v.source!, [...(bySource.get(v.source!) ?? [0]), v.delta_h0_net ?? 0]);
    const half = [...bySource.values()].map((d) => (Math.max(...d) - Math.min(...d)) / 2);
    expect(bySource.size).toBeLessThan(r.variants.length); // alternatives of one choice share a source
    expect(r.h0!.sys).toBeCloseTo(Math.sqrt(half.reduce((s, x) => s + x * x, 0)), 12);
  });

  it('exits 1 with file, line and column on bad input and writes nothing', async () => {
    const dir = mkdtempSync(join(tmpdir(), 'rb-bad-'));
    const rel = join(dir, '2026.2');
    cpSync(DEMO, rel, { recursive: true });
    const file = join(rel, 'cepheids.ecsv');
    const lines = readFileSync(file, 'utf8').split('\n');
    const header = lines.findIndex((l) => !l.startsWith('#'));
    lines[header + 3] = lines[header + 3].replace(/,([-\d.]+),/, ',nan,');
    writeFileSync(file, lines.join('\n'));
    const c = capture();
    const out = join(dir, 'results.json');
    expect(await main(['calibrate', rel, '--json', out], c.io)).toBe(1);
    const err = c.err.join('');
    expect(err).toContain(`cepheids.ecsv:${header + 4}`);
    expect(err).toMatch(/column "/);
    expect(existsSync(out)).toBe(false);
  });

  it('exits 2 on usage errors', async () => {
    const c = capture();
    expect(await main(['calibrate'], c.io)).toBe(2);
    expect(await main(['calibrate', DEMO, '--frobnicate'], c.io)).toBe(2);
    expect(await main(['no-such-command'], c.io)).toBe(2);
  });

  it('check exits 0 on the demo releases', async () => {
    const c = capture();
    expect(await main(['check', DEMO], c.io)).toBe(0);
  });
});
