/**
 * results.json: the seam between the calibration and everything downstream
 * (report pages, figures, comparisons). Schema "rungbook.results/1".
 * A reader refuses an unknown major version (see src/io/results.ts).
 * Units: magnitudes in mag, H0 in km/s/Mpc, distances in Mpc, parallaxes in mas.
 */
import type { AnalysisChoices } from './analysis.ts';
import type { InputFile, SystemKind } from './release.ts';

export const RESULTS_SCHEMA = 'rungbook.results/1';

export type SystemRole = 'anchor' | 'main_sequence_target' | 'cepheid_system' | 'sn_host' | 'field_star';

export interface ValueWithError {
  value: number;
  err: number;
}

export interface ParameterResult {
  value: number;
  err: number;
  unit: string;
  description: string;
  /** true when the value is fixed by an analysis choice rather than fitted. */
  fixed?: boolean;
  /** true when the value follows from H0 and is hidden by blinding. */
  blinded?: boolean;
  /**
   * The intrinsic scatters only: their 68 % interval, [sqrt(s^2 - e), sqrt(s^2 + e)] with e the
   * standard error of s^2 (the estimator is close to normal in s^2, so the interval in s is
   * asymmetric; its low end is 0 when s^2 - e < 0). `err` is its half-width to first order.
   */
  interval68?: [number, number];
}

export interface SystemResult {
  id: string;
  kind: SystemKind;
  roles: SystemRole[];
  /** The rung whose method gave the distance finally reported. */
  method: 'parallax' | 'main_sequence' | 'cepheid' | 'none';
  /** Final distance modulus after the global fit (mag), or null if not determined. */
  mu: number | null;
  mu_err: number | null;
  distance_mpc: number | null;
  /** Distance modulus from the system's own rung before the global fit (prior), if any. */
  mu_prior: number | null;
  mu_prior_err: number | null;
  /** Number of rows feeding each table for this system. */
  rows: Partial<Record<'parallax' | 'main_sequence' | 'cepheids' | 'sn_calibrators', number>>;
  feh: number | null;
  ebv: number | null;
  ebv_err: number | null;
}

export interface BudgetEntry {
  /** Stable key: "anchors", "parallax_zero_point", "main_sequence", "cepheids", "sn_calibrators",
   * "sn_standardisation", "hubble_flow", "systematic:<source id>" (src/ladder/variants.ts). */
  source: string;
  label: string;
  /** Contribution to sigma(H0) in km/s/Mpc: sqrt of this source's share of the variance. */
  sigma_h0: number;
  /** This source's share of the total variance of H0 (the fractions add up to 1). */
  fraction: number;
  kind: 'statistical' | 'systematic';
}

export interface VariantResult {
  name: string;
  overrides: Partial<AnalysisChoices>;
  /** H0 of this variant (blinded when the release is), or null if the variant failed. */
  h0: number | null;
  h0_stat: number | null;
  delta_h0: number | null;
  error: string | null;
  /** Id of the systematic source (analysis choice) this variant is an alternative of (src/ladder/variants.ts). */
  source?: string;
  /** Values the tool derived for this variant (the Wesenheit coefficient from the extinction law when only R_V changes). */
  derived?: Partial<AnalysisChoices>;
  /** true when the variant changes which rows enter the fit (clipping threshold, redshift range, colour range). */
  changes_data?: boolean;
  /** Standard deviation of delta_h0 expected from statistical noise alone (0 when the data do not change; null if not computed). */
  noise_h0?: number | null;
  /** delta_h0 with that noise removed in quadrature, floored at 0, sign kept (null when the variant failed). */
  delta_h0_net?: number | null;
}

/** One source of systematic error of H0: an analysis choice, its alternatives and its error (src/ladder/budget.ts). */
export interface SystematicSource {
  source: string;
  label: string;
  /** Names of the variants that are its alternatives (those that failed included, with no shift). */
  alternatives: string[];
  /** The source's error of H0 in km/s/Mpc by the rule below. */
  sigma_h0: number;
  /** The rule, in words. */
  rule: string;
}

/** One host's residual scatter in the homogeneity test (src/ladder/fitQuality.ts). */
export interface GroupScatter {
  system: string;
  n: number;
  dof: number;
  chi2: number;
  /** s_h^2 / s_p^2: this host's residual variance relative to the pooled one. */
  variance_ratio: number;
  /** Two-sided p-value of chi2 against chi2(dof). */
  p_value: number;
}

/** Bartlett's test that every Cepheid host's residual variance is the same (src/ladder/fitQuality.ts). */
export interface HomogeneityTest {
  table: 'cepheids';
  test: 'bartlett';
  statistic: number;
  dof: number;
  p_value: number;
  alpha: number;
  passed: boolean;
  groups: GroupScatter[];
  /** Hosts left out for too few rows. */
  excluded: string[];
}

export interface CheckResult {
  id: string;
  title: string;
  passed: boolean;
  /** 'warning' checks do not stop a calibration; 'info' only reports. */
  severity: 'info' | 'warning';
  detail: string;
}

export interface Rejection {
  table: 'cepheids' | 'sn_calibrators' | 'sn_hubble_flow';
  id: string;
  system: string | null;
  line: number;
  /** Standardised residual (residual / its standard deviation, without mixture weight). */
  residual_sigma: number;
  /**
   * clipped: removed by the clipping rule; downweighted: a Cepheid kept in the fit whose core
   * membership of the mixture likelihood is below one half (a probable blend, weighted by it).
   */
  treatment: 'clipped' | 'downweighted';
  /** Core membership of the mixture likelihood (Cepheids); null for other tables. */
  membership: number | null;
}

