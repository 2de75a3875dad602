/**
 * The demo universe: every object of the scenario with its true properties and
 * the measurement errors its catalogues will quote. Nothing here is noisy yet:
 * measurement noise is drawn when a release observes the universe
 * (observe.ts), so several releases can share one universe.
 *
 * Scenario at scale 1 (all names invented, see names.ts):
 *   5 anchor clusters at 40-400 pc (30-120 members with parallaxes and main-sequence
 *     photometry; two of them host one Cepheid each);
 *   1 field group of 40 Cepheids at 0.3-3 kpc, each with its own parallax;
 *   3 main-sequence target clusters at 0.5-2 kpc with E(B-V) priors and 2-4 Cepheids;
 *   1 nearby galaxy (mu ~ 18.5) with main-sequence stars and 300 Cepheids;
 *   9 supernova hosts (mu 30.5-33) with 20-60 Cepheids and 1-2 calibrator SNe;
 *   a pool of 250 Hubble-flow SNe at 0.01 < z < 0.16 (releases observe the first N).
 * `scale` multiplies members, Cepheids per system (supernova hosts: the number of hosts, so rows grow
 * linearly with scale), hosts and Hubble-flow SNe.
 */
import { C_KM_S } from '../constants/index.ts';
import { distanceModulusFromMpc, distanceModulusFromPc, distancePcFromModulus } from '../ladder/distance.ts';
import type { SystemKind } from '../types/release.ts';
import { ANCHOR_NAMES, FIELD_NAME, GALAXY_NAME, MS_TARGET_NAMES, hostName, pad } from './names.ts';
import { createRng, type Rng } from './random.ts';
import { DEMO_PARAMETERS, kinematicDistanceMpc, locusAbsMag, type DemoParameters, type SystemTruth } from './truth.ts';

export type SystemGroup = SystemTruth['group'];

/** A prior the team states in systems.ecsv: value drawn around the truth with `err`; err null = stated as exact. */
export interface PriorSpec {
  err: number | null;
}

export interface UniverseSystem {
  id: string;
  kind: SystemKind;
  group: SystemGroup;
  mu: number | null;
  distancePc: number | null;
  ebv: number | null;
  feh: number | null;
  /** Which priors systems.ecsv states, and with what error. */
  fehPrior: PriorSpec | null;
  ebvPrior: PriorSpec | null;
  ageGyr: number | null;
  raDeg: number;
  decDeg: number;
  ohMean: number | null;
}

export interface ParallaxStar {
  star: string;
  system: string;
  distancePc: number;
  parallaxTrueMas: number;
  /** Error at catalogue error scale 1, mas. */
  errBaseMas: number;
  raDeg: number;
  decDeg: number;
}

export interface MainSequenceStar {
  star: string;
  system: string;
  color0: number;
  binary: boolean;
  /** Noise-free observed colour and magnitude (reddened, shifted, scattered, binary-brightened). */
  colorTrue: number;
  magTrue: number;
  colorErr: number;
  magErr: number;
}

export interface Cepheid {
  star: string;
  system: string;
  group: SystemGroup;
  periodDays: number;
  logP: number;
  oh: number;
  /** True distance modulus of the star (its system's, or its own for field stars). */
  mu: number;
  eVI: number;
  /** True Wesenheit magnitude including the intrinsic-scatter draw and any blend. */
  wTrue: number;
  mhTrue: number;
  mvTrue: number;
  miTrue: number;
  mhErr: number;
  mvErr: number;
  miErr: number;
  blended: boolean;
}

export interface Supernova {
  sn: string;
  /** Host system (calibrators) or null (Hubble flow). */
  system: string | null;
  mu: number;
  /** Cosmological redshift (Hubble flow) and the redshift an exact spectrum would give (with peculiar velocity). */
  zCosmological: number | null;
  zPeculiar: number | null;
  zErr: number | null;
  x1True: number;
  cTrue: number;
  mbTrue: number;
  mbErr: number;
  x1Err: number;
  cErr: number;
  covMbX1: number;
  covMbC: number;
  covX1C: number;
  hostLogMass: number;
}

