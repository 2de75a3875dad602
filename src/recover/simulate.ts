/**
 * One simulated release shaped like a given one (pure: same release, truth and seed give the
 * same release). Shape kept: the systems and their kinds, every row of every table (so the same
 * object counts per system), each object's covariates (period, [O/H], colour, z, x1, c), the
 * analysis choices and cuts of release.yaml. Redrawn: the noise, the intrinsic scatters, the
 * binaries and the stated priors, from the model of the release format with the truth of
 * truth.ts. The error columns are resampled from the release's own rows: each row takes the
 * errors of a row drawn among its nearest neighbours (by a covariate the errors depend on) in the
 * same system, so the simulated errors follow the release's own distribution and its trends.
 *
 * Model (release format; DEVELOPERS.md, "Conventions"):
 *   parallax = 1000 / d_pc + Z + N(0, parallax_err); the stated Z0 = Z + N(0, parallax_zero_point_err)
 *   V = P(c0) - s [Fe/H] + mu + R_V E + N(0, locus scatter) (- 2.5 log10 2 for a binary),  B-V = c0 + E
 *   W = m_h - R (m_v - m_i) = mu + M_W + b_W (log10 P - pivot) + Z_W [O/H] + N(0, sigma_int),
 *     and for a blended Cepheid (a Cepheid in a galaxy, with probability RECOVERY_BLENDS.fraction)
 *     m_h, m_v and m_i all brighter by u ~ U(offsetRangeMag), so W brighter by u
 *   m_b + alpha x1 - beta c = mu + M_B + N(0, sigma_int_sn), with (m_b, x1, c) noise from the row's covariance
 *   Hubble flow: mu + M_B = 5 log10(c z f(z)) - 5 a_B, z_obs = z + v_pec / c + N(0, z_err), v_pec ~ N(0, sigma_pec)
 *
 * `statedErrorFactor` is a test hook: the noise is drawn with the resampled error, the table
 * states the error times the factor (0.5: errors halved in the simulation only). It exists so a
 * test can show that a recovery sees errors that are too small.
 */
import { C_KM_S, EQUAL_MASS_BINARY_OFFSET_MAG } from '../constants/index.ts';
import { createRng, type Rng } from '../demo/random.ts';
import { cholesky3 } from '../demo/observe.ts';
import { distancePcFromModulus } from '../ladder/distance.ts';
import { hubbleFlowLogFactor } from '../ladder/kinematics.ts';
import type { CepheidRow, MainSequenceRow, ParallaxRow, Release, SnCalibratorRow, SnHubbleFlowRow, SupernovaLightCurve, SystemRow } from '../types/release.ts';
import type { RecoveryTruth } from './truth.ts';

/** Error columns a test may scale (stated error = factor x error the noise was drawn with). */
export type ErrorColumn = 'parallax_err' | 'color_err' | 'mag_err' | 'm_h_err' | 'm_v_err' | 'm_i_err' | 'm_b_err' | 'z_err';

export interface SimulateOptions {
  statedErrorFactor?: Partial<Record<ErrorColumn, number>>;
  /** Blended Cepheids (default RECOVERY_BLENDS; fraction 0 switches them off). */
  blends?: { fraction: number; offsetRangeMag: readonly [number, number] };
}

/**
 * Blends drawn into every simulated release: a few per cent of the Cepheids in galaxies (kind
 * `galaxy`: crowded fields), 0.3 to 1 mag too bright in every band, the rates real data show
 * (from memory, no single source). Recovery runs with them so that it sees what they do to H0;
 * the fit models them (src/ladder/cepheidMixture.ts), but is not told this fraction.
 */
export const RECOVERY_BLENDS = { fraction: 0.02, offsetRangeMag: [0.3, 1.0] as readonly [number, number] };

/**
 * Rows resample their errors from the rows within this many places either side of their own,
 * in the order of the covariate (common practice, no source: wide enough to redraw, narrow
 * enough to keep a trend of the errors with magnitude, period or redshift).
 */
export const ERROR_NEIGHBOURS = 3;

/**
 * For each row, the index of the row whose errors it takes: drawn among the ERROR_NEIGHBOURS
 * nearest in `covariate` order within the same group (system).
 */
