/**
 * Hubble-flow rung: sample selection by redshift and the per-supernova terms that do not
 * depend on the fit (the expansion factor and the redshift-error term).
 *   m_corr = 5 log10[c z f(z)] - 5 a_B,  f(z) = 1 + (1 - q0) z / 2 - (1 - q0 - 3 q0^2 + j0) z^2 / 6
 *   log10 H0 = (M_B + 5 a_B + 25) / 5                   (content/methods/hubble-flow.md)
 */
import { FIVE_OVER_LN10, C_KM_S } from '../constants/index.ts';
import type { SnHubbleFlowRow } from '../types/release.ts';
import type { AnalysisChoices } from '../types/analysis.ts';
import { AnalysisError, type AnalysisProblem } from '../types/issues.ts';
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

const outsideRange = (row: SnHubbleFlowRow, analysis: AnalysisChoices): boolean => row.z < analysis.z_min || row.z > analysis.z_max;

/**
 * Why a supernova inside the redshift range has no distance, or null. A sample member must
 * have z > 0 and a positive series bracket; the user can fix either (the redshift, z_min, or
 * q0/j0), so the message names the row and the keys.
 */
function sampleRowProblem(row: SnHubbleFlowRow, analysis: AnalysisChoices): AnalysisProblem | null {
  if (!(row.z > 0)) {
    return {
      message: `Hubble-flow supernova "${row.sn}" (sn_hubble_flow line ${row.line}) has z = ${row.z} inside the range z_min = ${analysis.z_min} to z_max = ${analysis.z_max}; a distance needs z > 0.`,
      hint: 'Raise z_min above 0 or correct the redshift.',
    };
  }
  if (!(kinematicSeriesFactor(row.z, analysis.q0, analysis.j0) > 0)) {
    return {
      message:
        `With q0 = ${analysis.q0} and j0 = ${analysis.j0}, the kinematic distance series is not positive at z = ${row.z} ` +
        `(Hubble-flow supernova "${row.sn}", sn_hubble_flow line ${row.line}), so no distance can be computed.`,
      hint: 'Check q0 and j0 in release.yaml (typical values: q0 near -0.55, j0 near 1), or lower z_max.',
    };
  }
  return null;
}

/** The refusal when the table has rows but none inside z_min <= z <= z_max. */
export function emptySampleProblem(rows: readonly SnHubbleFlowRow[], analysis: AnalysisChoices): AnalysisProblem {
  return {
    message: `No Hubble-flow supernova lies inside ${analysis.z_min} <= z <= ${analysis.z_max} (all ${rows.length} are cut).`,
    hint: 'Widen z_min/z_max in release.yaml or check the redshift column.',
  };
}

/**
 * Why the Hubble-flow sample cannot be formed, or null: a member without a distance (the
 * first, in table order, as selectHubbleFlow meets it), or a table of which no row lies in the
 * redshift range. The one statement of these rules: the ladder refuses with them and
 * `rungbook check` reports them (src/ladder/requirements.ts).
 */
export function hubbleFlowProblem(rows: readonly SnHubbleFlowRow[], analysis: AnalysisChoices): AnalysisProblem | null {
  let members = 0;
  for (const row of rows) {
    if (outsideRange(row, analysis)) continue;
    members++;
    const problem = sampleRowProblem(row, analysis);
    if (problem !== null) return problem;
  }
  return rows.length > 0 && members === 0 ? emptySampleProblem(rows, analysis) : null;
}

/**
 * The sample by redshift. Throws AnalysisError for a member without a distance; an empty
 * sample is returned as such (the ladder refuses it, a comparison of single rows skips it).
 */
export function selectHubbleFlow(rows: SnHubbleFlowRow[], analysis: AnalysisChoices): HubbleFlowSample {
  const used: HubbleFlowSupernova[] = [];
  const excluded: SnHubbleFlowRow[] = [];
  for (const row of rows) {
    if (outsideRange(row, analysis)) {
      excluded.push(row);
      continue;
    }
    const problem = sampleRowProblem(row, analysis);
    if (problem !== null) throw AnalysisError.of(problem);
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
