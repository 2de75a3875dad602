/**
 * The distance-prior block handed to the global fit: the geometric anchors'
 * moduli followed by the main-sequence targets', with K = d mu / d Z and the
 * covariance split by independent source (see src/ladder/types.ts).
 *
 * With J_a = [I; G] (G = d mu_target / d mu_anchor through the locus) and
 * D_a = diag(anchor mu_err_stat^2):
 *   zpLoading = [K; G K]
 *   anchors part        = J_a D_a J_a^T
 *   main_sequence part  = [[0, 0], [0, C_ms]], C_ms = targets' own fits + locus
 *                         statistics + metallicity and anchor-reddening terms.
 */
import { identity, matVec, sandwich, symmetrize, zeros, type Matrix } from '../math/matrix.ts';
import type { DistancePriorBlock } from './types.ts';
import type { ParallaxRungResult } from './parallax.ts';
import type { MainSequenceRungResult } from './mainSequence.ts';

export function buildDistancePriors(parallax: ParallaxRungResult, ms: MainSequenceRungResult | null): DistancePriorBlock {
  const nA = parallax.anchors.length;
  const targets = ms?.targets ?? [];
  const nT = targets.length;
  const n = nA + nT;
  const k = parallax.anchors.map((a) => a.dmu_dzp);
  const g: Matrix = nT > 0 ? ms!.targetAnchorJacobian : [];
  const jA: Matrix = [...identity(nA), ...g];
  const anchorsPart = nA > 0 ? symmetrize(sandwich(jA, parallax.anchorStatCovariance)) : zeros(n, n);
  const msPart = zeros(n, n);
  for (let t = 0; t < nT; t++) for (let u = 0; u < nT; u++) msPart[nA + t][nA + u] = ms!.targetCovarianceMainSequence[t][u];
  return {
    systems: [...parallax.anchors.map((a) => a.system), ...targets.map((t) => t.system)],
    method: [...parallax.anchors.map(() => 'parallax' as const), ...targets.map(() => 'main_sequence' as const)],
    mu: [...parallax.anchors.map((a) => a.mu), ...targets.map((t) => t.mu)],
    zpLoading: [...k, ...(nT > 0 ? matVec(g, k) : [])],
    parts: [
      { source: 'anchors', cov: anchorsPart },
      { source: 'main_sequence', cov: msPart },
    ],
  };
}
