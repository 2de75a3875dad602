/**
 * Error budget of H0 by source. The statistical variance of log10 H0 splits exactly into
 * the shares of independent covariance sources, sum_k g^T W C_k W^T g (gls.ts), plus the
 * propagated uncertainty of alpha and beta; each variant adds (H0_k - H0_base)^2 / K, so the
 * systematic shares add up to sigma_sys^2. Fractions are of the total variance stat^2 + sys^2.
 */
import type { BudgetEntry, VariantResult } from '../types/results.ts';
import type { LadderRun } from './calibrate.ts';

export const BUDGET_LABELS: Record<string, string> = {
  anchors: 'Geometric anchors (parallax measurement errors)',
  parallax_zero_point: 'Parallax zero point',
  main_sequence: 'Main-sequence fitting',
  cepheids: 'Cepheid photometry and period-luminosity scatter',
  sn_calibrators: 'Supernova calibrators',
  sn_standardisation: 'Supernova standardisation (alpha, beta)',
  hubble_flow: 'Hubble-flow supernovae and peculiar velocities',
};

const ORDER = Object.keys(BUDGET_LABELS);

export function errorBudget(run: LadderRun, variants: readonly VariantResult[]): BudgetEntry[] {
  if (!run.fit || !run.log10H0) return [];
  const h0 = 10 ** run.log10H0.value;
  const toH0 = (h0 * Math.LN10) ** 2;
  const parts = run.fit.budget(run.log10H0.gradient);
  const entries: { source: string; label: string; variance: number; kind: BudgetEntry['kind'] }[] = [];
  for (const source of ORDER) {
    const v = parts.get(source);
    if (v === undefined) continue;
    entries.push({ source, label: BUDGET_LABELS[source], variance: v * toH0, kind: 'statistical' });
  }
  for (const [source, v] of parts) {
    if (!ORDER.includes(source)) entries.push({ source, label: source, variance: v * toH0, kind: 'statistical' });
  }
  const ok = variants.filter((v) => v.delta_h0 !== null);
  for (const v of ok) {
    entries.push({
      source: `systematic:${v.name}`,
      label: `Variant: ${v.name}`,
      variance: v.delta_h0! ** 2 / ok.length,
      kind: 'systematic',
    });
  }
  const total = entries.reduce((s, e) => s + e.variance, 0);
  return entries.map((e) => ({
    source: e.source,
    label: e.label,
    sigma_h0: Math.sqrt(Math.max(0, e.variance)),
    fraction: total > 0 ? e.variance / total : 0,
    kind: e.kind,
  }));
}
