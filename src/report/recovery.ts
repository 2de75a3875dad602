/**
 * The recovery page of a release (recovery.json beside it, written by `rungbook recover`): the
 * verdict, the table of pulls and coverage, the figure, and what the truth was. Pure: the same
 * summary and results give the same view.
 */
import { describeQuantity, isBlindedQuantity } from '../recover/quantities.ts';
import type { RecoverySummary, Statistic } from '../recover/summary.ts';
import type { Results } from '../types/results.ts';
import { fixed, int } from './format.ts';
import { releasePagePath } from '../layout/routes.ts';
import { tableView } from './tables.ts';
import type { KeyValue, PageLink, RecoveryView, RowMark } from './types.ts';

export const RECOVERY_FIGURES = ['recovery-pulls'];

export function recoveryPage(id: string): PageLink {
  return { path: releasePagePath(id, 'recovery'), title: 'Recovery' };
}

function statText(s: Statistic, percent: boolean): string {
  if (s.value === null || !Number.isFinite(s.value)) return '—';
  return percent ? `${fixed(100 * s.value, 1)} ± ${fixed(100 * s.se, 1)} %` : `${fixed(s.value, 3)} ± ${fixed(s.se, 3)}`;
}

const range = (b: readonly [number, number], percent: boolean) =>
  percent ? `${fixed(100 * b[0], 1)}–${fixed(100 * b[1], 1)} %` : `${fixed(b[0], 2)} to ${fixed(b[1], 2)}`;

export function recoveryView(s: RecoverySummary, r: Results, figures: string[]): RecoveryView {
  const b = s.bounds;
  const matches = s.release.inputs_hash === r.provenance.inputs_hash && s.release.id === r.release.id;
  const keyValues: KeyValue[] = [
    { label: 'Verdict', value: s.verdict.toUpperCase(), blinded: false },
    {
      label: 'Simulated releases',
      value: `${int(s.seeds.count)} (seeds ${s.seeds.first}–${s.seeds.first + s.seeds.count - 1}); ${int(s.seeds.failed)} refused by the ladder`,
      blinded: false,
    },
    { label: 'Truth', value: s.truth, blinded: false },
    { label: 'Code version', value: s.code_version, blinded: false },
  ];
  const table = tableView(
    'recovery-pulls-table',
    'Pulls and coverage',
    [
      ['quantity', 'Quantity', null, false],
      ['n', 'Seeds', null, true],
      ['mean', 'Mean pull', null, true],
      ['sd', 'SD of pulls', null, true],
      ['c1', '1σ coverage', null, true],
      ['c2', '2σ coverage', null, true],
      ['verdict', 'Verdict', null, false],
    ],
    s.quantities.map((q) => [
      describeQuantity(q.key) + (s.release.blinded && isBlindedQuantity(q.key) ? ' (blinded)' : ''),
      int(q.n),
      statText(q.mean, false),
      statText(q.sd, false),
      statText(q.coverage1, true),
      statText(q.coverage2, true),
      q.verdict,
    ]),
    {
      caption:
        `Pull = (estimate − truth) / error of each simulated release. Each statistic is given with its standard error from the number of seeds. ` +
        `Bounds: mean pull ${range(b.mean, false)}, SD of pulls ${range(b.sd, false)}, 1σ coverage ${range(b.coverage1, true)}, 2σ coverage ${range(b.coverage2, true)}.`,
      // Only a failing quantity is tagged: "inconclusive" asks for more seeds, it is not a finding.
      marks: s.quantities.map((q): RowMark => (q.verdict === 'fail' ? 'failed' : null)),
    },
  );
  return {
    verdict: s.verdict,
    verdictReason: s.verdict_reason,
    keyValues,
    table,
    figures,
    blinded: s.release.blinded,
    matchesData: matches,
    failures: s.failures.map((f) => `seed ${f.seed}: ${f.message}`),
    bounds: {
      mean: range(b.mean, false),
      sd: range(b.sd, false),
      coverage1: range(b.coverage1, true),
      coverage2: range(b.coverage2, true),
    },
  };
}