export function errorDonors<T>(rng: Rng, rows: readonly T[], group: (r: T) => string, covariate: (r: T) => number): number[] {
  const byGroup = new Map<string, number[]>();
  rows.forEach((r, i) => {
    const g = group(r);
    const list = byGroup.get(g);
    if (list) list.push(i);
    else byGroup.set(g, [i]);
  });
  const donor = new Array<number>(rows.length);
  for (const idx of byGroup.values()) {
    // Stable order: covariate, then position in the table.
    const sorted = [...idx].sort((a, b) => covariate(rows[a]!) - covariate(rows[b]!) || a - b);
    sorted.forEach((row, rank) => {
      const lo = Math.max(0, rank - ERROR_NEIGHBOURS);
      const hi = Math.min(sorted.length - 1, rank + ERROR_NEIGHBOURS);
      donor[row] = sorted[rng.int(lo, hi)]!;
    });
  }
  return donor;
}

function need<T>(map: Record<string, T>, key: string, what: string): T {
  const v = map[key];
  if (v === undefined) throw new RangeError(`recovery: no true ${what} for "${key}" in the release's own fit`);
  return v;
}

/** Absolute V of the fitted locus at intrinsic colour c0 and [Fe/H] = 0. */
function locusMag(truth: RecoveryTruth, c0: number): number {
  const locus = truth.locus!;
  const x = c0 - locus.color_pivot;
  let y = 0;
  for (let k = locus.coeffs.length - 1; k >= 0; k--) y = y * x + locus.coeffs[k]!;
  return y;
}

/** Lower Cholesky factor of a light curve's covariance; the diagonal alone if the row's matrix is not positive definite. */
function lightCurveFactor(e: SupernovaLightCurve): number[][] {
  try {
    return cholesky3([
      [e.mBErr ** 2, e.covMbX1, e.covMbC],
      [e.covMbX1, e.x1Err ** 2, e.covX1C],
      [e.covMbC, e.covX1C, e.cErr ** 2],
    ]);
  } catch {
    return [
      [e.mBErr, 0, 0],
      [0, e.x1Err, 0],
      [0, 0, e.cErr],
    ];
  }
}

/** Noisy (m_b, x1, c) around the truth with the donor row's covariance; errors stated as the donor's (scaled by the hook). */
function lightCurve<T extends SupernovaLightCurve>(rng: Rng, row: T, donor: SupernovaLightCurve, mbTrue: number, mbFactor: number): T {
  const l = lightCurveFactor(donor);
  const n0 = rng.normal();
  const n1 = rng.normal();
  const n2 = rng.normal();
  return {
    ...row,
    mB: mbTrue + l[0]![0]! * n0,
    x1: row.x1 + l[1]![0]! * n0 + l[1]![1]! * n1,
    c: row.c + l[2]![0]! * n0 + l[2]![1]! * n1 + l[2]![2]! * n2,
    mBErr: donor.mBErr * mbFactor,
    x1Err: donor.x1Err,
    cErr: donor.cErr,
    covMbX1: donor.covMbX1 * mbFactor,
    covMbC: donor.covMbC * mbFactor,
    covX1C: donor.covX1C,
  };
}

/** What every table's simulation needs: the release, the truth, the seed's streams, the error factors. */
interface Simulation {
  release: Release;
  truth: RecoveryTruth;
  a: Release['analysis'];
  options: SimulateOptions;
  /** Factor on a stated error column (the hook for testing mis-stated errors). */
  f: (c: ErrorColumn) => number;
  /** The seed's random stream of this name. */
  stream: (name: string) => Rng;
  fieldSystems: Set<string>;
}

/** Stated priors: drawn around the truth with their stated errors (exact when stated without). */
function simulateSystems(sim: Simulation): SystemRow[] {
  const { release, truth, stream } = sim;
  // Stated priors: drawn around the truth with their stated errors (exact when stated without).
  const priorRng = stream('systems');
  const systems: SystemRow[] = release.systems.map((s) => {
    const out: SystemRow = { ...s };
    if (s.feh !== undefined && s.fehErr !== undefined) out.feh = truth.systemFeh[s.system]! + priorRng.gauss(0, s.fehErr);
    if (s.ebv !== undefined) {
      const e = truth.systemEbv[s.system] ?? s.ebv;
      out.ebv = s.ebvErr !== undefined ? e + priorRng.gauss(0, s.ebvErr) : e;
    }
    return out;
  });
  return systems;
}