/** Per-object rows behind the figures and tables (from the final, baseline fit). */
export interface ParallaxStarResult {
  star: string;
  system: string;
  line: number;
  parallax_mas: number;
  parallax_err_mas: number;
  /** Zero-point corrected parallax. */
  parallax_corr_mas: number;
  /** Fractional error sigma / corrected parallax. */
  frac_err: number;
  /** Naive 1 / parallax distance in pc (null when parallax <= 0). */
  dist_inverse_pc: number | null;
  /** Mode and 5/50/95 % quantiles of the exponentially-decreasing-space-density posterior, pc. */
  dist_mode_pc: number;
  dist_q05_pc: number;
  dist_q50_pc: number;
  dist_q95_pc: number;
  bimodal: boolean;
  low_significance: boolean;
}

export interface AnchorResult {
  system: string;
  n_stars: number;
  mean_parallax_mas: number;
  mean_parallax_err_mas: number;
  /** Error scale sqrt(chi2/(N-1)) applied when > 1. */
  error_scale: number;
  mu: number;
  /** Error of mu without the zero-point term (statistical + floor). */
  mu_err_stat: number;
  /** Total error of mu including the shared zero-point term. */
  mu_err: number;
  /** d mu / d zero point (mag per mas). */
  dmu_dzp: number;
}

export interface MainSequenceStarResult {
  star: string;
  system: string;
  line: number;
  color0: number;
  abs_mag: number;
  /** Posterior probability that the star is an unresolved binary (mixture model). */
  p_binary: number;
  used: boolean;
  role: 'anchor' | 'target';
}

export interface MainSequenceTargetResult {
  system: string;
  n_stars: number;
  n_used: number;
  mu: number;
  mu_err: number;
  ebv: number;
  ebv_err: number;
  corr_mu_ebv: number;
  feh: number;
  binary_fraction: number;
}

export interface LocusResult {
  degree: number;
  /** Coefficients of P(c) = sum_k coeffs[k] (c - color_pivot)^k, absolute V at [Fe/H] = 0. */
  coeffs: number[];
  color_pivot: number;
  covariance: number[][];
  color_range: [number, number];
  scatter: number;
  binary_fraction: number;
  n_stars: number;
}

export interface CepheidResult {
  star: string;
  system: string;
  line: number;
  log_period: number;
  w: number;
  w_err: number;
  oh: number;
  /** W corrected to absolute magnitude with the fitted distance of its system: W - mu. */
  abs_w: number;
  residual: number;
  rejected: boolean;
  /** Probability that the row belongs to the Gaussian core of the relation, not to the blend component. */
  membership: number;
}

export interface SupernovaResult {
  sn: string;
  system: string | null;
  line: number;
  z: number | null;
  m_b: number;
  x1: number;
  c: number;
  /** Standardised magnitude m_b + alpha x1 - beta c. */
  m_corr: number;
  m_corr_err: number;
  /** Distance modulus from the fitted M_B (Hubble flow: from the SN; calibrators: host mu). */
  mu: number;
  residual: number;
  in_sample: boolean;
  rejected: boolean;
}

export interface Results {
  schema: typeof RESULTS_SCHEMA;
  release: { id: string; title: string; date: string; previous: string | null };
  blinded: boolean;
  /** Present when the release was unblinded: who, when, offset (from blinding.json). */
  unblinding: { by: string; date: string; offset_mag: number } | null;
  /**
   * Identity of the release's blinding (from blinding.json; null or absent when it has none):
   * public values only. Two releases with equal values carry the same hidden offset, so
   * their H0 ratio is the true one (src/blinding/compare.ts).
   */
  blinding?: { blinding_id: string; key_check: string; commitment: string } | null;
  /** The highest rung reached ('hubble_flow' when H0 was measured). */
  reached: 'parallax' | 'main_sequence' | 'cepheids' | 'sn_calibrators' | 'hubble_flow';
  h0: { value: number; stat: number; sys: number; total: number } | null;
  parameters: Record<string, ParameterResult>;
  systems: SystemResult[];
  budget: BudgetEntry[];
  variants: VariantResult[];
  /** Sources of systematic error (absent in results written before sources existed). */
  systematics?: SystematicSource[];
  fit: {
    chi2: number;
    dof: number;
    p_value: number;
    n_data: number;
    n_parameters: number;
    n_rejected: number;
    converged: boolean;
    iterations: number;
    scatter: { cepheids: number; supernovae: number };
    /** Heterogeneity of the Cepheid hosts' residual scatter (absent in older results; null with fewer than two hosts). */
    quality?: HomogeneityTest | null;
  };
  rejected: Rejection[];
  checks: CheckResult[];
  /** Correlation matrix of the main parameters, names in `names` order. */
  correlation: { names: string[]; matrix: number[][] };
  rungs: {
    parallax: { anchors: AnchorResult[]; stars: ParallaxStarResult[]; anchor_covariance: number[][] };
    main_sequence: {
      locus: LocusResult | null;
      targets: MainSequenceTargetResult[];
      stars: MainSequenceStarResult[];
    };
    cepheids: CepheidResult[];
    supernovae: { calibrators: SupernovaResult[]; hubble_flow: SupernovaResult[] };
  };
  analysis: AnalysisChoices;
  /** Analysis keys set by release.yaml (others are defaults). */
  analysis_set: string[];
  provenance: {
    inputs: InputFile[];
    code_version: string;
    analysis_hash: string;
    inputs_hash: string;
  };
}
