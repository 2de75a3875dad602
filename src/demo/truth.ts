/**
 * The invented "true" physics behind the demo data, and the typed truth record
 * that the generator hands back (to tests and benchmarks only; the committed
 * releases never contain it).
 *
 * Values are invented but of realistic size; each line says which published
 * typical value it imitates (see methods notes sections e-g). The model is the
 * one of the release format ("The model these columns feed"):
 *   parallax      = 1000 / d_pc + Z_cat + noise
 *   V             = P(c0) - s [Fe/H] + mu + R_V E,   B-V = c0 + E
 *   W             = m_h - R (m_v - m_i) = mu + M_W + b_W (log10 P - 1) + Z_W [O/H]
 *   m_b           = mu + M_B - alpha x1 + beta c
 *   mu (flow)     = 5 log10(d_L / Mpc) + 25 with the kinematic d_L(z; H0, q0, j0)
 */
import { C_KM_S, EQUAL_MASS_BINARY_OFFSET_MAG } from '../constants/index.ts';
import type { SystemKind } from '../types/release.ts';

export interface DemoParameters {
  /** km/s/Mpc. Invented; between the usual local and early-universe values. */
  h0KmSMpc: number;
  /** Wesenheit absolute magnitude at P = 10 d (typical H-band Wesenheit -5.9, methods e). */
  mW: number;
  /** PL slope per dex of period (typical -3.26 to -3.30, methods e). */
  bW: number;
  /** Metallicity term, mag per dex of [O/H] (typical -0.2, methods e). */
  zW: number;
  /** Intrinsic scatter of the Wesenheit PL relation, mag (typical 0.07-0.08). */
  sigmaIntCepMag: number;
  /** log10 P of the PL pivot (P = 10 d). */
  pivotLogP: number;
  /** Peak absolute B magnitude of a standardised SN Ia (typical -19.25, methods f). */
  mB: number;
  /** Stretch and colour coefficients (typical 0.14 and 3.1, methods f). */
  alpha: number;
  beta: number;
  /** Intrinsic scatter of standardised SN magnitudes, mag (typical 0.1-0.15). */
  sigmaIntSnMag: number;
  /** Host-mass step, mag, added to SNe in hosts with log10 M >= 10 (0 in the demo; recovery tests inject one). */
  massStepMag: number;
  /** Main-sequence metallicity slope, mag per dex at fixed colour (0.98, methods c). */
  msFehSlope: number;
  /** R_V used to redden main-sequence stars (diffuse ISM average 3.1). */
  rV: number;
  /** Wesenheit colour coefficient R; Cepheid H extinction is R E(V-I), so W is reddening-free. */
  wesenheitR: number;
  /** Coefficients of the unevolved main-sequence locus P(c) = sum_k coeffs[k] (c - pivot)^k, absolute V at [Fe/H] = 0. */
  locusCoeffs: number[];
  locusPivot: number;
  /** Intrinsic (cosmic) scatter of main-sequence stars about the locus, mag. */
  msScatterMag: number;
  /** Fraction of main-sequence stars that are unresolved equal-mass binaries. */
  binaryFraction: number;
  /** Magnitude offset of such a binary (2.5 log10 2, brighter). */
  binaryOffsetMag: number;
  /** Fraction of extragalactic Cepheids blended with an unresolved neighbour. */
  blendFraction: number;
  /** Magnitude change of a blended Cepheid in every band (negative: brighter). */
  blendOffsetMag: number;
  /** Deceleration and jerk parameters of the kinematic d_L (flat LCDM, Omega_m = 0.3). */
  q0: number;
  j0: number;
  /** Random peculiar velocity of Hubble-flow hosts, km/s. */
  sigmaPecKmS: number;
}

export const DEMO_PARAMETERS: Readonly<DemoParameters> = Object.freeze({
  h0KmSMpc: 71.3,
  mW: -5.9,
  bW: -3.28,
  zW: -0.2,
  sigmaIntCepMag: 0.075,
  pivotLogP: 1.0,
  mB: -19.25,
  alpha: 0.14,
  beta: 3.1,
  sigmaIntSnMag: 0.11,
  massStepMag: 0,
  msFehSlope: 0.98,
  rV: 3.1,
  wesenheitR: 0.386,
  // Invented cubic: M_V = 3.0 at B-V 0.4, 7.3 at 1.2, slope 4.7-6.9 mag/mag (monotonic over 0.3-1.3).
  locusCoeffs: [3.0, 6.5, -2.0, 0.7421875],
  locusPivot: 0.4,
  msScatterMag: 0.03,
  binaryFraction: 0.25,
  binaryOffsetMag: EQUAL_MASS_BINARY_OFFSET_MAG,
  blendFraction: 0.01,
  blendOffsetMag: -0.5,
  q0: -0.55,
  j0: 1.0,
  sigmaPecKmS: 250,
});

/** Absolute V of the unevolved main sequence at intrinsic colour c and [Fe/H] = 0. */
export function locusAbsMag(params: DemoParameters, color0: number): number {
  const x = color0 - params.locusPivot;
  let y = 0;
  for (let k = params.locusCoeffs.length - 1; k >= 0; k--) y = y * x + params.locusCoeffs[k]!;
  return y;
}

/**
 * Luminosity distance in Mpc from the kinematic expansion to second order in z
 * (Visser 2004; the release format's model):
 *   d_L = (c z / H0) [1 + (1 - q0) z / 2 - (1 - q0 - 3 q0^2 + j0) z^2 / 6].
 * Cost: constant.
 */
export function kinematicDistanceMpc(z: number, h0KmSMpc: number, q0: number, j0: number): number {
  return ((C_KM_S * z) / h0KmSMpc) * (1 + ((1 - q0) * z) / 2 - ((1 - q0 - 3 * q0 * q0 + j0) * z * z) / 6);
}

/** Roles as the release format derives them from the tables. */
export type DemoRole = 'anchor' | 'main_sequence_target' | 'cepheid_system' | 'sn_host';

export interface SystemTruth {
  id: string;
  kind: SystemKind;
  /** Which part of the scenario the system plays. */
  group: 'anchor' | 'field' | 'ms_target' | 'galaxy' | 'sn_host';
  /** True distance modulus (field: null, each star has its own). */
  mu: number | null;
  distancePc: number | null;
  /** True E(B-V) of the main-sequence stars (null where not used). */
  ebv: number | null;
  /** True [Fe/H] (null where not used). */
  feh: number | null;
  /** Mean [O/H] of its Cepheids (null if it has none). */
  ohMean: number | null;
}

export interface FieldStarTruth {
  star: string;
  system: string;
  mu: number;
  distancePc: number;
}

/** Everything a recovery test needs to compare a calibration with. */
export interface ReleaseTruth {
  releaseId: string;
  seed: number;
  scale: number;
  parameters: DemoParameters;
  parallax: {
    catalogue: string;
    /** True zero point of the catalogue, mas (measured = true + this + noise). */
    zeroPointMas: number;
    /** Zero point stated in release.yaml (the team's estimate) and its stated error. */
    statedZeroPointMas: number;
    statedZeroPointErrMas: number;
    /** Multiplier on the base parallax errors. */
    errorScale: number;
  };
  systems: SystemTruth[];
  fieldStars: FieldStarTruth[];
  /** Cepheids written with a blending offset (genuine outliers). */
  blendedCepheids: string[];
  /** Photometric zero-point errors carried in m_h by host (mag; absent host = 0). */
  mhOffsetsMag: Record<string, number>;
  /** Rows per table as written (absent tables: 0). */
  rows: Record<string, number>;
}
