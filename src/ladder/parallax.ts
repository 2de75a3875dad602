/**
 * Parallax rung: zero-point corrected parallaxes, the geometric anchors'
 * distance moduli with their (zero-point correlated) covariance, one EDSD
 * distance posterior per star, and the field stars that anchor Cepheids directly.
 * Negative and low-significance parallaxes are kept everywhere (dropping them
 * would bias the sample); they are only flagged.
 */
import type { AnalysisChoices } from '../types/analysis.ts';
import { AnalysisError } from '../types/issues.ts';
import type { ParallaxRow, Release } from '../types/release.ts';
import type { AnchorResult, CheckResult, ParallaxStarResult } from '../types/results.ts';
import type { Matrix } from '../math/matrix.ts';
import { anchorCovariances, fitAnchorParallax } from './parallaxAnchors.ts';
import { DEFAULT_EDSD_LENGTH_KPC, edsdPosteriorSummary } from './parallaxPosterior.ts';
import type { FieldStarAnchor } from './types.ts';

/**
 * Parallaxes with corrected parallax / error below this are "low significance":
 * the fractional error then exceeds 0.2, where inverting the parallax is
 * unreliable and the distance posterior is shaped by the prior (Bailer-Jones 2015,
 * PASP 127, 994).
 */
export const LOW_SIGNIFICANCE_PARALLAX_SNR = 5;

/** How many star ids a check's detail names before "and N more". */
const IDS_SHOWN = 5;

export interface ParallaxRungOptions {
  /** EDSD prior length scale in kpc (default DEFAULT_EDSD_LENGTH_KPC). */
  edsdLengthKpc?: number;
}

export interface ParallaxRungResult {
  zeroPointMas: number;
  zeroPointErrMas: number;
  floorMas: number;
  edsdLengthKpc: number;
  /** Geometric anchors (kind cluster or galaxy with parallax rows), in the order of release.systems. */
  anchors: AnchorResult[];
  /** Full covariance of the anchors' mu: diag(stat^2) + sigma_Z^2 K K^T. */
  anchorCovariance: Matrix;
  /** Statistical part only, diag(mu_err_stat^2) (no zero point). */
  anchorStatCovariance: Matrix;
  stars: ParallaxStarResult[];
  fieldStars: FieldStarAnchor[];
  checks: CheckResult[];
}

export function fitParallaxRung(release: Release, analysis: AnalysisChoices, options: ParallaxRungOptions = {}): ParallaxRungResult {
  const z0 = analysis.parallax_zero_point;
  const zErr = analysis.parallax_zero_point_err;
  const floor = analysis.parallax_floor;
  const lengthKpc = options.edsdLengthKpc ?? DEFAULT_EDSD_LENGTH_KPC;

  const bySystem = groupBySystem(release.parallax);
  const kindOf = new Map(release.systems.map((s) => [s.system, s.kind]));
  for (const row of release.parallax) {
    if (!kindOf.has(row.system)) {
      throw new AnalysisError(`parallax line ${row.line}: star "${row.star}" names unknown system "${row.system}"`, 'add the system to systems');
    }
  }

  const anchorFits = release.systems
    .filter((s) => s.kind !== 'field' && bySystem.has(s.system))
    .map((s) => fitAnchorParallax(s.system, bySystem.get(s.system)!, z0, zErr, floor));
  const anchors = anchorFits.map((f) => f.result);
  const { stat, total } = anchorCovariances(anchors, zErr);

  const stars = release.parallax.map((row) => starResult(row, z0, floor, lengthKpc));

  const cepheidIds = new Set(release.cepheids.map((c) => c.star));
  const fieldStars: FieldStarAnchor[] = release.parallax
    .filter((r) => kindOf.get(r.system) === 'field' && cepheidIds.has(r.star))
    .map((r) => ({
      star: r.star,
      system: r.system,
      line: r.line,
      parallaxCorrMas: r.parallaxMas - z0,
      parallaxErrMas: Math.hypot(r.parallaxErrMas, floor),
    }));

  const checks = parallaxChecks(
    stars,
    anchorFits.map((f) => ({ ...f.result, chi2: f.chi2, dof: f.dof })),
    lengthKpc,
  );
  return {
    zeroPointMas: z0,
    zeroPointErrMas: zErr,
    floorMas: floor,
    edsdLengthKpc: lengthKpc,
    anchors,
    anchorCovariance: total,
    anchorStatCovariance: stat,
    stars,
    fieldStars,
    checks,
  };
}