/** Parallaxes and the stated zero point. */
function simulateParallax(sim: Simulation): { parallax: ParallaxRow[]; statedZeroPoint: number } {
  const { release, truth, a, f, stream, fieldSystems } = sim;
  // Parallaxes and the stated zero point.
  const zRng = stream('parallax-zero-point');
  const statedZeroPoint = release.parallax.length > 0 ? truth.parallaxZeroPointMas + zRng.gauss(0, a.parallax_zero_point_err) : a.parallax_zero_point;
  const pRng = stream('parallax');
  const pDonor = errorDonors(
    pRng,
    release.parallax,
    (r) => r.system,
    (r) => r.parallaxErrMas,
  );
  const parallax: ParallaxRow[] = release.parallax.map((row, i) => {
    let trueMas: number;
    if (fieldSystems.has(row.system)) {
      const mu = truth.fieldStarMu[row.star];
      trueMas = mu !== undefined ? 1000 / distancePcFromModulus(mu) : need(truth.fieldStarParallaxMas, row.star, 'parallax of the field star');
    } else trueMas = 1000 / distancePcFromModulus(need(truth.systemMu, row.system, 'distance modulus of system'));
    const err = release.parallax[pDonor[i]!]!.parallaxErrMas;
    return { ...row, parallaxMas: trueMas + truth.parallaxZeroPointMas + pRng.gauss(0, err), parallaxErrMas: err * f('parallax_err') };
  });
  return { parallax, statedZeroPoint };
}

/** Main-sequence photometry: the locus at the true distance, reddening and metallicity, binaries, scatter, noise. */
function simulateMainSequence(sim: Simulation): MainSequenceRow[] {
  const { release, truth, a, f, stream } = sim;
  // Main sequence.
  const msRng = stream('main-sequence');
  const msDonor = errorDonors(
    msRng,
    release.mainSequence,
    (r) => r.system,
    (r) => r.mag,
  );
  const mainSequence: MainSequenceRow[] = release.mainSequence.map((row, i) => {
    if (!truth.locus) throw new RangeError('recovery: the release has main-sequence rows but its fit has no main-sequence locus');
    const e = need(truth.systemEbv, row.system, 'E(B-V) of system');
    const feh = need(truth.systemFeh, row.system, '[Fe/H] of system');
    const mu = need(truth.systemMu, row.system, 'distance modulus of system');
    const c0 = row.color - e;
    const binary = msRng.chance(truth.locus.binary_fraction);
    const vTrue =
      locusMag(truth, c0) - a.ms_feh_slope * feh + mu + a.r_v * e + msRng.gauss(0, truth.locus.scatter) - (binary ? EQUAL_MASS_BINARY_OFFSET_MAG : 0);
    const d = release.mainSequence[msDonor[i]!]!;
    return {
      ...row,
      color: row.color + msRng.gauss(0, d.colorErr),
      colorErr: d.colorErr * f('color_err'),
      mag: vTrue + msRng.gauss(0, d.magErr),
      magErr: d.magErr * f('mag_err'),
    };
  });
  return mainSequence;
}

/** Cepheids from the true period-luminosity relation, with blends in galaxies. */
function simulateCepheids(sim: Simulation): CepheidRow[] {
  const { release, truth, a, f, stream, fieldSystems, options } = sim;
  // Cepheids: the observed colour m_v - m_i of the row is kept as the true colour. Blends come from
  // a stream of their own, so switching them off leaves every other draw as it was.
  const blends = options.blends ?? RECOVERY_BLENDS;
  const bRng = stream('cepheid-blends');
  const galaxies = new Set(release.systems.filter((s) => s.kind === 'galaxy').map((s) => s.system));
  const blendOffset = release.cepheids.map((row) => {
    if (!galaxies.has(row.system) || blends.fraction <= 0) return 0;
    const blended = bRng.chance(blends.fraction);
    const u = blends.offsetRangeMag[0] + (blends.offsetRangeMag[1] - blends.offsetRangeMag[0]) * bRng.uniform();
    return blended ? -u : 0;
  });
  const cRng = stream('cepheids');
  const cDonor = errorDonors(
    cRng,
    release.cepheids,
    (r) => r.system,
    (r) => r.periodDays,
  );
  const cepheids: CepheidRow[] = release.cepheids.map((row, i) => {
    const mu = fieldSystems.has(row.system)
      ? need(truth.fieldStarMu, row.star, 'distance modulus of the field Cepheid')
      : need(truth.systemMu, row.system, 'distance modulus of system');
    const w = mu + truth.mW + truth.bW * (Math.log10(row.periodDays) - a.pl_pivot_logp) + truth.zW * row.oh + cRng.gauss(0, truth.sigmaIntCepheid);
    // a blend brightens every band by the same amount: the colour stays, W moves with m_h
    const mhTrue = w + a.wesenheit_r * (row.mV - row.mI) + blendOffset[i]!;
    const d = release.cepheids[cDonor[i]!]!;
    return {
      ...row,
      mH: mhTrue + cRng.gauss(0, d.mHErr),
      mHErr: d.mHErr * f('m_h_err'),
      mV: row.mV + blendOffset[i]! + cRng.gauss(0, d.mVErr),
      mVErr: d.mVErr * f('m_v_err'),
      mI: row.mI + blendOffset[i]! + cRng.gauss(0, d.mIErr),
      mIErr: d.mIErr * f('m_i_err'),
    };
  });
  return cepheids;
}

