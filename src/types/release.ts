/**
 * The in-memory form of one data release (the input contract: content/guide/input-format.md).
 * Readers in src/io produce it; the rungs in src/ladder consume it. Every value
 * is already converted to the units named in the field (mas, deg, days, mag, dex).
 * `line` is the 1-based line of the row in its file, as an editor shows it,
 * so that any later diagnostic can point back at the input.
 */
import type { AnalysisChoices, SystematicVariant } from './analysis.ts';

export type SystemKind = 'cluster' | 'galaxy' | 'field';

export interface SystemRow {
  system: string;
  kind: SystemKind;
  /** [Fe/H] in dex, mean metallicity (needed for main-sequence fitting). */
  feh?: number;
  fehErr?: number;
  /** Prior on E(B-V) in mag; with ebvErr a Gaussian prior, without it fixed. */
  ebv?: number;
  ebvErr?: number;
  ageGyr?: number;
  line: number;
}

export interface ParallaxRow {
  star: string;
  system: string;
  /** Measured parallax as published, before zero-point correction (may be <= 0). */
  parallaxMas: number;
  parallaxErrMas: number;
  raDeg?: number;
  decDeg?: number;
  line: number;
}

export interface MainSequenceRow {
  star: string;
  system: string;
  /** Observed B-V colour, mag. */
  color: number;
  colorErr: number;
  /** Observed V magnitude. */
  mag: number;
  magErr: number;
  line: number;
}

export interface CepheidRow {
  star: string;
  system: string;
  periodDays: number;
  mH: number;
  mHErr: number;
  mV: number;
  mVErr: number;
  mI: number;
  mIErr: number;
  /** [O/H] relative to solar, dex (0 when the column or cell is absent). */
  oh: number;
  line: number;
}

export interface SupernovaLightCurve {
  sn: string;
  /** Peak apparent B magnitude from the light-curve fit. */
  mB: number;
  mBErr: number;
  x1: number;
  x1Err: number;
  c: number;
  cErr: number;
  covMbX1: number;
  covMbC: number;
  covX1C: number;
  hostLogMass?: number;
  line: number;
}

export interface SnCalibratorRow extends SupernovaLightCurve {
  system: string;
}

export interface SnHubbleFlowRow extends SupernovaLightCurve {
  /** CMB-frame, flow-corrected redshift. */
  z: number;
  zErr: number;
}

export type TableName = 'systems' | 'parallax' | 'main_sequence' | 'cepheids' | 'sn_calibrators' | 'sn_hubble_flow';

export const TABLE_NAMES: readonly TableName[] = ['systems', 'parallax', 'main_sequence', 'cepheids', 'sn_calibrators', 'sn_hubble_flow'];

/** One input file as read: what the provenance section of the report lists. */
export interface InputFile {
  table: TableName | 'release' | 'notes';
  /** Path relative to the release folder, e.g. "parallax.ecsv". */
  file: string;
  format: 'ecsv' | 'csv' | 'votable' | 'yaml' | 'markdown';
  sha256: string;
  rows: number;
  /** Columns present in the file that the contract does not use (listed in the report). */
  extraColumns: string[];
  /** Column name -> unit as given in the file (before conversion), for the diff of units. */
  columnUnits: Record<string, string>;
}

export interface ReleaseManifest {
  id: string;
  title: string;
  /** ISO date, YYYY-MM-DD. */
  date: string;
  previous: string | null;
  blinded: boolean;
}

export interface Release {
  manifest: ReleaseManifest;
  /** Analysis choices with every default filled in. */
  analysis: AnalysisChoices;
  /** Keys the release.yaml set explicitly (the rest are defaults). */
  analysisKeysSet: string[];
  variants: SystematicVariant[];
  systems: SystemRow[];
  parallax: ParallaxRow[];
  mainSequence: MainSequenceRow[];
  cepheids: CepheidRow[];
  snCalibrators: SnCalibratorRow[];
  snHubbleFlow: SnHubbleFlowRow[];
  /** Tables the release does not provide (absent files). */
  absentTables: TableName[];
  inputs: InputFile[];
  /** Authored release notes (Markdown source), if present. */
  notes: string | null;
  /** Absolute path of the release folder it was read from. */
  dir: string;
}