export interface Universe {
  seed: number;
  scale: number;
  parameters: DemoParameters;
  systems: UniverseSystem[];
  parallaxStars: ParallaxStar[];
  mainSequence: MainSequenceStar[];
  cepheids: Cepheid[];
  snCalibrators: Supernova[];
  /** Pool of Hubble-flow SNe in a fixed order; a release observes a prefix. */
  snHubbleFlow: Supernova[];
}

/** Round to a number of decimals; -0 becomes 0. */
export function roundTo(x: number, decimals: number): number {
  const f = 10 ** decimals;
  const r = Math.round(x * f) / f;
  return r === 0 ? 0 : r;
}

/** Ratios for Cepheid extinction (A_V / E(V-I) = 2.48 from CCM89 with R_V = 3.1, I at 0.80 um; methods d). */
const AV_PER_EVI = 2.48;
const AI_PER_EVI = AV_PER_EVI - 1;
const EBV_TO_EVI = 1.28;

export interface UniverseOptions {
  /** Hubble-flow pool size at scale 1 (default 250). */
  hubbleFlowPool?: number;
  /** Override any truth parameter (e.g. H0) for recovery tests. */
  parameters?: Partial<DemoParameters>;
}

/** The universe while it is drawn: what every population adds to, in a fixed order. */
interface UniverseDraft {
  seed: number;
  p: DemoParameters;
  /** A count at scale 1, scaled (at least 1). */
  n: (x: number) => number;
  systems: UniverseSystem[];
  parallaxStars: ParallaxStar[];
  mainSequence: MainSequenceStar[];
  cepheids: Cepheid[];
  snCalibrators: Supernova[];
  snHubbleFlow: Supernova[];
}

/** A position uniform on the sphere. */
function place(rng: Rng): { raDeg: number; decDeg: number } {
  return {
    raDeg: rng.between(0, 360),
    decDeg: (Math.asin(rng.between(-1, 1)) * 180) / Math.PI,
  };
}

/** The geometric anchor clusters: their members with parallaxes and main-sequence photometry. */
function addAnchors(u: UniverseDraft): void {
  const { seed, p, n, systems, parallaxStars, mainSequence } = u;
  // ---- anchors --------------------------------------------------------------
  const anchorFeh = [0.14, 0.0, -0.06, 0.03, -0.12];
  const anchorAge = [0.65, 0.12, 0.8, 1.4, 0.35];
  const anchorRng = createRng(seed, 'universe', 'anchors');
  ANCHOR_NAMES.forEach((id, k) => {
    // One anchor per fifth of the decade 40-400 pc.
    const distancePc = roundTo(10 ** (Math.log10(40) + (k + anchorRng.between(0.2, 0.8)) / ANCHOR_NAMES.length), 2);
    const fixedEbv = k % 2 === 0 && k !== 2; // two anchors state a fixed (exact) E(B-V)
    const ebv = fixedEbv ? roundTo(anchorRng.between(0.0, 0.006), 3) : roundTo(anchorRng.between(0.01, 0.04), 3);
    const sys: UniverseSystem = {
      id,
      kind: 'cluster',
      group: 'anchor',
      mu: distanceModulusFromPc(distancePc),
      distancePc,
      ebv,
      feh: anchorFeh[k]!,
      fehPrior: { err: roundTo(anchorRng.between(0.02, 0.04), 3) },
      ebvPrior: { err: fixedEbv ? null : roundTo(anchorRng.between(0.004, 0.01), 3) },
      ageGyr: anchorAge[k]!,
      ...place(anchorRng),
      ohMean: null,
    };
    systems.push(sys);
    // Members share the cluster's distance (no depth), as the format's model treats an anchor as one distance.
    const rng = createRng(seed, 'universe', 'anchor-members', id);
    const members = rng.int(n(30), n(120));
    for (let i = 1; i <= members; i++) {
      const star = `${id}-${pad(i, members >= 1000 ? 4 : 3)}`;
      const ms = mainSequenceStar(rng, p, star, sys, 0.3, 1.3);
      mainSequence.push(ms);
      parallaxStars.push({
        star,
        system: id,
        distancePc,
        parallaxTrueMas: 1000 / distancePc,
        // Brighter stars are measured better: 0.02-0.06 mas at error scale 1 (catalogue B's level).
        errBaseMas: roundTo(Math.min(0.06, 0.012 + 0.02 * 10 ** (0.2 * (ms.magTrue - 14))), 4),
        ...scatterAround(rng, sys, 2.5),
      });
    }
  });
}

