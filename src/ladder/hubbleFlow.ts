/**
 * Hubble-flow rung: sample selection by redshift and the per-supernova terms that do not
 * depend on the fit (the expansion factor and the redshift-error term).
 *   m_corr = 5 log10[c z f(z)] - 5 a_B,  f(z) = 1 + (1 - q0) z / 2 - (1 - q0 - 3 q0^2 + j0) z^2 / 6
 *   log10 H0 = (M_B + 5 a_B + 25) / 5                   (methods.md g)
 */
import { FIVE_OVER_LN10, C_KM_S } from '../constants/index.ts';
import type { SnHubbleFlowRow } from '../types/release.ts';
import type { AnalysisChoices } from '../types/analysis.ts';
import { AnalysisError } from '../types/issues.ts';
import { hubbleFlowLogFactor, kinematicSeriesFactor } from './kinematics.ts';

export interface HubbleFlowSupernova {
  row: SnHubbleFlowRow;
  /** log10(c z f(z)) with c in km/s. */
  logCzf: number;
  /**
   * Variance in magnitudes from the redshift: peculiar velocity sigma_v / (c z) and the
   * measurement z_err / z, both scaled by 5 / ln 10 (first order in the error).
   */
  redshiftVariance: number;
}

export interface HubbleFlowSample {
  used: HubbleFlowSupernova[];
  /** Rows outside z_min <= z <= z_max. */
  excluded: SnHubbleFlowRow[];
}

export function selectHubbleFlow(rows: SnHubbleFlowRow[], analysis: AnalysisChoices): HubbleFlowSample {
  const used: HubbleFlowSupernova[] = [];
  const excluded: SnHubbleFlowRow[] = [];
  for (const row of rows) {
    if (row.z < analysis.z_min || row.z > analysis.z_max) {
      excluded.push(row);
      continue;
    }
    // A sample member must have z > 0 and a positive series bracket; otherwise the distance is
    // undefined, and the user can fix it (the redshift, z_min, or q0/j0), so say which row and keys.
    if (!(row.z > 0)) {
      throw new AnalysisError(
        `Hubble-flow supernova "${row.sn}" (sn_hubble_flow line ${row.line}) has z = ${row.z} inside the range z_min = ${analysis.z_min} to z_max = ${analysis.z_max}; a distance needs z > 0.`,
        'Raise z_min above 0 or correct the redshift.',
      );
    }
    if (!(kinematicSeriesFactor(row.z, analysis.q0, analysis.j0) > 0)) {
      throw new AnalysisError(
        `With q0 = ${analysis.q0} and j0 = ${analysis.j0}, the kinematic distance series is not positive at z = ${row.z} ` +
          `(Hubble-flow supernova "${row.sn}", sn_hubble_flow line ${row.line}), so no distance can be computed.`,
        'Check q0 and j0 in release.yaml (typical values: q0 near -0.55, j0 near 1), or lower z_max.',
      );
    }
    const velocityTerm = analysis.sigma_pec / (C_KM_S * row.z);
    const redshiftTerm = row.zErr / row.z;
    used.push({
      row,
      logCzf: hubbleFlowLogFactor(row.z, analysis.q0, analysis.j0),
      redshiftVariance: FIVE_OVER_LN10 ** 2 * (velocityTerm ** 2 + redshiftTerm ** 2),
    });
  }
  return { used, excluded };
}

/** log10 H0 from the supernova absolute magnitude and the Hubble-flow intercept. */
export function log10H0(mB: number, aB: number): number {
  return (mB + 5 * aB + 25) / 5;
}