function groupBySystem(rows: readonly ParallaxRow[]): Map<string, ParallaxRow[]> {
  const out = new Map<string, ParallaxRow[]>();
  for (const r of rows) {
    const list = out.get(r.system) ?? [];
    list.push(r);
    out.set(r.system, list);
  }
  return out;
}

/**
 * One star: corrected parallax, fractional error and the EDSD posterior. The
 * error used is the catalogue error with the floor added in quadrature (the floor
 * applies to every geometric distance, including a single star's).
 */
function starResult(row: ParallaxRow, z0: number, floor: number, lengthKpc: number): ParallaxStarResult {
  const corr = row.parallaxMas - z0;
  const err = Math.hypot(row.parallaxErrMas, floor);
  const post = edsdPosteriorSummary(corr, err, lengthKpc);
  return {
    star: row.star,
    system: row.system,
    line: row.line,
    parallax_mas: row.parallaxMas,
    parallax_err_mas: row.parallaxErrMas,
    parallax_corr_mas: corr,
    // sigma / parallax; negative for a negative parallax; a finite stand-in for exactly zero.
    frac_err: corr !== 0 ? err / corr : Number.MAX_VALUE,
    dist_inverse_pc: corr > 0 ? 1000 / corr : null,
    dist_mode_pc: 1000 * post.modeKpc,
    dist_q05_pc: 1000 * post.q05Kpc,
    dist_q50_pc: 1000 * post.q50Kpc,
    dist_q95_pc: 1000 * post.q95Kpc,
    bimodal: post.bimodal,
    low_significance: corr / err < LOW_SIGNIFICANCE_PARALLAX_SNR,
  };
}

function listIds(ids: string[]): string {
  const shown = ids.slice(0, IDS_SHOWN).join(', ');
  return ids.length > IDS_SHOWN ? `${shown} and ${ids.length - IDS_SHOWN} more` : shown;
}

function parallaxChecks(
  stars: readonly ParallaxStarResult[],
  anchors: readonly (AnchorResult & { chi2: number; dof: number })[],
  lengthKpc: number,
): CheckResult[] {
  const low = stars.filter((s) => s.low_significance).map((s) => s.star);
  const nonPositive = stars.filter((s) => s.parallax_corr_mas <= 0).map((s) => s.star);
  const bimodal = stars.filter((s) => s.bimodal).map((s) => s.star);
  const scaled = anchors.filter((a) => a.error_scale > 1);
  const n = stars.length;
  const pct = (k: number) => (n === 0 ? '0' : ((100 * k) / n).toFixed(1));
  return [
    {
      id: 'parallax-low-significance',
      title: 'Low-significance parallaxes',
      passed: low.length === 0,
      severity: 'warning',
      detail:
        low.length === 0
          ? `all ${n} parallaxes have corrected parallax / error >= ${LOW_SIGNIFICANCE_PARALLAX_SNR}`
          : `${low.length} of ${n} parallaxes (${pct(low.length)} %) have corrected parallax / error < ${LOW_SIGNIFICANCE_PARALLAX_SNR} ` +
            `(fractional error > 0.2 or parallax <= 0): ${listIds(low)}; their distance posteriors are shaped by the prior (L = ${lengthKpc} kpc)`,
    },
    {
      id: 'parallax-anchor-error-scaling',
      title: 'Anchor parallax errors scaled by chi-square',
      passed: scaled.length === 0,
      severity: 'info',
      detail:
        scaled.length === 0
          ? 'no anchor has chi2/(N-1) > 1 about its mean parallax'
          : scaled.map((a) => `${a.system}: chi2/(N-1) = ${(a.chi2 / a.dof).toFixed(2)}, errors scaled by ${a.error_scale.toFixed(3)}`).join('; '),
    },
    {
      id: 'parallax-nonpositive-kept',
      title: 'Non-positive parallaxes kept',
      passed: true,
      severity: 'info',
      detail:
        nonPositive.length === 0
          ? 'no corrected parallax is <= 0'
          : `${nonPositive.length} corrected parallax(es) <= 0 kept in every mean and posterior (never dropped): ${listIds(nonPositive)}`,
    },
    {
      id: 'parallax-bimodal-posterior',
      title: 'Bimodal distance posteriors',
      passed: bimodal.length === 0,
      severity: 'info',
      detail:
        bimodal.length === 0
          ? 'every distance posterior has a single maximum'
          : `${bimodal.length} posterior(s) have two maxima; the mode reported is the higher one: ${listIds(bimodal)}`,
    },
  ];
}