/** Field Cepheids of the Milky Way, each with its own parallax. */
function addFieldCepheids(u: UniverseDraft): void {
  const { seed, p, n, systems, parallaxStars, cepheids } = u;
  // ---- field Cepheids with their own parallaxes ---------------------------------
  const fieldRng = createRng(seed, 'universe', 'field');
  const field: UniverseSystem = {
    id: FIELD_NAME,
    kind: 'field',
    group: 'field',
    mu: null,
    distancePc: null,
    ebv: null,
    feh: null,
    fehPrior: null,
    ebvPrior: null,
    ageGyr: null,
    ...place(fieldRng),
    ohMean: 0,
  };
  systems.push(field);
  const nField = n(40);
  for (let i = 1; i <= nField; i++) {
    const star = `${FIELD_NAME}-${pad(i, nField >= 100 ? 3 : 2)}`;
    const distancePc = roundTo(10 ** fieldRng.between(Math.log10(300), Math.log10(3000)), 1);
    const mu = distanceModulusFromPc(distancePc);
    const pos = place(fieldRng);
    parallaxStars.push({
      star,
      system: FIELD_NAME,
      distancePc,
      parallaxTrueMas: 1000 / distancePc,
      errBaseMas: roundTo(fieldRng.between(0.025, 0.06), 4),
      raDeg: roundTo(pos.raDeg, 5),
      decDeg: roundTo(pos.decDeg, 5),
    });
    cepheids.push(
      cepheid(fieldRng, p, star, field, mu, {
        logP: [0.4, 1.6],
        oh: fieldRng.gauss(0, 0.08),
        eVI: fieldRng.between(0.15, 1.3),
        mhErr: [0.02, 0.04],
        optErr: [0.01, 0.02],
        blendable: false,
      }),
    );
  }
}

/** Cepheids that are members of an anchor cluster (distance from the cluster mean). */
function addAnchorCepheids(u: UniverseDraft): void {
  const { seed, p, n, systems, cepheids } = u;
  // Anchors hosting one Cepheid each (the star is a member, anchored by the cluster mean).
  for (const k of [2, 4]) {
    const sys = systems[k]!;
    const rng = createRng(seed, 'universe', 'anchor-cepheids', sys.id);
    sys.ohMean = sys.feh;
    const count = n(1);
    for (let i = 1; i <= count; i++) {
      cepheids.push(
        cepheid(rng, p, `${sys.id}-V${i}`, sys, sys.mu!, {
          logP: [0.5, 1.0],
          oh: sys.feh! + rng.gauss(0, 0.02),
          eVI: EBV_TO_EVI * sys.ebv! + Math.abs(rng.gauss(0, 0.01)),
          mhErr: [0.02, 0.04],
          optErr: [0.01, 0.02],
          blendable: false,
        }),
      );
    }
  }
}

