/**
 * Observe the demo universe as one data release: draw measurement noise for
 * each table from its catalogue's own stream and write the release's files.
 *
 * Every quoted error is the standard deviation the noise was drawn with (after
 * rounding to the written digits), so error bars are honest:
 *   parallax  = 1000 / d_pc + Z_cat + N(0, parallax_err)
 *   colour    = c0 + E + N(0, color_err),  mag = V_true + N(0, mag_err)
 *   m_x       = m_x,true + N(0, m_x_err) (+ the catalogue's m_h offset of the host)
 *   (m_b, x1, c) = truth + N(0, C) with C the written 3x3 covariance
 *   z         = z_cos + v_pec / c + N(0, z_err)
 * The stated parallax zero point is Z0 = Z_cat + N(0, stated error), drawn once
 * per catalogue, so the stated error is honest too.
 */
import { writeEcsv, type TableRow } from '../io/writeEcsv.ts';
import { distanceModulusFromPc } from '../ladder/distance.ts';
import type { TableName } from '../types/release.ts';
import { COLLABORATION } from './names.ts';
import { createRng, type Rng } from './random.ts';
import { releaseYaml } from './releaseYaml.ts';
import type { ParallaxCatalogue, ReleaseSpec } from './spec.ts';
import { TABLE_COLUMNS } from './tables.ts';
import type { ReleaseTruth, SystemTruth } from './truth.ts';
import { roundTo, type Supernova, type Universe } from './universe.ts';

export interface ObservedRelease {
  /** File name -> text (release.yaml, the table files, notes.md). */
  files: Record<string, string>;
  truth: ReleaseTruth;
  /** The spec's blindForPublication, or null (see ReleaseSpec). */
  blindForPublication: { blindingId: string; date: string } | null;
}

const TABLE_FILES: Record<TableName, string> = {
  systems: 'systems.ecsv',
  parallax: 'parallax.ecsv',
  main_sequence: 'main_sequence.ecsv',
  cepheids: 'cepheids.ecsv',
  sn_calibrators: 'sn_calibrators.ecsv',
  sn_hubble_flow: 'sn_hubble_flow.ecsv',
};

function tableMeta(label: string): Record<string, string> {
  return { source: `${COLLABORATION}, ${label}`, note: 'Synthetic demonstration data; every object is invented.' };
}

type Catalogues = ReleaseSpec['catalogues'];

/** The systems table: each system's stated [Fe/H] and E(B-V) priors drawn about the truth. */
function observeSystems(universe: Universe, cat: Catalogues, seed: number): TableRow[] {
  const rng = createRng(seed, 'observe', 'systems', cat.systems.version);
  return universe.systems.map((s) => {
    const feh = s.fehPrior && s.feh !== null ? statedPrior(rng, s.feh, s.fehPrior.err, 2) : null;
    const ebv = s.ebvPrior && s.ebv !== null ? statedPrior(rng, s.ebv, s.ebvPrior.err, 3) : null;
    return {
      system: s.id,
      kind: s.kind,
      feh,
      feh_err: feh !== null ? s.fehPrior!.err : null,
      ebv,
      ebv_err: ebv !== null ? s.ebvPrior!.err : null,
      age_gyr: s.ageGyr,
    };
  });
}

/** The parallax table: true parallax plus the catalogue's zero point and noise at its error scale. */
function observeParallax(universe: Universe, pc: ParallaxCatalogue, seed: number): TableRow[] {
  const rng = createRng(seed, 'observe', 'parallax', pc.version);
  return universe.parallaxStars.map((s) => {
    const err = Math.max(0.0001, roundTo(s.errBaseMas * pc.errorScale, 4));
    return {
      star: s.star,
      system: s.system,
      parallax: roundTo(s.parallaxTrueMas + pc.zeroPointMas + rng.gauss(0, err), 4),
      parallax_err: err,
      ra: s.raDeg,
      dec: s.decDeg,
    };
  });
}

/** The main-sequence table: colour and magnitude with their noise. */
function observeMainSequence(universe: Universe, cat: Catalogues, seed: number): TableRow[] {
  const rng = createRng(seed, 'observe', 'main-sequence', cat.mainSequence.version);
  return universe.mainSequence.map((s) => ({
    star: s.star,
    system: s.system,
    color: roundTo(s.colorTrue + rng.gauss(0, s.colorErr), 4),
    color_err: s.colorErr,
    mag: roundTo(s.magTrue + rng.gauss(0, s.magErr), 4),
    mag_err: s.magErr,
  }));
}

