/**
 * Every ladder parameter across the releases of the report, with errors: H0, the
 * period-luminosity slope, zero point and metallicity term, the supernova absolute magnitude,
 * alpha, beta, the parallax zero point and the intrinsic scatters. A blinded release shows what it
 * may: every parameter the blinding leaves true, and for H0 its relative error only; M_B and a_B
 * are marked as everywhere else (src/report/blinding.ts).
 */
import type { Results } from '../types/results.ts';
import { releasePath } from '../layout/routes.ts';
import { parameterBlinded } from './blinding.ts';
import { fixed, pm } from './format.ts';
import { tableView } from './tables.ts';
import type { HistoryView, RowMark } from './types.ts';

/** The parameters shown, in the ladder's order: results.json name and label. */
export const HISTORY_PARAMETERS: readonly { name: string; label: string }[] = [
  { name: 'parallax_zero_point', label: 'Parallax zero point' },
  { name: 'M_W', label: 'P–L zero point M_W' },
  { name: 'b_W', label: 'P–L slope b_W' },
  { name: 'Z_W', label: 'P–L metallicity term Z_W' },
  { name: 'sigma_int_cepheid', label: 'Cepheid intrinsic scatter' },
  { name: 'M_B', label: 'Supernova M_B' },
  { name: 'alpha', label: 'Stretch coefficient α' },
  { name: 'beta', label: 'Colour coefficient β' },
  { name: 'sigma_int_sn', label: 'Supernova intrinsic scatter' },
  { name: 'a_B', label: 'Hubble-flow intercept a_B' },
];

function h0Cell(r: Results): string {
  if (r.h0 === null) return '—';
  if (r.blinded) return `blinded (± ${fixed((100 * r.h0.stat) / r.h0.value, 1)} % stat, ± ${fixed((100 * r.h0.sys) / r.h0.value, 1)} % sys)`;
  return `${pm(r.h0.value, r.h0.stat)} ± ${fixed(r.h0.sys, 2)} (sys)`;
}

function paramCell(r: Results, name: string): string {
  const p = r.parameters[name];
  if (!p) return '—';
  const v = p.fixed ? `${fixed(p.value, 4)} (fixed)` : pm(p.value, p.err);
  return parameterBlinded(r, name) ? `${v} [BLINDED]` : v;
}

/** Releases oldest first: by date, then by id, so the order never depends on the order read. */
export function oldestFirst(all: readonly Results[]): Results[] {
  return [...all].sort((a, b) => a.release.date.localeCompare(b.release.date) || a.release.id.localeCompare(b.release.id));
}

/** Rows: releases oldest first; columns: H0 then every parameter. */
export function parameterHistory(all: readonly Results[]): HistoryView | null {
  if (all.length === 0) return null;
  const sorted = oldestFirst(all);
  const units = new Map<string, string>();
  for (const r of sorted) for (const { name } of HISTORY_PARAMETERS) if (r.parameters[name] && !units.has(name)) units.set(name, r.parameters[name]!.unit);
  return {
    table: tableView(
      'parameter-history',
      'Ladder parameters by release',
      [
        ['release', 'Release', null, false],
        ['date', 'Date', null, false],
        ['h0', 'H0 (stat) (sys)', 'km/s/Mpc', true],
        ...HISTORY_PARAMETERS.map((p): [string, string, string | null, boolean] => [p.name, p.label, units.get(p.name) || null, true]),
      ],
      sorted.map((r) => [r.release.id, r.release.date, h0Cell(r), ...HISTORY_PARAMETERS.map((p) => paramCell(r, p.name))]),
      {
        caption: 'Each release’s baseline fit: value ± statistical error. Parameters a release does not fit are shown as “—”.',
        marks: sorted.map((r): RowMark => (r.blinded ? 'blinded' : null)),
        links: sorted.map((r) => [releasePath(r.release.id), null, null, ...HISTORY_PARAMETERS.map(() => null)]),
        sortable: true,
      },
    ),
    note: 'While a release is blinded, H0 and the values that follow from the Hubble-flow magnitudes carry a hidden factor: its H0 shows only relative errors, and M_B and a_B are marked.',
  };
}