/** The main-sequence target clusters (distance by main-sequence fitting) and their Cepheids. */
function addMainSequenceTargets(u: UniverseDraft): void {
  const { seed, p, n, systems, mainSequence, cepheids } = u;
  // ---- main-sequence target clusters ---------------------------------------------
  const targetRng = createRng(seed, 'universe', 'ms-targets');
  MS_TARGET_NAMES.forEach((id, k) => {
    const distancePc = roundTo(10 ** (Math.log10(500) + ((k + targetRng.between(0.2, 0.8)) / MS_TARGET_NAMES.length) * Math.log10(4)), 1);
    const sys: UniverseSystem = {
      id,
      kind: 'cluster',
      group: 'ms_target',
      mu: distanceModulusFromPc(distancePc),
      distancePc,
      ebv: roundTo(targetRng.between(0.15, 0.6), 3),
      feh: roundTo(targetRng.between(-0.1, 0.1), 2),
      fehPrior: { err: roundTo(targetRng.between(0.03, 0.05), 3) },
      ebvPrior: { err: roundTo(targetRng.between(0.02, 0.04), 3) },
      ageGyr: roundTo(targetRng.between(0.05, 0.2), 2),
      ...place(targetRng),
      ohMean: null,
    };
    sys.ohMean = sys.feh;
    systems.push(sys);
    const rng = createRng(seed, 'universe', 'ms-target-members', id);
    const members = rng.int(n(60), n(150));
    for (let i = 1; i <= members; i++) {
      mainSequence.push(mainSequenceStar(rng, p, `${id}-${pad(i, members >= 1000 ? 4 : 3)}`, sys, 0.3, 1.3));
    }
    const nCep = rng.int(n(2), n(4));
    for (let i = 1; i <= nCep; i++) {
      cepheids.push(
        cepheid(rng, p, `${id}-V${i}`, sys, sys.mu!, {
          logP: [0.5, 1.3],
          oh: sys.feh! + rng.gauss(0, 0.03),
          eVI: EBV_TO_EVI * sys.ebv! + Math.abs(rng.gauss(0, 0.02)),
          mhErr: [0.02, 0.05],
          optErr: [0.015, 0.03],
          blendable: false,
        }),
      );
    }
  });
}

/** The nearby galaxy: a complete Cepheid sample and main-sequence photometry at one distance. */
function addNearbyGalaxy(u: UniverseDraft): void {
  const { seed, p, n, systems, mainSequence, cepheids } = u;
  // ---- the nearby galaxy -----------------------------------------------------------
  const rng = createRng(seed, 'universe', 'galaxy');
  const mu = rng.between(18.4, 18.6);
  const sys: UniverseSystem = {
    id: GALAXY_NAME,
    kind: 'galaxy',
    group: 'galaxy',
    mu,
    distancePc: distancePcFromModulus(mu),
    ebv: roundTo(rng.between(0.06, 0.1), 3),
    feh: -0.3,
    fehPrior: { err: 0.08 },
    ebvPrior: { err: 0.02 },
    ageGyr: null,
    ...place(rng),
    ohMean: -0.3,
  };
  systems.push(sys);
  const members = n(200);
  for (let i = 1; i <= members; i++) {
    mainSequence.push(mainSequenceStar(rng, p, `${GALAXY_NAME}-S${pad(i, 4)}`, sys, 0.3, 1.05));
  }
  const nCep = n(300);
  for (let i = 1; i <= nCep; i++) {
    // Short periods dominate a complete nearby sample: log P = 0.3 + 1.4 u^1.5.
    cepheids.push(
      cepheid(rng, p, `${GALAXY_NAME}-C${pad(i, 4)}`, sys, mu, {
        logP: 0.3 + 1.4 * rng.uniform() ** 1.5,
        oh: -0.3 + rng.gauss(0, 0.05),
        eVI: EBV_TO_EVI * sys.ebv! + Math.abs(rng.gauss(0, 0.05)),
        mhErr: 'galaxy',
        optErr: [0.02, 0.04],
        blendable: true,
      }),
    );
  }
}

