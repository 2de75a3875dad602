/**
 * Systematic variants: the release re-calibrated with each set of overrides, grouped into
 * named sources of systematic error (one analysis choice each, with its alternatives).
 *
 * - A variant's source follows from the analysis keys it overrides (SOURCE_OF_KEY): every
 *   variant that changes R_V or the Wesenheit coefficient is an alternative of the extinction
 *   law, every one that changes z_min or z_max an alternative of the Hubble-flow range, ...
 *   A variant overriding keys of several sources is a source of its own (their ids joined).
 * - A variant that changes only R_V changes every rung that depends on the extinction law:
 *   the main-sequence rung reads r_v, and the Cepheids' Wesenheit coefficient is derived from
 *   the law with that R_V (extinction.ts, wesenheitCoefficientForRV).
 * - A variant that changes which rows enter the fit (DATA_KEYS) is judged against the
 *   statistical noise of its own change: the sigma of the difference of H0 on shared rows
 *   shared with the comparison engine (src/ladder/sigmaDifference.ts), every row counted as one common error.
 * The rule that turns alternatives into a source's error is in budget.ts.
 */
import type { AnalysisChoices, AnalysisKey } from '../types/analysis.ts';
import { withOverrides } from '../types/analysis.ts';
import { wesenheitCoefficientForRV } from './extinction.ts';
import { fitSnapshot, log10H0Gradient } from './fitSnapshot.ts';
import { prepareSide, sigmaOfDifference, type SharedErrors } from './sigmaDifference.ts';
import type { LadderRun } from './ladderRun.ts';

/** A source of systematic error: one analysis choice. */
export interface SourceDefinition {
  id: string;
  label: string;
}

/** The analysis choice each key belongs to; keys of one choice are alternatives of one source. */
export const SOURCE_OF_KEY: Readonly<Record<AnalysisKey, SourceDefinition>> = Object.freeze({
  parallax_zero_point: { id: 'parallax_zero_point', label: 'Parallax zero point' },
  parallax_zero_point_err: { id: 'parallax_zero_point', label: 'Parallax zero point' },
  parallax_floor: { id: 'parallax_floor', label: 'Parallax error floor' },
  r_v: { id: 'extinction_law', label: 'Extinction law (R_V and the Wesenheit coefficient)' },
  wesenheit_r: { id: 'extinction_law', label: 'Extinction law (R_V and the Wesenheit coefficient)' },
  ms_color_range: { id: 'ms_color_range', label: 'Main-sequence colour range' },
  ms_poly_degree: { id: 'ms_locus_form', label: 'Main-sequence locus polynomial' },
  ms_feh_slope: { id: 'ms_metallicity', label: 'Main-sequence metallicity slope' },
  pl_pivot_logp: { id: 'pl_pivot', label: 'Period-luminosity pivot period' },
  fit_pl_metallicity: { id: 'pl_metallicity', label: 'Period-luminosity metallicity term' },
  sn_alpha: { id: 'sn_standardisation', label: 'Supernova standardisation (alpha, beta fitted or fixed)' },
  sn_beta: { id: 'sn_standardisation', label: 'Supernova standardisation (alpha, beta fitted or fixed)' },
  sn_mass_step_logmass: { id: 'sn_host_mass', label: 'Supernova host-mass step' },
  z_min: { id: 'hubble_flow_range', label: 'Hubble-flow redshift range' },
  z_max: { id: 'hubble_flow_range', label: 'Hubble-flow redshift range' },
  sigma_pec: { id: 'peculiar_velocity', label: 'Peculiar-velocity scatter' },
  q0: { id: 'cosmography', label: 'Kinematic expansion (q0, j0)' },
  j0: { id: 'cosmography', label: 'Kinematic expansion (q0, j0)' },
  clip_sigma: { id: 'outlier_rejection', label: 'Outlier rejection threshold' },
});

/** Keys whose change alters which rows enter the fit (not only how they are modelled). */
export const DATA_KEYS: ReadonlySet<AnalysisKey> = new Set<AnalysisKey>(['clip_sigma', 'z_min', 'z_max', 'ms_color_range']);

