/**
 * Cepheid rung: Wesenheit magnitudes and the rows of the period-luminosity relation.
 *   W = m_H - R (m_V - m_I)                           (Madore 1982, ApJ 253, 575)
 *   W = mu_host + M_W + b_W (log10 P - pivot) + Z_W [O/H]
 * The relation's parameters are fitted in the global fit (globalFit.ts); this module
 * only turns catalogue rows into magnitudes with errors and checks the sample.
 */
import type { CepheidRow } from '../types/release.ts';
import type { CheckResult } from '../types/results.ts';

export interface WesenheitMagnitude {
  w: number;
  /** Measurement error of W, assuming independent errors in H, V and I. */
  wErr: number;
  logPeriod: number;
}

/**
 * W and its error. The V and I errors enter scaled by R; the three measurement errors
 * are taken as independent (the release format carries no covariance between bands).
 */
export function wesenheitMagnitude(row: CepheidRow, wesenheitR: number): WesenheitMagnitude {
  const w = row.mH - wesenheitR * (row.mV - row.mI);
  const wErr = Math.sqrt(row.mHErr ** 2 + wesenheitR ** 2 * (row.mVErr ** 2 + row.mIErr ** 2));
  return { w, wErr, logPeriod: Math.log10(row.periodDays) };
}

/** Period range over which the relation is trusted as linear (common practice, no source). */
export const PL_TRUSTED_LOG_PERIOD: readonly [number, number] = [0.3, 2.0];

export function cepheidChecks(rows: CepheidRow[]): CheckResult[] {
  const out: CheckResult[] = [];
  const outside = rows.filter((r) => {
    const lp = Math.log10(r.periodDays);
    return lp < PL_TRUSTED_LOG_PERIOD[0] || lp > PL_TRUSTED_LOG_PERIOD[1];
  });
  out.push({
    id: 'cepheid-period-range',
    title: 'Cepheid periods inside the trusted range',
    passed: outside.length === 0,
    severity: 'warning',
    detail:
      outside.length === 0
        ? `all ${rows.length} Cepheids have ${PL_TRUSTED_LOG_PERIOD[0]} <= log10 P <= ${PL_TRUSTED_LOG_PERIOD[1]}`
        : `${outside.length} of ${rows.length} Cepheids lie outside ${PL_TRUSTED_LOG_PERIOD[0]} <= log10 P <= ${PL_TRUSTED_LOG_PERIOD[1]} (e.g. ${outside
            .slice(0, 3)
            .map((r) => r.star)
            .join(', ')}); they are kept in the fit`,
  });
  return out;
}