/** The supernova host galaxies: their Cepheids and calibrator supernovae. */
function addSupernovaHosts(u: UniverseDraft): void {
  const { seed, p, n, systems, cepheids, snCalibrators } = u;
  // ---- supernova hosts -----------------------------------------------------------------
  const hostRng = createRng(seed, 'universe', 'hosts');
  const nHosts = n(9);
  for (let h = 0; h < nHosts; h++) {
    const id = hostName(h);
    const mu = hostRng.between(30.5, 33);
    const sys: UniverseSystem = {
      id,
      kind: 'galaxy',
      group: 'sn_host',
      mu,
      distancePc: distancePcFromModulus(mu),
      ebv: null,
      feh: null,
      fehPrior: null,
      ebvPrior: null,
      ageGyr: null,
      ...place(hostRng),
      ohMean: roundTo(hostRng.between(-0.25, 0.15), 3),
    };
    systems.push(sys);
    const rng = createRng(seed, 'universe', 'host', id);
    const nCep = rng.int(20, 60);
    for (let i = 1; i <= nCep; i++) {
      cepheids.push(
        cepheid(rng, p, `${id}-C${pad(i, nCep >= 1000 ? 4 : 3)}`, sys, mu, {
          logP: [0.8, 1.9],
          oh: sys.ohMean! + rng.gauss(0, 0.06),
          eVI: rng.between(0.05, 0.5),
          mhErr: 'host',
          optErr: 'host',
          blendable: true,
        }),
      );
    }
    const nSn = rng.chance(0.3) ? 2 : 1;
    for (let i = 1; i <= nSn; i++) {
      snCalibrators.push(
        supernova(rng, p, `${id}-sn${i}`, id, mu, null, {
          mbErr: rng.between(0.03, 0.05),
          x1Err: rng.between(0.1, 0.2),
          cErr: rng.between(0.02, 0.03),
          logMass: [9.2, 10.8],
        }),
      );
    }
  }
}

/** The Hubble-flow supernovae, a pool in a fixed order (a release observes a prefix). */
function addHubbleFlow(u: UniverseDraft, hubbleFlowPool: number | undefined, scale: number): void {
  const { seed, p, snHubbleFlow } = u;
  // ---- Hubble flow -------------------------------------------------------------------------
  const flowRng = createRng(seed, 'universe', 'hubble-flow');
  const pool = Math.max(1, Math.round((hubbleFlowPool ?? 250) * scale));
  for (let i = 1; i <= pool; i++) {
    const zCos = flowRng.between(0.01, 0.16);
    const vPec = flowRng.gauss(0, p.sigmaPecKmS);
    const mu = distanceModulusFromMpc(kinematicDistanceMpc(zCos, p.h0KmSMpc, p.q0, p.j0));
    snHubbleFlow.push(
      supernova(
        flowRng,
        p,
        `hf-${pad(i, pool >= 10000 ? 5 : 4)}`,
        null,
        mu,
        { zCos, zPec: zCos + vPec / C_KM_S, zErr: roundTo(flowRng.between(0.0001, 0.0004), 5) },
        {
          mbErr: 0.03 + 0.2 * zCos + flowRng.between(0, 0.015),
          x1Err: Math.min(0.4, 0.1 + 1.5 * zCos + flowRng.between(0, 0.1)),
          cErr: 0.02 + 0.12 * zCos + flowRng.between(0, 0.01),
          logMass: [8.6, 11.4],
        },
      ),
    );
  }
}

/** Generate the demo universe. Pure: same (seed, scale, options) give the same universe. */
export function generateUniverse(seed: number, scale = 1, options: UniverseOptions = {}): Universe {
  if (!(scale > 0) || !Number.isFinite(scale)) throw new RangeError(`scale must be a positive number, found ${scale}`);
  const p: DemoParameters = { ...DEMO_PARAMETERS, ...options.parameters, locusCoeffs: [...(options.parameters?.locusCoeffs ?? DEMO_PARAMETERS.locusCoeffs)] };
  const n = (x: number): number => Math.max(1, Math.round(x * scale));

  const u: UniverseDraft = { seed, p, n, systems: [], parallaxStars: [], mainSequence: [], cepheids: [], snCalibrators: [], snHubbleFlow: [] };
  // in this order: each population draws from its own named random stream, and the lists keep this order
  addAnchors(u);
  addFieldCepheids(u);
  addAnchorCepheids(u);
  addMainSequenceTargets(u);
  addNearbyGalaxy(u);
  addSupernovaHosts(u);
  addHubbleFlow(u, options.hubbleFlowPool, scale);
  const { systems, parallaxStars, mainSequence, cepheids, snCalibrators, snHubbleFlow } = u;
  return { seed, scale, parameters: p, systems, parallaxStars, mainSequence, cepheids, snCalibrators, snHubbleFlow };
}

