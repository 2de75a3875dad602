import { join } from 'node:path';
import { describe, expect, it } from 'vitest';
import { main } from '../../src/cli/main.ts';
import type { DiffReport } from '../../src/diff/types.ts';
import { DEMO_DIR } from './fixtures.ts';

function capture(): { io: { stdout: (s: string) => void; stderr: (s: string) => void }; out: () => string; err: () => string } {
  let out = '';
  let err = '';
  return { io: { stdout: (s) => (out += s), stderr: (s) => (err += s) }, out: () => out, err: () => err };
}

describe('rungbook diff of a release with itself', () => {
  it('is an empty comparison: identical, every difference zero, exit 0', async () => {
    const dir = join(DEMO_DIR, '2026.2');
    const c = capture();
    const code = await main(['diff', dir, dir, '--format', 'json'], c.io);
    expect(code).toBe(0);
    const r = JSON.parse(c.out()) as DiffReport;
    expect(r.schema).toBe('rungbook.diff/1');
    expect(r.a).toBe('2026.2');
    expect(r.b).toBe('2026.2');
    expect(r.identical).toBe(true);
    expect(r.h0!.delta).toBe(0);
    expect(r.h0!.sigma_diff).toBe(0);
    expect(r.h0!.delta_sigma).toBe(0);
    expect(r.h0!.flagged).toBe(false);
    for (const p of r.parameters) {
      expect(p.delta, p.name).toBe(0);
      expect(p.sigma_diff, p.name).toBe(0);
      expect(p.flagged).toBe(false);
    }
    for (const s of r.systems) {
      if (s.a === null) continue;
      expect(s.delta, s.id).toBe(0);
      expect(s.sigma_diff, s.id).toBe(0);
    }
    expect(r.attribution.map((e) => e.group)).toEqual(['parallax', 'main_sequence', 'cepheids', 'sn_calibrators', 'sn_hubble_flow', 'systems', 'analysis']);
    for (const e of r.attribution) {
      expect(e.differs).toBe(false);
      expect(e.delta_h0).toBe(0);
    }
    for (const t of r.inputs) {
      expect([t.table, t.added, t.removed, t.changed, t.order_changed, t.column_changes.length]).toEqual([t.table, 0, 0, 0, false, 0]);
    }
    expect(r.input_changes.cells).toEqual([]);
    expect(r.input_changes.analysis).toEqual([]);
    expect(r.input_changes.variants).toEqual([]);
    expect(r.top_objects).toEqual([]);
    for (const o of r.overlays) {
      expect(o.a.points.length).toBe(o.b.points.length);
      expect(o.b.points.every((p) => !p.changed)).toBe(true);
    }
  });

  it('text and markdown say nothing changed', async () => {
    const dir = join(DEMO_DIR, '2026.3');
    const t = capture();
    expect(await main(['diff', dir, dir, '--workers', '0'], t.io)).toBe(0);
    expect(t.out()).toContain('identical inputs and analysis choices: nothing changed');
    const m = capture();
    expect(await main(['diff', dir, dir, '--format', 'markdown', '--site', 'https://reports.example.org', '--base', '/h0/', '--workers', '0'], m.io)).toBe(0);
    expect(m.out()).toContain('identical inputs and analysis choices; nothing changed');
    expect(m.out()).toContain('(https://reports.example.org/h0/releases/2026.3/compare/)');
  });
});
