/**
 * Host-mass step of supernova standardisation: type Ia supernovae in hosts more massive than
 * about 10^10 solar masses are brighter after the stretch and colour corrections, by some
 * 0.06-0.1 mag (Kelly et al. 2010, ApJ 715, 743; Sullivan et al. 2010, MNRAS 406, 782).
 * The global fit gets one parameter delta_M_host, added to the standardised magnitude of every
 * supernova whose host has log10(M/M_sun) >= the step location (analysis key
 * sn_mass_step_logmass, default 10):
 *   m_b + alpha x1 - beta c = mu + M_B + delta_M_host [logM >= step]      (calibrators)
 *   m_b + alpha x1 - beta c = 5 log10(c z f(z)) - 5 a_B + delta_M_host [logM >= step]   (Hubble flow)
 * so M_B is the absolute magnitude of supernovae in low-mass hosts.
 * The step is fitted only when it is determined: every supernova in the fit states its host
 * mass, and both sides of the step hold at least one calibrator or one Hubble-flow supernova
 * each (with all on one side it would be degenerate with M_B and a_B).
 */
import type { AnalysisChoices } from '../types/analysis.ts';
import type { SupernovaLightCurve } from '../types/release.ts';

/** 1 for a supernova on the high-mass side of the step, else 0. */
export function massStepIndicator(sn: SupernovaLightCurve, stepLogMass: number): number {
  return sn.hostLogMass !== undefined && sn.hostLogMass >= stepLogMass ? 1 : 0;
}

/** Why the step is not fitted, or null when it is. */
export function massStepProblem(analysis: AnalysisChoices, supernovae: readonly SupernovaLightCurve[]): string | null {
  const at = analysis.sn_mass_step_logmass;
  if (at === null) return 'the analysis sets no host-mass step (sn_mass_step_logmass: null)';
  if (supernovae.length === 0) return 'no supernovae in the fit';
  const missing = supernovae.filter((s) => s.hostLogMass === undefined || !Number.isFinite(s.hostLogMass)).length;
  if (missing > 0) return `${missing} of ${supernovae.length} supernovae in the fit state no host_logmass`;
  const high = supernovae.filter((s) => massStepIndicator(s, at) === 1).length;
  if (high === 0 || high === supernovae.length) return `all ${supernovae.length} supernovae lie on one side of the step at log10 M = ${at}`;
  return null;
}