/** Members spread over a few parsecs on the sky around the system's centre (positions only). */
function scatterAround(rng: Rng, sys: UniverseSystem, radiusPc: number): { raDeg: number; decDeg: number } {
  const thetaDeg = ((radiusPc / sys.distancePc!) * 180) / Math.PI;
  const decDeg = Math.max(-89.99999, Math.min(89.99999, sys.decDeg + rng.gauss(0, thetaDeg / 2)));
  const cosDec = Math.max(0.05, Math.cos((sys.decDeg * Math.PI) / 180));
  let raDeg = (sys.raDeg + rng.gauss(0, thetaDeg / 2) / cosDec) % 360;
  if (raDeg < 0) raDeg += 360;
  return { raDeg: roundTo(raDeg, 5), decDeg: roundTo(decDeg, 5) };
}

/**
 * One main-sequence star of a system following the release format's model:
 *   V = P(c0) - s [Fe/H] + mu + R_V E + scatter (- 0.753 for an equal-mass binary),
 *   B-V = c0 + E,
 * with c0 uniform on [cLo, cHi]. Errors grow with V (photon noise).
 */
function mainSequenceStar(rng: Rng, p: DemoParameters, star: string, sys: UniverseSystem, cLo: number, cHi: number): MainSequenceStar {
  const color0 = rng.between(cLo, cHi);
  const binary = rng.chance(p.binaryFraction);
  const scatter = rng.gauss(0, p.msScatterMag);
  const magTrue = locusAbsMag(p, color0) - p.msFehSlope * sys.feh! + sys.mu! + p.rV * sys.ebv! + scatter - (binary ? p.binaryOffsetMag : 0);
  // Deep imaging of the nearby galaxy: its photometry reaches 3 mag fainter at the same error.
  const depth = sys.group === 'galaxy' ? 23 : 20;
  const magErr = roundTo(Math.min(0.25, Math.hypot(0.008, 0.02 * 10 ** (0.2 * (magTrue - depth)))), 3);
  const colorErr = roundTo(Math.min(0.3, 1.3 * magErr), 3);
  return { star, system: sys.id, color0, binary, colorTrue: color0 + sys.ebv!, magTrue, colorErr, magErr };
}

interface CepheidOptions {
  /** log10 period in days: a value, or a range to draw uniformly from. */
  logP: number | [number, number];
  oh: number;
  eVI: number;
  mhErr: [number, number] | 'galaxy' | 'host';
  optErr: [number, number] | 'host';
  blendable: boolean;
}

/**
 * One Cepheid. The Wesenheit magnitude follows the format's model,
 *   W = mu + M_W + b_W (log10 P - 1) + Z_W [O/H] + N(0, sigma_int),
 * and the three bands are built from intrinsic colours and a reddening E(V-I)
 * with A_H = R E(V-I), so that m_h - R (m_v - m_i) = W exactly whatever E(V-I):
 *   m_h = W + R (V-I)_obs,  m_i = m_h + (I-H)_0 + (A_I - A_H),  m_v = m_i + (V-I)_0 + E(V-I).
 * A blended Cepheid is brighter by blendOffsetMag in every band.
 */
