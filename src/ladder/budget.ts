/**
 * Error budget of H0 by source. The statistical variance of log10 H0 splits exactly into
 * the shares of independent covariance sources, sum_k g^T W C_k W^T g (gls.ts), plus the
 * propagated uncertainty of alpha and beta. The systematic part has one line per source of
 * systematic error (an analysis choice with its alternatives, variants.ts):
 *  - each alternative's shift of H0 from the baseline, less the statistical noise of its own
 *    change of data in quadrature, floored at zero (variants.ts netShift);
 *  - a source's error is half the full range of the H0 values of the baseline and its
 *    alternatives (SOURCE_RULE: the largest standard deviation any belief spread over that
 *    range can have, Popoviciu 1935; it does not shrink when a harmless alternative is added);
 *  - independent sources add in quadrature.
 * Fractions are of the total variance stat^2 + sys^2.
 */
import type { BudgetEntry, SystematicSource, VariantResult } from '../types/results.ts';
import type { LadderRun } from './ladderRun.ts';
import { SOURCE_OF_KEY } from './variants.ts';

export const BUDGET_LABELS: Record<string, string> = {
  anchors: 'Geometric anchors (parallax measurement errors)',
  parallax_zero_point: 'Parallax zero point',
  main_sequence: 'Main-sequence fitting',
  cepheids: 'Cepheid photometry and period-luminosity scatter',
  sn_calibrators: 'Supernova calibrators',
  sn_standardisation: 'Supernova standardisation (alpha, beta)',
  hubble_flow: 'Hubble-flow supernovae and peculiar velocities',
  intrinsic_scatters: 'Intrinsic scatters (uncertainty of their estimates)',
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
  for (const src of systematicSources(variants)) {
    entries.push({ source: `systematic:${src.source}`, label: `Systematic: ${src.label}`, variance: src.sigma_h0 ** 2, kind: 'systematic' });
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

/** The rule of a source's error, as results.json and the budget page state it. */
export const SOURCE_RULE =
  "half the full range of H0 over the baseline and this source's alternatives, each shift first reduced by the " +
  'statistical noise of its own change of data (subtracted in quadrature, floored at 0); sources add in quadrature';

/**
 * The sources of systematic error, in the order their first variant appears. Each source's
 * error: half the full range of {0} and its alternatives' net shifts (delta_h0_net, or
 * delta_h0 when no noise was computed); failed variants count no shift. Variants without a
 * source id are each a source of their own.
 */
export function systematicSources(variants: readonly VariantResult[]): SystematicSource[] {
  const groups = new Map<string, { label: string; names: string[]; shifts: number[] }>();
  for (const v of variants) {
    const id = v.source ?? `variant:${v.name}`;
    let g = groups.get(id);
    if (!g) {
      g = { label: sourceLabel(id, v.name), names: [], shifts: [] };
      groups.set(id, g);
    }
    g.names.push(v.name);
    const shift = v.delta_h0_net ?? v.delta_h0;
    if (shift !== null && shift !== undefined && Number.isFinite(shift)) g.shifts.push(shift);
  }
  return [...groups].map(([source, g]) => ({
    source,
    label: g.label,
    alternatives: g.names,
    sigma_h0: halfRange(g.shifts),
    rule: SOURCE_RULE,
  }));
}

/** Half the full range of the baseline (shift 0) and the given shifts. */
export function halfRange(shifts: readonly number[]): number {
  let lo = 0;
  let hi = 0;
  for (const d of shifts) {
    lo = Math.min(lo, d);
    hi = Math.max(hi, d);
  }
  return (hi - lo) / 2;
}

/** Systematic error of H0: the sources' errors added in quadrature. */
export function systematicError(variants: readonly VariantResult[]): number {
  return Math.sqrt(systematicSources(variants).reduce((s, src) => s + src.sigma_h0 ** 2, 0));
}

function sourceLabel(id: string, variantName: string): string {
  if (id.startsWith('variant:')) return `Variant: ${variantName}`;
  const parts = id.split('+').map((p) => Object.values(SOURCE_OF_KEY).find((d) => d.id === p)?.label ?? p);
  return parts.join(' together with ');
}
