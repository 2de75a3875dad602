/**
 * Data-quality checks of the main-sequence rung (shown in the report; none stops
 * the calibration).
 */
import type { CheckResult, LocusResult } from '../types/results.ts';
import type { ReddeningPrior, TargetFit } from './mainSequenceTarget.ts';

/**
 * A target's fitted E(B-V) error above this is "poorly constrained": 0.03 mag in
 * E(B-V) is ~0.1 mag in A_V, the size of the whole main-sequence-fitting error
 * budget (3-5 % in distance, common practice).
 */
export const POORLY_CONSTRAINED_EBV_ERR_MAG = 0.03;
/** |corr(mu, E)| above this means the fit sees essentially one combination of mu and E. */
export const DEGENERATE_MU_EBV_CORRELATION = 0.95;

export interface CheckInputs {
  rV: number;
  /** Systems with main-sequence and parallax rows that are not anchors (kind field): rows unused. */
  ignored: string[];
  anchorsNoEbv: string[];
  noFeh: string[];
  locus: (LocusResult & { converged: boolean; iterations: number }) | null;
  targets: { system: string; prior: ReddeningPrior['kind']; fit: TargetFit; meanSlope: number }[];
}

export function mainSequenceChecks(c: CheckInputs): CheckResult[] {
  const checks: CheckResult[] = [];
  if (c.ignored.length > 0) {
    checks.push({
      id: 'ms-rows-ignored',
      title: 'Main-sequence rows not used',
      passed: false,
      severity: 'warning',
      detail: `main-sequence rows of ${c.ignored.join(', ')} are not used: these systems have parallaxes but are of kind "field", so they are neither anchors nor targets`,
    });
  }
  if (c.locus === null) return checks;
  checks.push({
    id: 'ms-anchor-reddening',
    title: 'Anchor reddening given',
    passed: c.anchorsNoEbv.length === 0,
    severity: 'warning',
    detail:
      c.anchorsNoEbv.length === 0
        ? 'every anchor used for the locus has an E(B-V)'
        : `no ebv for anchor(s) ${c.anchorsNoEbv.join(', ')}: E(B-V) = 0 assumed; any true reddening shifts the locus and every target distance`,
  });
  checks.push({
    id: 'ms-metallicity',
    title: 'Metallicities given',
    passed: c.noFeh.length === 0,
    severity: 'warning',
    detail:
      c.noFeh.length === 0
        ? 'every anchor and target has [Fe/H]'
        : `no feh for ${c.noFeh.join(', ')}: [Fe/H] = 0 assumed; 0.1 dex moves a main-sequence distance modulus by about 0.1 mag`,
  });
  const conv = [c.locus.converged ? [] : ['locus'], c.targets.filter((t) => !t.fit.converged).map((t) => t.system)].flat();
  checks.push({
    id: 'ms-fit-convergence',
    title: 'Main-sequence fits converged',
    passed: conv.length === 0,
    severity: 'warning',
    detail: conv.length === 0 ? `locus converged in ${c.locus.iterations} EM iterations; every target converged` : `not converged: ${conv.join(', ')}`,
  });
  checks.push({
    id: 'ms-binaries',
    title: 'Unresolved binaries (mixture model)',
    passed: true,
    severity: 'info',
    detail:
      `locus: binary fraction ${c.locus.binary_fraction.toFixed(3)}, intrinsic scatter ${c.locus.scatter.toFixed(3)} mag over ${c.locus.n_stars} stars` +
      c.targets.map((t) => `; ${t.system}: binary fraction ${t.fit.binaryFraction.toFixed(3)}`).join(''),
  });
  const free = c.targets.filter((t) => t.prior === 'free');
  const poor = free.filter((t) => {
    const [[vmm, vme], [, vee]] = t.fit.covFit;
    return Math.sqrt(vee) > POORLY_CONSTRAINED_EBV_ERR_MAG || Math.abs(vme / Math.sqrt(vmm * vee)) > DEGENERATE_MU_EBV_CORRELATION;
  });
  if (free.length > 0) {
    checks.push({
      id: 'ms-reddening-degeneracy',
      title: 'Freely fitted reddening constrained',
      passed: poor.length === 0,
      severity: 'warning',
      detail: free
        .map((t) => {
          const [[vmm, vme], [, vee]] = t.fit.covFit;
          const head = `${t.system}: E(B-V) = ${t.fit.ebv.toFixed(3)} ± ${Math.sqrt(vee).toFixed(3)} fitted freely, corr(mu, E) = ${(vme / Math.sqrt(vmm * vee)).toFixed(2)}`;
          return poor.includes(t)
            ? `${head}; one colour-magnitude diagram mainly constrains mu + (R_V - s) E = mu + ${(c.rV - t.meanSlope).toFixed(2)} E (s = ${t.meanSlope.toFixed(2)}, the mean locus slope): give an E(B-V) prior (ebv, ebv_err) from a second colour or spectroscopy`
            : head;
        })
        .join('; '),
    });
  }
  return checks;
}