function cepheid(rng: Rng, p: DemoParameters, star: string, sys: UniverseSystem, mu: number, o: CepheidOptions): Cepheid {
  const logPDrawn = typeof o.logP === 'number' ? o.logP : rng.between(o.logP[0], o.logP[1]);
  const periodDays = roundTo(10 ** logPDrawn, 4);
  const logP = Math.log10(periodDays);
  const oh = roundTo(o.oh, 3);
  const blended = o.blendable && rng.chance(p.blendFraction);
  const wTrue = mu + p.mW + p.bW * (logP - p.pivotLogP) + p.zW * oh + rng.gauss(0, p.sigmaIntCepMag) + (blended ? p.blendOffsetMag : 0);
  const vi0 = 0.7 + 0.25 * (logP - 1) + rng.gauss(0, 0.04);
  const ih0 = 0.55 + 0.15 * (logP - 1) + rng.gauss(0, 0.03);
  const eVI = o.eVI;
  const aH = p.wesenheitR * eVI;
  const mhTrue = wTrue + p.wesenheitR * (vi0 + eVI);
  const miTrue = mhTrue + ih0 + (AI_PER_EVI * eVI - aH);
  const mvTrue = miTrue + vi0 + eVI;

  let mhErr: number;
  if (o.mhErr === 'galaxy') mhErr = 0.03 + (0.04 * (1.7 - logP)) / 1.4 + rng.between(0, 0.02);
  else if (o.mhErr === 'host') mhErr = Math.min(0.35, Math.max(0.1, 0.12 + 0.05 * (mu - 30.5) + (0.1 * (1.9 - logP)) / 1.1 + rng.between(0, 0.04)));
  else mhErr = rng.between(o.mhErr[0], o.mhErr[1]);
  const optLevel = o.optErr === 'host' ? 0.04 + 0.02 * (mu - 30.5) : 0;
  const optRange: [number, number] = o.optErr === 'host' ? [optLevel, optLevel + 0.03] : o.optErr;
  return {
    star,
    system: sys.id,
    group: sys.group,
    periodDays,
    logP,
    oh,
    mu,
    eVI,
    wTrue,
    mhTrue,
    mvTrue,
    miTrue,
    mhErr: roundTo(mhErr, 3),
    mvErr: roundTo(rng.between(optRange[0], optRange[1]), 3),
    miErr: roundTo(rng.between(optRange[0], optRange[1]), 3),
    blended,
  };
}

interface SupernovaErrors {
  mbErr: number;
  x1Err: number;
  cErr: number;
  logMass: [number, number];
}

/**
 * One SN Ia with the format's standardisation model,
 *   m_b = mu + M_B - alpha x1 + beta c + N(0, sigma_int),
 * true x1 ~ N(0, 1) and c ~ N(-0.02, 0.07) (both truncated), and a 3x3 measurement
 * covariance of (m_b, x1, c) with modest correlations; the covariances are rounded
 * as written, and observe.ts draws the noise from the rounded matrix.
 */
function supernova(
  rng: Rng,
  p: DemoParameters,
  sn: string,
  system: string | null,
  mu: number,
  redshift: { zCos: number; zPec: number; zErr: number } | null,
  e: SupernovaErrors,
): Supernova {
  let x1True = rng.gauss(0, 1);
  while (Math.abs(x1True) > 3) x1True = rng.gauss(0, 1);
  let cTrue = rng.gauss(-0.02, 0.07);
  while (cTrue < -0.25 || cTrue > 0.3) cTrue = rng.gauss(-0.02, 0.07);
  const mbStandard = mu + p.mB - p.alpha * x1True + p.beta * cTrue + rng.gauss(0, p.sigmaIntSnMag);
  const mbErr = roundTo(e.mbErr, 3);
  const x1Err = roundTo(e.x1Err, 3);
  const cErr = roundTo(e.cErr, 3);
  // Correlations chosen so the 3x3 matrix stays positive definite (determinant >= 0.63).
  const rMx = rng.between(-0.2, 0.2);
  const rMc = rng.between(0.1, 0.5);
  const rXc = rng.between(-0.2, 0.1);
  // drawn last, as before the step existed, so the other draws stay the same
  const hostLogMass = roundTo(rng.between(e.logMass[0], e.logMass[1]), 2);
  const mbTrue = mbStandard + (hostLogMass >= 10 ? p.massStepMag : 0);
  return {
    sn,
    system,
    mu,
    zCosmological: redshift ? redshift.zCos : null,
    zPeculiar: redshift ? redshift.zPec : null,
    zErr: redshift ? redshift.zErr : null,
    x1True,
    cTrue,
    mbTrue,
    mbErr,
    x1Err,
    cErr,
    covMbX1: roundTo(rMx * mbErr * x1Err, 7),
    covMbC: roundTo(rMc * mbErr * cErr, 7),
    covX1C: roundTo(rXc * x1Err * cErr, 7),
    hostLogMass,
  };
}