/** Calibrator supernovae at their host's true distance. */
function simulateCalibrators(sim: Simulation): SnCalibratorRow[] {
  const { release, truth, f, stream } = sim;
  // Calibrator supernovae: the row's x1 and c are kept as the true ones.
  const sRng = stream('sn-calibrators');
  const sDonor = errorDonors(
    sRng,
    release.snCalibrators,
    () => '',
    (r) => r.mBErr,
  );
  const snCalibrators: SnCalibratorRow[] = release.snCalibrators.map((row, i) => {
    const mu = need(truth.systemMu, row.system, 'distance modulus of system');
    const mbTrue = mu + truth.mB - truth.alpha * row.x1 + truth.beta * row.c + sRng.gauss(0, truth.sigmaIntSn);
    return lightCurve(sRng, row, release.snCalibrators[sDonor[i]!]!, mbTrue, f('m_b_err'));
  });
  return snCalibrators;
}

/** Hubble-flow supernovae at the true expansion, with peculiar velocities. */
function simulateHubbleFlow(sim: Simulation): SnHubbleFlowRow[] {
  const { release, truth, a, f, stream } = sim;
  // Hubble flow: the row's z is the cosmological redshift; errors from neighbours in z.
  const hRng = stream('sn-hubble-flow');
  const hDonor = errorDonors(
    hRng,
    release.snHubbleFlow,
    () => '',
    (r) => r.z,
  );
  const snHubbleFlow: SnHubbleFlowRow[] = release.snHubbleFlow.map((row, i) => {
    const mbTrue = 5 * hubbleFlowLogFactor(row.z, a.q0, a.j0) - 5 * truth.aB - truth.alpha * row.x1 + truth.beta * row.c + hRng.gauss(0, truth.sigmaIntSn);
    const d = release.snHubbleFlow[hDonor[i]!]!;
    const z = row.z + hRng.gauss(0, a.sigma_pec) / C_KM_S + hRng.gauss(0, d.zErr);
    return { ...lightCurve(hRng, row, d, mbTrue, f('m_b_err')), z, zErr: d.zErr * f('z_err') };
  });
  return snHubbleFlow;
}

/** The simulated release for one seed. Every table draws from its own named stream of the seed. */
export function simulateRelease(release: Release, truth: RecoveryTruth, seed: number, options: SimulateOptions = {}): Release {
  const a = release.analysis;
  const sim: Simulation = {
    release,
    truth,
    a,
    options,
    f: (c: ErrorColumn) => options.statedErrorFactor?.[c] ?? 1,
    stream: (name: string) => createRng(seed, 'recover', name),
    fieldSystems: new Set(release.systems.filter((s) => s.kind === 'field').map((s) => s.system)),
  };
  const systems = simulateSystems(sim);
  const { parallax, statedZeroPoint } = simulateParallax(sim);
  const mainSequence = simulateMainSequence(sim);
  const cepheids = simulateCepheids(sim);
  const snCalibrators = simulateCalibrators(sim);
  const snHubbleFlow = simulateHubbleFlow(sim);
  return {
    ...release,
    analysis: { ...a, parallax_zero_point: statedZeroPoint },
    variants: [],
    systems,
    parallax,
    mainSequence,
    cepheids,
    snCalibrators,
    snHubbleFlow,
  };
}
