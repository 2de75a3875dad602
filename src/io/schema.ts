/**
 * The contract's tables as data (release-format.md): for each table, its
 * columns, which are required, their type, the unit values are stored in, and
 * the field of the typed row each fills. The validator (validate.ts) applies
 * these; nothing else in the readers knows a column name.
 */
import type {
  CepheidRow,
  MainSequenceRow,
  ParallaxRow,
  SnCalibratorRow,
  SnHubbleFlowRow,
  SystemRow,
  TableName,
} from '../types/release.ts';
import type { ContractUnit } from './units.ts';

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
}

export interface TableSpec<Row = unknown> {
  name: TableName;
  /** Column whose values are unique within the table. */
  key: string;
  /** Column naming a row of `systems` (checked across tables). */
  systemRef?: string;
  columns: ColumnSpec<Exclude<keyof Row & string, 'line'>>[];
}

type Opts = { positive?: boolean; absent?: number; needs?: string };

function text<F extends string>(name: string, field: F, oneOf?: readonly string[]): ColumnSpec<F> {
  return { name, field, type: 'text', unit: null, required: true, ...(oneOf ? { oneOf } : {}) };
}
function num<F extends string>(name: string, field: F, unit: ContractUnit, opts: Opts = {}): ColumnSpec<F> {
  return { name, field, type: 'number', unit, required: true, ...opts };
}
function opt<F extends string>(name: string, field: F, unit: ContractUnit, opts: Opts = {}): ColumnSpec<F> {
  return { name, field, type: 'number', unit, required: false, ...opts };
}
const err = { positive: true };

const SYSTEMS: TableSpec<SystemRow> = {
  name: 'systems',
  key: 'system',
  columns: [
    text('system', 'system'),
    text('kind', 'kind', SYSTEM_KINDS),
    opt('feh', 'feh', 'dex'),
    opt('feh_err', 'fehErr', 'dex', { ...err, needs: 'feh' }),
    opt('ebv', 'ebv', 'mag'),
    opt('ebv_err', 'ebvErr', 'mag', { ...err, needs: 'ebv' }),
    opt('age_gyr', 'ageGyr', 'Gyr'),
  ],
};

const PARALLAX: TableSpec<ParallaxRow> = {
  name: 'parallax',
  key: 'star',
  systemRef: 'system',
  columns: [
    text('star', 'star'),
    text('system', 'system'),
    num('parallax', 'parallaxMas', 'mas'),
    num('parallax_err', 'parallaxErrMas', 'mas', err),
    opt('ra', 'raDeg', 'deg'),
    opt('dec', 'decDeg', 'deg'),
  ],
};

const MAIN_SEQUENCE: TableSpec<MainSequenceRow> = {
  name: 'main_sequence',
  key: 'star',
  systemRef: 'system',
  columns: [
    text('star', 'star'),
    text('system', 'system'),
    num('color', 'color', 'mag'),
    num('color_err', 'colorErr', 'mag', err),
    num('mag', 'mag', 'mag'),
    num('mag_err', 'magErr', 'mag', err),
  ],
};

const CEPHEIDS: TableSpec<CepheidRow> = {
  name: 'cepheids',
  key: 'star',
  systemRef: 'system',
  columns: [
    text('star', 'star'),
    text('system', 'system'),
    num('period', 'periodDays', 'd', { positive: true }),
    num('m_h', 'mH', 'mag'),
    num('m_h_err', 'mHErr', 'mag', err),
    num('m_v', 'mV', 'mag'),
    num('m_v_err', 'mVErr', 'mag', err),
    num('m_i', 'mI', 'mag'),
    num('m_i_err', 'mIErr', 'mag', err),
    opt('oh', 'oh', 'dex', { absent: 0 }),
  ],
};

/** Light-curve columns shared by both supernova tables. */
function lightCurve<F extends string>(): ColumnSpec<F>[] {
  return [
    num('m_b', 'mB' as F, 'mag'),
    num('m_b_err', 'mBErr' as F, 'mag', err),
    num('x1', 'x1' as F, ''),
    num('x1_err', 'x1Err' as F, '', err),
    num('c', 'c' as F, 'mag'),
    num('c_err', 'cErr' as F, 'mag', err),
    // cov(m_b, x1) in mag, cov(m_b, c) in mag^2, cov(x1, c) in mag (x1 is dimensionless).
    opt('cov_mb_x1', 'covMbX1' as F, 'mag', { absent: 0 }),
    opt('cov_mb_c', 'covMbC' as F, 'mag2', { absent: 0 }),
    opt('cov_x1_c', 'covX1C' as F, 'mag', { absent: 0 }),
    opt('host_logmass', 'hostLogMass' as F, 'dex'),
  ];
}

const SN_CALIBRATORS: TableSpec<SnCalibratorRow> = {
  name: 'sn_calibrators',
  key: 'sn',
  systemRef: 'system',
  columns: [text('sn', 'sn'), text('system', 'system'), ...lightCurve<Exclude<keyof SnCalibratorRow, 'line'>>()],
};

const SN_HUBBLE_FLOW: TableSpec<SnHubbleFlowRow> = {
  name: 'sn_hubble_flow',
  key: 'sn',
  columns: [
    text('sn', 'sn'),
    // A distance needs z > 0: the Hubble-flow modulus is 5 log10(c z f(z)) (release-format.md, the model).
    num('z', 'z', '', { positive: true }),
    num('z_err', 'zErr', '', err),
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
