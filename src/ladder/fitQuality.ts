/**
 * A fit-quality measure that can fail. The global fit estimates one intrinsic scatter per
 * table so that chi2/dof is about 1 by construction; what that cannot hide is a host whose
 * residuals scatter more (or less) than the others'. This module compares the Cepheid
 * residual variance of every host with the pooled one.
 *
 * Per host h (Cepheid rows kept in the fit): z_i^2 = E[(residual_i - blend light_i)^2] / total variance_i
 * (the mixture likelihood's expected blend light taken out, cepheidMixture.ts),
 *   chi2_h = sum z_i^2,   nu_h = n_h - sum of the rows' leverages   (degrees of freedom left
 *   after the fit, the same count the scatter equation uses),   s_h^2 = chi2_h / nu_h.
 * Heterogeneity: Bartlett's test of equal variances (Bartlett 1937, Proc. R. Soc. Lond. A
 * 160, 268), with nu_h in place of n_h - 1:
 *   T = [N ln s_p^2 - sum nu_h ln s_h^2] / C,   N = sum nu_h,   s_p^2 = sum chi2_h / N,
 *   C = 1 + (sum 1/nu_h - 1/N) / (3 (k - 1)),
 * chi-square with k - 1 degrees of freedom when every host has the same variance. The fitted
 * scatter moves s_p^2, never the ratios s_h^2 / s_p^2, so the test keeps its power whatever
 * the scatter. Each host also gets its own two-sided p-value of chi2_h against chi2(nu_h),
 * to say which host it is. Bartlett's test assumes normal residuals: heavy tails (blended
 * Cepheids left in the fit) also make it fail, which is a fault of the fit worth reporting.
 */
import { blockLeverages, flatCovariance } from './gls.ts';
import { chiSquarePValue } from '../math/special.ts';
import type { GlobalFitResult } from './globalFit.ts';
import type { CheckResult, HomogeneityTest } from '../types/results.ts';

/** Significance level of the check (common practice, no source: 1 % for a check run on every release). */
export const HOMOGENEITY_ALPHA = 0.01;
/** Hosts with fewer degrees of freedom than this are left out of the test (too few rows to estimate a variance). */
export const MIN_GROUP_DOF = 2;

/** Bartlett's statistic and its degrees of freedom from per-group chi2 and dof (k >= 2). */
export function bartlett(groups: readonly { chi2: number; dof: number }[]): { statistic: number; dof: number; pooled: number } {
  const k = groups.length;
  const n = groups.reduce((s, g) => s + g.dof, 0);
  const pooled = groups.reduce((s, g) => s + g.chi2, 0) / n;
  let num = n * Math.log(pooled);
  let inv = 0;
  for (const g of groups) {
    num -= g.dof * Math.log(g.chi2 / g.dof);
    inv += 1 / g.dof;
  }
  const c = 1 + (inv - 1 / n) / (3 * (k - 1));
  return { statistic: num / c, dof: k - 1, pooled };
}

/** Two-sided p-value of a chi-square value against chi2(dof). */
function twoSided(chi2: number, dof: number): number {
  const upper = chiSquarePValue(chi2, dof);
  return Math.min(1, 2 * Math.min(upper, 1 - upper));
}

/** The test on the Cepheid hosts of a global fit, or null when fewer than two hosts qualify. */
export function cepheidHostHomogeneity(fit: GlobalFitResult): HomogeneityTest | null {
  const p = fit.paramNames.length;
  const bySystem = new Map<string, { n: number; chi2: number; leverage: number }>();
  const residualOf = new Map(fit.residuals.map((r) => [r.ref, r]));
  fit.model.problem.blocks.forEach((block, b) => {
    const refs = fit.model.refs[b];
    if (!block.diagonal || refs.length === 0 || refs[0].table !== 'cepheids') return;
    const h = blockLeverages(block, flatCovariance(fit.covGls, p));
    refs.forEach((ref, i) => {
      const res = residualOf.get(ref);
      if (!res || res.rejected) return;
      const key = ref.system ?? '';
      const g = bySystem.get(key) ?? { n: 0, chi2: 0, leverage: 0 };
      // the mixture likelihood (cepheidMixture.ts): the expected blend light is taken out of the
      // residual, as in the fit's scatter equation
      g.n += 1;
      g.chi2 += ((res.residual + res.blendShift) ** 2 + res.blendShiftVariance) / res.variance;
      g.leverage += h[i];
      bySystem.set(key, g);
    });
  });
  const all = [...bySystem].map(([system, g]) => ({ system, n: g.n, chi2: g.chi2, dof: g.n - g.leverage }));
  const used = all.filter((g) => g.dof >= MIN_GROUP_DOF && g.chi2 > 0).sort((a, b) => a.system.localeCompare(b.system));
  if (used.length < 2) return null;
  const t = bartlett(used);
  const pValue = chiSquarePValue(t.statistic, t.dof);
  return {
    table: 'cepheids',
    test: 'bartlett',
    statistic: t.statistic,
    dof: t.dof,
    p_value: pValue,
    alpha: HOMOGENEITY_ALPHA,
    passed: pValue >= HOMOGENEITY_ALPHA,
    groups: used.map((g) => ({
      system: g.system,
      n: g.n,
      dof: g.dof,
      chi2: g.chi2,
      variance_ratio: g.chi2 / g.dof / t.pooled,
      p_value: twoSided(g.chi2, g.dof),
    })),
    excluded: all
      .filter((g) => !used.includes(g))
      .map((g) => g.system)
      .sort(),
  };
}

/** The check the report lists for the test (a warning: it does not stop a calibration). */
export function homogeneityCheck(t: HomogeneityTest): CheckResult {
  const worst = [...t.groups].sort((a, b) => a.p_value - b.p_value)[0];
  return {
    id: 'cepheid-host-scatter-homogeneity',
    title: 'Cepheid residual scatter alike in every host',
    passed: t.passed,
    severity: 'warning',
    detail:
      `Bartlett's test over ${t.groups.length} hosts: T = ${t.statistic.toFixed(2)} with ${t.dof} degrees of freedom, p = ${t.p_value.toPrecision(2)} ` +
      `(fails below ${t.alpha}); most discrepant host ${worst.system}: residual variance ${worst.variance_ratio.toFixed(2)} times the pooled one, p = ${worst.p_value.toPrecision(2)}`,
  };
}