/** The Cepheid table: magnitudes with their noise, m_h with the catalogue's offset of the host. */
function observeCepheids(universe: Universe, cat: Catalogues, seed: number): TableRow[] {
  const systemIds = new Set(universe.systems.map((s) => s.id));
  for (const host of Object.keys(cat.cepheids.mhOffsetsMag)) {
    if (!systemIds.has(host)) throw new RangeError(`cepheid catalogue ${cat.cepheids.version}: unknown system "${host}" in mhOffsetsMag`);
  }
  const rng = createRng(seed, 'observe', 'cepheids', cat.cepheids.version);
  return universe.cepheids.map((c) => {
    const mh = c.mhTrue + rng.gauss(0, c.mhErr) + (cat.cepheids.mhOffsetsMag[c.system] ?? 0);
    return {
      star: c.star,
      system: c.system,
      period: c.periodDays,
      m_h: roundTo(mh, 3),
      m_h_err: c.mhErr,
      m_v: roundTo(c.mvTrue + rng.gauss(0, c.mvErr), 3),
      m_v_err: c.mvErr,
      m_i: roundTo(c.miTrue + rng.gauss(0, c.miErr), 3),
      m_i_err: c.miErr,
      oh: c.oh,
    };
  });
}

/** The calibrator supernovae's light-curve parameters with their correlated noise. */
function observeCalibrators(universe: Universe, cat: Catalogues, seed: number): TableRow[] {
  const rng = createRng(seed, 'observe', 'sn-calibrators', cat.snCalibrators.version);
  return universe.snCalibrators.map((sn) => ({ sn: sn.sn, system: sn.system, ...lightCurve(rng, sn) }));
}

/** The Hubble-flow supernovae the catalogue observes (a slice of the pool): redshift and light curve. */
function observeHubbleFlow(universe: Universe, cat: Catalogues, seed: number): TableRow[] {
  const hf = cat.snHubbleFlow;
  const hfFirst = hf.first ?? 0;
  const hfAvailable = universe.snHubbleFlow.length - hfFirst;
  if (!Number.isInteger(hfFirst) || hfFirst < 0 || hfAvailable < 1) {
    throw new RangeError(
      `Hubble-flow first index must be an integer in 0..${universe.snHubbleFlow.length - 1}, found ${hfFirst} (is the universe's hubbleFlowPool large enough?)`,
    );
  }
  const hfCount = hf.count ?? hfAvailable;
  if (!Number.isInteger(hfCount) || hfCount < 1 || hfCount > hfAvailable) {
    throw new RangeError(`Hubble-flow count must be an integer in 1..${hfAvailable}, found ${hfCount}`);
  }
  const rng = createRng(seed, 'observe', 'sn-hubble-flow', hf.version);
  return universe.snHubbleFlow.slice(hfFirst, hfFirst + hfCount).map((sn) => {
    // Order of draws fixed per supernova, so a longer sample extends a shorter one row for row.
    const z = roundTo(sn.zPeculiar! + rng.gauss(0, sn.zErr!), 6);
    return { sn: sn.sn, z, z_err: sn.zErr, ...lightCurve(rng, sn) };
  });
}

/** What the release was drawn from (never written beside it): for recovery tests and the demo's own checks. */
function releaseTruth(universe: Universe, spec: ReleaseSpec, seed: number, statedZeroPointMas: number, rows: Record<string, number>): ReleaseTruth {
  const pc = spec.catalogues.parallax;
  const omit = new Set(spec.omitTables ?? []);
  const systems: SystemTruth[] = universe.systems.map((s) => ({
    id: s.id,
    kind: s.kind,
    group: s.group,
    mu: s.mu,
    distancePc: s.distancePc,
    ebv: s.ebv,
    feh: s.feh,
    ohMean: s.ohMean,
  }));
  const fieldIds = new Set(universe.systems.filter((s) => s.group === 'field').map((s) => s.id));
  return {
    releaseId: spec.id,
    seed,
    scale: universe.scale,
    parameters: { ...universe.parameters, locusCoeffs: [...universe.parameters.locusCoeffs] },
    parallax: {
      catalogue: pc.version,
      zeroPointMas: pc.zeroPointMas,
      statedZeroPointMas,
      statedZeroPointErrMas: pc.statedZeroPointErrMas,
      errorScale: pc.errorScale,
    },
    systems,
    fieldStars: universe.parallaxStars
      .filter((s) => fieldIds.has(s.system))
      .map((s) => ({ star: s.star, system: s.system, mu: distanceModulusFromPc(s.distancePc), distancePc: s.distancePc })),
    blendedCepheids: omit.has('cepheids') ? [] : universe.cepheids.filter((c) => c.blended).map((c) => c.star),
    mhOffsetsMag: { ...spec.catalogues.cepheids.mhOffsetsMag },
    rows,
  };
}

