/**
 * Analysis choices of a release (the `analysis:` block of release.yaml).
 * Every key is optional in the file; DEFAULT_ANALYSIS below holds the defaults,
 * each with the reason it was chosen. The report marks which values are defaults.
 */
export interface AnalysisChoices {
  /** mas, subtracted from every measured parallax (true = measured - zero point). */
  parallax_zero_point: number;
  /** mas, one error shared by every parallax (fully correlated). */
  parallax_zero_point_err: number;
  /** mas, added in quadrature to the error of each geometric distance. */
  parallax_floor: number;
  /** Total-to-selective extinction R_V used in main-sequence fitting. */
  r_v: number;
  /** Intrinsic B-V range of the unevolved main sequence used for the locus and targets. */
  ms_color_range: [number, number];
  ms_poly_degree: number;
  /** mag per dex: M_V(c, feh) = P(c) - ms_feh_slope * feh. */
  ms_feh_slope: number;
  /** W = m_h - wesenheit_r (m_v - m_i). */
  wesenheit_r: number;
  pl_pivot_logp: number;
  fit_pl_metallicity: boolean;
  /** null: fitted; a number: fixed. */
  sn_alpha: number | null;
  sn_beta: number | null;
  /** log10(M_host / M_sun) of the supernova host-mass step (src/ladder/massStep.ts); null: no step. */
  sn_mass_step_logmass: number | null;
  z_min: number;
  z_max: number;
  /** km/s, peculiar-velocity scatter in the Hubble flow. */
  sigma_pec: number;
  q0: number;
  j0: number;
  /** Iterative outlier rejection threshold in standardised residuals; null disables it. */
  clip_sigma: number | null;
}

export type AnalysisKey = keyof AnalysisChoices;

/** Unit of each analysis choice, as the comments above give it ('' for a pure number or a flag). */
export const ANALYSIS_UNITS: Readonly<Record<AnalysisKey, string>> = Object.freeze({
  parallax_zero_point: 'mas',
  parallax_zero_point_err: 'mas',
  parallax_floor: 'mas',
  r_v: '',
  ms_color_range: 'mag',
  ms_poly_degree: '',
  ms_feh_slope: 'mag/dex',
  wesenheit_r: '',
  pl_pivot_logp: '',
  fit_pl_metallicity: '',
  sn_alpha: '',
  sn_beta: '',
  sn_mass_step_logmass: 'dex',
  z_min: '',
  z_max: '',
  sigma_pec: 'km/s',
  q0: '',
  j0: '',
  clip_sigma: '',
});

export interface SystematicVariant {
  name: string;
  overrides: Partial<AnalysisChoices>;
}

/**
 * Defaults. Sources for typical values are in the method notes (content/methods);
 * here each line says why this value is the default.
 */
export const DEFAULT_ANALYSIS: Readonly<AnalysisChoices> = Object.freeze({
  // Global parallax zero point of recent space astrometry is about -0.02 mas
  // (Lindegren et al. 2021, A&A 649, A4; Groenewegen 2021, A&A 654, A20).
  parallax_zero_point: -0.02,
  // Release-to-release and magnitude-dependent spread of the zero point, a few uas.
  parallax_zero_point_err: 0.005,
  // No floor unless the release asks for one.
  parallax_floor: 0,
  // Diffuse interstellar medium average (Cardelli, Clayton & Mathis 1989).
  r_v: 3.1,
  // Unevolved, well-measured part of the FGK dwarf sequence (common practice, no source).
  ms_color_range: [0.4, 1.2] as [number, number],
  ms_poly_degree: 3,
  // 0.98 mag/dex at fixed B-V (Twarog, Anthony-Twarog & Edgington-Giordano 2009).
  ms_feh_slope: 0.98,
  // H-band Wesenheit coefficient used with V and I (Riess et al. 2016, ApJ 826, 56; from memory).
  wesenheit_r: 0.386,
  // Pivot at P = 10 d (common practice, no source).
  pl_pivot_logp: 1.0,
  fit_pl_metallicity: true,
  sn_alpha: null,
  sn_beta: null,
  // Host-mass step at 10^10 M_sun (Kelly et al. 2010, ApJ 715, 743; Sullivan et al. 2010, MNRAS 406, 782);
  // fitted only when every supernova states host_logmass and both sides are populated.
  sn_mass_step_logmass: 10,
  // Hubble-flow range 0.0233 < z < 0.15 (Riess et al. 2016; from memory).
  z_min: 0.0233,
  z_max: 0.15,
  // Random peculiar velocity ~250 km/s (common practice; Wang 2007 measured ~270 km/s).
  sigma_pec: 250,
  // Flat Lambda-CDM with Omega_m = 0.3: q0 = 3 Omega_m / 2 - 1 = -0.55, j0 = 1.
  q0: -0.55,
  j0: 1.0,
  clip_sigma: 3.5,
});

export const ANALYSIS_KEYS = Object.keys(DEFAULT_ANALYSIS) as AnalysisKey[];

/** Keys of release.yaml at the top level. */
export const MANIFEST_KEYS = ['id', 'title', 'date', 'previous', 'blinded', 'analysis'] as const;

/** Apply a variant's overrides to a full set of choices (returns a new object). */
export function withOverrides(base: AnalysisChoices, overrides: Partial<AnalysisChoices>): AnalysisChoices {
  return { ...base, ...overrides, ms_color_range: [...(overrides.ms_color_range ?? base.ms_color_range)] as [number, number] };
}