function overriddenKeys(overrides: Partial<AnalysisChoices>): AnalysisKey[] {
  return (Object.keys(overrides) as AnalysisKey[]).filter((k) => overrides[k] !== undefined).sort();
}

/** The source a variant is an alternative of (keys of several choices: a source of its own). */
export function sourceOfVariant(overrides: Partial<AnalysisChoices>): SourceDefinition {
  const defs = new Map<string, SourceDefinition>();
  for (const k of overriddenKeys(overrides)) {
    const d = SOURCE_OF_KEY[k];
    if (d) defs.set(d.id, d);
  }
  const list = [...defs.values()].sort((a, b) => a.id.localeCompare(b.id));
  if (list.length === 0) return { id: 'none', label: 'No analysis choice changed' };
  if (list.length === 1) return list[0];
  return { id: list.map((d) => d.id).join('+'), label: list.map((d) => d.label).join(' together with ') };
}

/** Whether the variant changes which rows enter the fit. */
export function changesData(base: AnalysisChoices, overrides: Partial<AnalysisChoices>): boolean {
  return overriddenKeys(overrides).some((k) => DATA_KEYS.has(k) && JSON.stringify(overrides[k]) !== JSON.stringify(base[k]));
}

/**
 * The analysis choices of a variant: the overrides on the baseline, plus what follows from
 * them. A variant that changes R_V and does not state its own Wesenheit coefficient gets the
 * coefficient derived from the extinction law with its R_V; `derived` lists such values.
 */
export function variantAnalysis(base: AnalysisChoices, overrides: Partial<AnalysisChoices>): { analysis: AnalysisChoices; derived: Partial<AnalysisChoices> } {
  const analysis = withOverrides(base, overrides);
  const derived: Partial<AnalysisChoices> = {};
  if (overrides.r_v !== undefined && overrides.wesenheit_r === undefined && overrides.r_v !== base.r_v) {
    analysis.wesenheit_r = wesenheitCoefficientForRV(base.wesenheit_r, base.r_v, overrides.r_v);
    derived.wesenheit_r = analysis.wesenheit_r;
  }
  return { analysis, derived };
}

/** Every row and prior of a variant's fit carries the same error as in the baseline: one release. */
const SAME_RELEASE: SharedErrors = {
  rowCommon: () => true,
  priorCommon: () => true,
};

/**
 * Standard deviation of H0_variant - H0_baseline (km/s/Mpc) expected from statistical noise
 * alone, for a variant that changes which rows enter the fit: first-order propagation of every
 * row's error through both fits (src/ladder/sigmaDifference.ts) with all rows of the release common, so
 * rows in both fits cancel to the extent both weight them alike and rows in one fit only count
 * in full. The prior moduli are counted common too: a variant that changes the main-sequence
 * stars is credited only the noise of the global-fit rows (less noise subtracted, so a larger
 * systematic: the cautious side). Null when either run did not reach H0.
 */
export function variantNoiseH0(baseline: LadderRun, variant: LadderRun): number | null {
  if (!baseline.log10H0 || !variant.log10H0) return null;
  const sa = fitSnapshot(baseline);
  const sb = fitSnapshot(variant);
  if (!sa || !sb) return null;
  const ga = log10H0Gradient(sa);
  const gb = log10H0Gradient(sb);
  if (!ga || !gb) return null;
  const scaleA = 10 ** baseline.log10H0.value * Math.LN10;
  const scaleB = 10 ** variant.log10H0.value * Math.LN10;
  return sigmaOfDifference(prepareSide(sa), ga, scaleA, prepareSide(sb), gb, scaleB, SAME_RELEASE, true).sigma;
}

/**
 * The shift of a variant with its statistical noise removed: subtracted in quadrature and
 * floored at zero, keeping the sign, sign(d) sqrt(max(0, d^2 - noise^2)) (budget.ts, rule).
 */
export function netShift(delta: number, noise: number): number {
  const v = delta * delta - noise * noise;
  return v > 0 ? Math.sign(delta) * Math.sqrt(v) : 0;
}
