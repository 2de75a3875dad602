/**
 * Hubble-flow kinematics: the luminosity distance as a series in redshift,
 * with the deceleration q0 and jerk j0 of the expansion (no Friedmann model
 * assumed), as the release format prescribes:
 *
 *   d_L(z) = (c z / H0) [1 + (1 - q0) z / 2 - (1 - q0 - 3 q0^2 + j0) z^2 / 6]
 *
 * Flat universe; truncated after z^2 in the bracket. For flat Lambda-CDM,
 * q0 = 3 Omega_m / 2 - 1 and j0 = 1; the truncation error there is about
 * -1e-4 mag at z = 0.15 and falls like z^3 below it.
 */
import { C_KM_S, FIVE_OVER_LN10 } from '../constants/index.ts';

function checkRedshift(z: number): void {
  if (!Number.isFinite(z) || z <= 0) {
    throw new RangeError(`Hubble-flow kinematics: redshift z = ${z} is not valid; expected a finite number > 0`);
  }
}

function checkFinite(value: number, name: string): void {
  if (!Number.isFinite(value)) {
    throw new RangeError(`Hubble-flow kinematics: ${name} = ${value} is not valid; expected a finite number`);
  }
}

/**
 * Bracket of the kinematic series, d_L H0 / (c z):
 *   1 + (1 - q0) z / 2 - (1 - q0 - 3 q0^2 + j0) z^2 / 6.
 *
 * Source: Visser 2004, Class. Quantum Grav. 21, 2603 (from memory), flat case.
 * Cost: O(1).
 */
export function kinematicSeriesFactor(z: number, q0: number, j0: number): number {
  checkRedshift(z);
  checkFinite(q0, 'q0');
  checkFinite(j0, 'j0');
  return 1 + ((1 - q0) * z) / 2 - ((1 - q0 - 3 * q0 * q0 + j0) * z * z) / 6;
}

/**
 * Kinematic luminosity distance in Mpc for H0 in km/s/Mpc:
 *   d_L = (c z / H0) [1 + (1 - q0) z / 2 - (1 - q0 - 3 q0^2 + j0) z^2 / 6],
 * with c in km/s (SI definition of the metre).
 *
 * Source: Visser 2004, Class. Quantum Grav. 21, 2603 (from memory), flat case.
 * Cost: O(1).
 */
export function kinematicLuminosityDistanceMpc(z: number, h0KmSMpc: number, q0: number, j0: number): number {
  if (!Number.isFinite(h0KmSMpc) || h0KmSMpc <= 0) {
    throw new RangeError(`Hubble-flow kinematics: H0 = ${h0KmSMpc} km/s/Mpc is not valid; expected a finite number > 0`);
  }
  return ((C_KM_S * z) / h0KmSMpc) * kinematicSeriesFactor(z, q0, j0);
}

/**
 * The redshift part of the Hubble-flow intercept a_B:
 *   log10{ c z [1 + (1 - q0) z / 2 - (1 - q0 - 3 q0^2 + j0) z^2 / 6] },  c in km/s,
 * so that a_B = hubbleFlowLogFactor - 0.2 m_B^0 and
 * log10 H0 = (M_B^0 + 5 a_B + 25) / 5.
 *
 * Source: form of a_B as in Riess et al. 2016, ApJ 826, 56 (from memory).
 * Cost: O(1).
 */
export function hubbleFlowLogFactor(z: number, q0: number, j0: number): number {
  const factor = kinematicSeriesFactor(z, q0, j0);
  if (factor <= 0) {
    throw new RangeError(
      `Hubble-flow kinematics: series factor ${factor} at z = ${z} (q0 = ${q0}, j0 = ${j0}) is not positive; ` +
        `expected a low redshift where the series holds (z <~ 0.2)`,
    );
  }
  return Math.log10(C_KM_S * z * factor);
}

/**
 * Distance-modulus error (mag) caused by a random peculiar velocity sigma_v
 * (km/s) at redshift z, to first order in sigma_v / (c z):
 *   sigma_mu = (5 / ln 10) sigma_v / (c z).
 *
 * Source: follows from mu = 5 log10 d_L + 25 with d_L proportional to c z at
 * low z. Cost: O(1).
 */
export function peculiarVelocityModulusErrorMag(z: number, sigmaVKmS: number): number {
  checkRedshift(z);
  if (!Number.isFinite(sigmaVKmS) || sigmaVKmS < 0) {
    throw new RangeError(`Hubble-flow kinematics: sigma_v = ${sigmaVKmS} km/s is not valid; expected a finite number >= 0`);
  }
  return (FIVE_OVER_LN10 * sigmaVKmS) / (C_KM_S * z);
}
