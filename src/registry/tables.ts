/**
 * The input tables of a release, one descriptor each (the input contract,
 * content/guide/input-format.md): for each column its name, the field of the typed
 * row it fills, its type, the unit values are stored in, whether it is required,
 * and what it means. One list serves every part that speaks of columns: the
 * readers (src/io/validate.ts applies these; nothing else in the readers knows a
 * column name), the demo writer (src/demo/tables.ts), the comparison's row
 * tables (src/diff/rows.ts) and the format page of the report.
 */
import type { CepheidRow, MainSequenceRow, Release, ParallaxRow, SnCalibratorRow, SnHubbleFlowRow, SystemRow, TableName } from '../types/release.ts';

/** Units the contract stores values in after reading ('' means dimensionless); src/io/units.ts converts to them or refuses. */
export type ContractUnit = 'mas' | 'deg' | 'd' | 'Gyr' | 'mag' | 'mag2' | 'dex' | '';

export const SYSTEM_KINDS = ['cluster', 'galaxy', 'field'] as const;

export interface ColumnSpec<F extends string = string> {
  /** Column name in the file. */
  name: string;
  /** Property of the typed row it fills. */
  field: F;
  type: 'text' | 'number';
  /** Unit values are stored in; null for text columns. */
  unit: ContractUnit | null;
  required: boolean;
  /** Optional columns: the value used when the column or a cell is absent (else the field is left out). */
  absent?: number;
  /** Text columns: the only values allowed. */
  oneOf?: readonly string[];
  /** Number columns: must be > 0 (every *_err column, the period, the Hubble-flow redshift). */
  positive?: boolean;
  /**
   * Optional columns: a value here needs a value in this other column of the row
   * (an error without its value would be silently dropped by the fit).
   */
  needs?: string;
  /** What the column holds, in one line (the demo files' column descriptions and the format page). */
  meaning: string;
}

export interface TableSpec<Row = unknown> {
  name: TableName;
  /** Column whose values are unique within the table. */
  key: string;
  /** Column naming a row of `systems` (checked across tables). */
  systemRef?: string;
  /** Property of Release holding the table's rows. */
  releaseField: keyof Release;
  /** What the rows are called in a comparison's summary line ("stars", "supernovae"). */
  rowNoun: string;
  /** What one row is, in one line (the format page). */
  meaning: string;
  /**
   * How a comparison of two releases finds the H0 shift of one changed row:
   * 'first-order' from the fit's linear response (src/diff/influence.ts; rows that
   * enter the global fit as data), 'refit' by recalibrating with the row swapped
   * (rows that shape a rung's non-linear fit: the main-sequence locus and targets,
   * a system's priors).
   */
  rowShift: 'first-order' | 'refit';
  columns: ColumnSpec<Exclude<keyof Row & string, 'line'>>[];
}

type Opts = { positive?: boolean; absent?: number; needs?: string };

function text<F extends string>(name: string, field: F, meaning: string, oneOf?: readonly string[]): ColumnSpec<F> {
  return { name, field, type: 'text', unit: null, required: true, ...(oneOf ? { oneOf } : {}), meaning };
}
function num<F extends string>(name: string, field: F, unit: ContractUnit, meaning: string, opts: Opts = {}): ColumnSpec<F> {
  return { name, field, type: 'number', unit, required: true, ...opts, meaning };
}
function opt<F extends string>(name: string, field: F, unit: ContractUnit, meaning: string, opts: Opts = {}): ColumnSpec<F> {
  return { name, field, type: 'number', unit, required: false, ...opts, meaning };
}
const err = { positive: true };

const SYSTEMS: TableSpec<SystemRow> = {
  name: 'systems',
  key: 'system',
  releaseField: 'systems',
  rowNoun: 'systems',
  meaning: 'one stellar system: a cluster, a galaxy, or a loose group of stars each anchored by its own parallax',
  rowShift: 'refit',
  columns: [
    text('system', 'system', 'Unique system identifier, used by the other tables'),
    text('kind', 'kind', 'cluster, galaxy or field (a loose group anchored star by star)', SYSTEM_KINDS),
    opt('feh', 'feh', 'dex', 'Mean metallicity [Fe/H]'),
    opt('feh_err', 'fehErr', 'dex', 'Standard error of feh', { ...err, needs: 'feh' }),
    opt('ebv', 'ebv', 'mag', 'Prior on the reddening E(B-V)'),
    opt('ebv_err', 'ebvErr', 'mag', 'Standard error of the E(B-V) prior; empty with ebv given means fixed', { ...err, needs: 'ebv' }),
    opt('age_gyr', 'ageGyr', 'Gyr', 'Age estimate'),
  ],
};

const PARALLAX: TableSpec<ParallaxRow> = {
  name: 'parallax',
  key: 'star',
  systemRef: 'system',
  releaseField: 'parallax',
  rowNoun: 'stars',
  meaning: 'the trigonometric parallax of one star',
  rowShift: 'first-order',
  columns: [
    text('star', 'star', 'Unique star identifier'),
    text('system', 'system', 'System the star belongs to'),
    num('parallax', 'parallaxMas', 'mas', 'Trigonometric parallax as published, before zero-point correction'),
    num('parallax_err', 'parallaxErrMas', 'mas', 'Standard error of the parallax', err),
    opt('ra', 'raDeg', 'deg', 'Right ascension'),
    opt('dec', 'decDeg', 'deg', 'Declination'),
  ],
};