/** Observe `universe` as the release described by `spec`. Pure: same inputs, same bytes. */
export function observeRelease(universe: Universe, spec: ReleaseSpec, seed: number = universe.seed): ObservedRelease {
  const cat = spec.catalogues;
  const omit = new Set(spec.omitTables ?? []);
  const rows: Record<string, number> = {};
  const files: Record<string, string> = {};
  const put = (table: TableName, label: string, data: TableRow[]): void => {
    if (omit.has(table)) {
      rows[table] = 0;
      return;
    }
    if (data.length === 0) throw new RangeError(`table ${table} would have no rows (a table file needs at least one)`);
    files[TABLE_FILES[table]] = writeEcsv(TABLE_COLUMNS[table], data, tableMeta(label));
    rows[table] = data.length;
  };
  const pc = cat.parallax;
  // each table from its catalogue's own random stream, in this order (files and row counts keep it)
  put('systems', cat.systems.label, observeSystems(universe, cat, seed));
  const statedZeroPointMas = statedZeroPoint(seed, pc);
  put('parallax', pc.label, observeParallax(universe, pc, seed));
  put('main_sequence', cat.mainSequence.label, observeMainSequence(universe, cat, seed));
  put('cepheids', cat.cepheids.label, observeCepheids(universe, cat, seed));
  put('sn_calibrators', cat.snCalibrators.label, observeCalibrators(universe, cat, seed));
  put('sn_hubble_flow', cat.snHubbleFlow.label, observeHubbleFlow(universe, cat, seed));

  files['release.yaml'] = releaseYaml(spec, statedZeroPointMas, pc.statedZeroPointErrMas);
  if (spec.notes !== null) {
    const text = typeof spec.notes === 'string' ? spec.notes : spec.notes({ statedZeroPointMas, statedZeroPointErrMas: pc.statedZeroPointErrMas, rows });
    files['notes.md'] = text.endsWith('\n') ? text : text + '\n';
  }
  return { files, truth: releaseTruth(universe, spec, seed, statedZeroPointMas, rows), blindForPublication: spec.blindForPublication ?? null };
}

/** The zero point the team states for a parallax catalogue: Z0 = Z_cat + N(0, stated error), rounded to 1 uas. */
export function statedZeroPoint(seed: number, pc: ParallaxCatalogue): number {
  const rng = createRng(seed, 'observe', 'parallax-zero-point', pc.version);
  return roundTo(rng.gauss(pc.zeroPointMas, pc.statedZeroPointErrMas), 3);
}

/** A prior as stated: the truth itself when stated as exact (err null), else truth + N(0, err). */
function statedPrior(rng: Rng, truth: number, err: number | null, decimals: number): number {
  return err === null ? truth : roundTo(truth + rng.gauss(0, err), decimals);
}

/** Measured light-curve parameters with noise drawn from the written covariance (Cholesky factor). */
function lightCurve(rng: Rng, sn: Supernova): TableRow {
  const l = cholesky3([
    [sn.mbErr ** 2, sn.covMbX1, sn.covMbC],
    [sn.covMbX1, sn.x1Err ** 2, sn.covX1C],
    [sn.covMbC, sn.covX1C, sn.cErr ** 2],
  ]);
  const n0 = rng.normal();
  const n1 = rng.normal();
  const n2 = rng.normal();
  return {
    m_b: roundTo(sn.mbTrue + l[0]![0]! * n0, 3),
    m_b_err: sn.mbErr,
    x1: roundTo(sn.x1True + l[1]![0]! * n0 + l[1]![1]! * n1, 3),
    x1_err: sn.x1Err,
    c: roundTo(sn.cTrue + l[2]![0]! * n0 + l[2]![1]! * n1 + l[2]![2]! * n2, 4),
    c_err: sn.cErr,
    cov_mb_x1: sn.covMbX1,
    cov_mb_c: sn.covMbC,
    cov_x1_c: sn.covX1C,
    host_logmass: sn.hostLogMass,
  };
}

/** Lower Cholesky factor of a symmetric positive-definite 3x3 matrix (throws if not positive definite). */
export function cholesky3(a: number[][]): number[][] {
  const l = [
    [0, 0, 0],
    [0, 0, 0],
    [0, 0, 0],
  ];
  for (let i = 0; i < 3; i++) {
    for (let j = 0; j <= i; j++) {
      let s = a[i]![j]!;
      for (let k = 0; k < j; k++) s -= l[i]![k]! * l[j]![k]!;
      if (i === j) {
        if (!(s > 0)) throw new RangeError('covariance matrix is not positive definite');
        l[i]![i] = Math.sqrt(s);
      } else l[i]![j] = s / l[j]![j]!;
    }
  }
  return l;
}