const MAIN_SEQUENCE: TableSpec<MainSequenceRow> = {
  name: 'main_sequence',
  key: 'star',
  systemRef: 'system',
  releaseField: 'mainSequence',
  rowNoun: 'stars',
  meaning: 'the colour and magnitude of one main-sequence member of a system',
  rowShift: 'refit',
  columns: [
    text('star', 'star', 'Star identifier, unique in this table'),
    text('system', 'system', 'System the star belongs to'),
    num('color', 'color', 'mag', 'Observed B-V colour'),
    num('color_err', 'colorErr', 'mag', 'Standard error of the colour', err),
    num('mag', 'mag', 'mag', 'Observed V magnitude'),
    num('mag_err', 'magErr', 'mag', 'Standard error of the V magnitude', err),
  ],
};

const CEPHEIDS: TableSpec<CepheidRow> = {
  name: 'cepheids',
  key: 'star',
  systemRef: 'system',
  releaseField: 'cepheids',
  rowNoun: 'stars',
  meaning: 'the period and mean magnitudes of one Cepheid',
  rowShift: 'first-order',
  columns: [
    text('star', 'star', 'Unique Cepheid identifier'),
    text('system', 'system', 'Host system'),
    num('period', 'periodDays', 'd', 'Pulsation period', { positive: true }),
    num('m_h', 'mH', 'mag', 'Mean near-infrared H magnitude'),
    num('m_h_err', 'mHErr', 'mag', 'Standard error of m_h', err),
    num('m_v', 'mV', 'mag', 'Mean optical V magnitude'),
    num('m_v_err', 'mVErr', 'mag', 'Standard error of m_v', err),
    num('m_i', 'mI', 'mag', 'Mean optical I magnitude'),
    num('m_i_err', 'mIErr', 'mag', 'Standard error of m_i', err),
    opt('oh', 'oh', 'dex', 'Oxygen abundance [O/H] relative to solar at the Cepheid', { absent: 0 }),
  ],
};

/** Light-curve columns shared by both supernova tables. */
function lightCurve<F extends string>(): ColumnSpec<F>[] {
  return [
    num('m_b', 'mB' as F, 'mag', 'Peak apparent B magnitude from the light-curve fit'),
    num('m_b_err', 'mBErr' as F, 'mag', 'Standard error of m_b', err),
    num('x1', 'x1' as F, '', 'Light-curve stretch parameter'),
    num('x1_err', 'x1Err' as F, '', 'Standard error of x1', err),
    num('c', 'c' as F, 'mag', 'Light-curve colour parameter'),
    num('c_err', 'cErr' as F, 'mag', 'Standard error of c', err),
    // cov(m_b, x1) in mag, cov(m_b, c) in mag^2, cov(x1, c) in mag (x1 is dimensionless).
    opt('cov_mb_x1', 'covMbX1' as F, 'mag', 'Covariance of the m_b and x1 errors', { absent: 0 }),
    opt('cov_mb_c', 'covMbC' as F, 'mag2', 'Covariance of the m_b and c errors', { absent: 0 }),
    opt('cov_x1_c', 'covX1C' as F, 'mag', 'Covariance of the x1 and c errors', { absent: 0 }),
    opt('host_logmass', 'hostLogMass' as F, 'dex', 'log10 of the host stellar mass in solar masses'),
  ];
}

const SN_CALIBRATORS: TableSpec<SnCalibratorRow> = {
  name: 'sn_calibrators',
  key: 'sn',
  systemRef: 'system',
  releaseField: 'snCalibrators',
  rowNoun: 'supernovae',
  meaning: 'the light-curve fit of one type Ia supernova in a galaxy that also hosts Cepheids',
  rowShift: 'first-order',
  columns: [
    text('sn', 'sn', 'Unique supernova identifier'),
    text('system', 'system', 'Host system (also hosts Cepheids)'),
    ...lightCurve<Exclude<keyof SnCalibratorRow, 'line'>>(),
  ],
};

const SN_HUBBLE_FLOW: TableSpec<SnHubbleFlowRow> = {
  name: 'sn_hubble_flow',
  key: 'sn',
  releaseField: 'snHubbleFlow',
  rowNoun: 'supernovae',
  meaning: 'the redshift and light-curve fit of one type Ia supernova in the Hubble flow',
  rowShift: 'first-order',
  columns: [
    text('sn', 'sn', 'Unique supernova identifier'),
    // A distance needs z > 0: the Hubble-flow modulus is 5 log10(c z f(z)) (content/guide/input-format.md, the model).
    num('z', 'z', '', 'Redshift in the CMB frame, corrected for coherent flows', { positive: true }),
    num('z_err', 'zErr', '', 'Standard error of z', err),
    ...lightCurve<Exclude<keyof SnHubbleFlowRow, 'line'>>(),
  ],
};

export interface TableRows {
  systems: SystemRow;
  parallax: ParallaxRow;
  main_sequence: MainSequenceRow;
  cepheids: CepheidRow;
  sn_calibrators: SnCalibratorRow;
  sn_hubble_flow: SnHubbleFlowRow;
}

export const TABLE_SPECS: { readonly [T in TableName]: TableSpec<TableRows[T]> } = {
  systems: SYSTEMS,
  parallax: PARALLAX,
  main_sequence: MAIN_SEQUENCE,
  cepheids: CEPHEIDS,
  sn_calibrators: SN_CALIBRATORS,
  sn_hubble_flow: SN_HUBBLE_FLOW,
};
