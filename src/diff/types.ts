/**
 * The comparison of two releases (schema "rungbook.diff/1"): what `rungbook diff --format json`
 * prints and what the report's comparison page and overlay figures are generated from.
 * Every number is in the unit its field names (H0 in km/s/Mpc, mu in mag, distances in Mpc);
 * the comparison is deterministic (same two releases, same bytes), it carries no timings.
 */
import type { AnalysisKey } from '../types/analysis.ts';
import type { SystemKind, TableName } from '../types/release.ts';

export const DIFF_SCHEMA = 'rungbook.diff/1';

/** The attribution groups: the input tables and the analysis block of release.yaml. */
export type GroupName = TableName | 'analysis';

/** Fixed order of the groups in the attribution (tables in the ladder's order, analysis last). */
export const GROUP_NAMES: readonly GroupName[] = ['parallax', 'main_sequence', 'cepheids', 'sn_calibrators', 'sn_hubble_flow', 'systems', 'analysis'];

/** What happened to one row between the releases, matched by its id. */
export type RowStatus =
  | 'same'
  /** Values changed, uncertainty columns unchanged: the same measurement, corrected. */
  | 'corrected'
  /** An uncertainty column changed too: treated as a new, independent measurement. */
  | 'remeasured'
  | 'added'
  | 'removed';

export interface ColumnSummary {
  /** Column name as in the files. */
  column: string;
  /** Contract unit of the values compared ('' dimensionless, null for text columns). */
  unit: string | null;
  /** Rows present in both releases whose value in this column differs (including a value appearing or disappearing). */
  changed: number;
  /** Of those, rows where the value appeared or disappeared (empty cell or absent column on one side). */
  appeared: number;
  disappeared: number;
  /** Median and largest (by absolute value, sign kept) of b - a over the numeric changes; null for text columns. */
  median: number | null;
  largest: number | null;
  /** Id of the row with the largest change. */
  largest_id: string | null;
}

export interface ColumnChange {
  kind: 'renamed' | 'added' | 'removed' | 'unit';
  /** Column in release a (null when added). */
  column_a: string | null;
  /** Column in release b (null when removed). */
  column_b: string | null;
  unit_a: string | null;
  unit_b: string | null;
  /** Whether the column is one of the contract's (read by the ladder) or an extra column. */
  contract: boolean;
  detail: string;
}

export interface TableChange {
  table: TableName;
  /** File names and formats on each side (null: the release has no such table). */
  file_a: string | null;
  file_b: string | null;
  format_a: string | null;
  format_b: string | null;
  rows_a: number;
  rows_b: number;
  added: number;
  removed: number;
  changed: number;
  /** Of the changed rows: how many only corrected values (errors unchanged) and how many were remeasured. */
  corrected: number;
  remeasured: number;
  unchanged: number;
  /** Rows present in both but listed in another order. */
  order_changed: boolean;
  /** The file's bytes differ although no value, column or unit did (comments, metadata, formatting). */
  bytes_only: boolean;
  /** Noun for the rows of this table ("stars", "supernovae", "systems"). */
  noun: string;
  columns: ColumnSummary[];
  column_changes: ColumnChange[];
  /** First ids added and removed (up to LISTED_IDS of each). */
  added_ids: string[];
  removed_ids: string[];
}

export interface ChangedCell {
  table: TableName;
  id: string;
  column: string;
  unit: string | null;
  /** Values in the contract unit; null when the cell is empty or the column absent on that side. */
  a: number | string | null;
  b: number | string | null;
  line_a: number;
  line_b: number;
}

export interface RowChangeRef {
  table: TableName;
  id: string;
  system: string | null;
  line: number;
}

export interface AnalysisChange {
  key: AnalysisKey;
  a: unknown;
  b: unknown;
  /** Whether release.yaml set the key explicitly (false: the default was used). */
  set_a: boolean;
  set_b: boolean;
}

export interface VariantChange {
  name: string;
  kind: 'added' | 'removed' | 'changed';
  a: Record<string, unknown> | null;
  b: Record<string, unknown> | null;
}

export interface InputChanges {
  tables: TableChange[];
  analysis: AnalysisChange[];
  /** Keys with the same value on both sides whose explicit/default status changed. */
  analysis_set_only: AnalysisKey[];
  variants: VariantChange[];
  manifest: { field: 'title' | 'date' | 'previous' | 'blinded'; a: unknown; b: unknown }[];
  notes_changed: boolean;
  cells: ChangedCell[];
  added_rows: RowChangeRef[];
  removed_rows: RowChangeRef[];
}

/** A quantity compared between the releases with the uncertainty of its difference. */
export interface Shift {
  /** Values; null when hidden by blinding or not determined. */
  a: number | null;
  b: number | null;
  delta: number | null;
  /** Statistical uncertainty of the difference (see sigma_method); null when not available. */
  sigma_diff: number | null;
  /** delta / sigma_diff; null when hidden, undefined (sigma_diff = 0 and delta != 0) or not available. */
  delta_sigma: number | null;
  /** sigma_diff = 0 with delta != 0: the shift comes from a change of choices or of values at fixed noise. */
  deterministic: boolean;
  /** |delta| > SHIFT_FLAG_SIGMA sigma_diff (or deterministic and non-zero), and |delta| >= NEGLIGIBLE_SHIFT_OF_ERROR x own error. */
  flagged: boolean;
  /** Which rule gave sigma_diff ('linear' for the propagation through both fits, 'nested', 'independent', 'fixed'). */
  sigma_rule: SigmaRule | null;
}

export type SigmaRule = 'linear' | 'nested' | 'independent' | 'fixed';

export interface H0Shift extends Shift {
  unit: 'km/s/Mpc';
  /** Statistical errors of each release (shown also when blinded). */
  stat_a: number | null;
  stat_b: number | null;
  /** Naive quadrature sum of the two statistical errors, for comparison with sigma_diff. */
  sigma_naive: number | null;
  /** b / a of the (blinded, when blinded) values. */
  ratio: number | null;
}

export interface ParameterShift extends Shift {
  name: string;
  unit: string;
  description: string;
  blinded: boolean;
  fixed_a: boolean;
  fixed_b: boolean;
}

export interface SystemShift extends Shift {
  id: string;
  kind: SystemKind;
  method_a: string | null;
  method_b: string | null;
  /** Distances in Mpc (delta in Mpc); delta_sigma is that of mu. */
  distance_a: number | null;
  distance_b: number | null;
  delta_distance: number | null;
  /** Any input row of this system changed, was added or removed. */
  inputs_changed: boolean;
}

export interface AttributionEntry {
  group: GroupName;
  /** Whether this group's inputs differ between the releases (0 contribution otherwise). */
  differs: boolean;
  /** Contribution to the H0 shift, km/s/Mpc (Shapley value). */
  delta_h0: number;
  /** delta_h0 / total shift (null when the total is zero). */
  fraction: number | null;
  /** Sum of the per-row estimates of this group (top_objects method), for comparison. */
  rows_sum: number | null;
}

export interface Attribution {
  entries: AttributionEntry[];
  total: number;
  /** |sum of contributions - total| / |total| (0 when the total is zero and the sum too). */
  sum_rel_error: number;
  /** H0 of every hybrid release, keyed by the groups taken from b ('' = a); blinded runs omit it. */
  hybrids: { groups: GroupName[]; h0: number | null }[];
  method: string;
  /** Scale applied to the contributions so that they add up to the shown (blinded) shift; 1 when not blinded. */
  blinding_scale: number;
}

export interface ObjectInfluence {
  table: TableName;
  /** Row id (star, supernova or system); for a system-level estimate the system id. */
  id: string;
  system: string | null;
  status: RowStatus;
  /** Changed columns (empty for added or removed rows). */
  columns: string[];
  /** Estimated shift of H0 (km/s/Mpc) from this row's change alone. */
  delta_h0: number;
  /** 'linear': closed-form single-row swap in the fit; 'anchor': through the anchor's modulus; 'refit': recalibration; */
  estimate: 'linear' | 'anchor' | 'refit';
  /** 'row' or 'system' (several rows of one system swapped together). */
  level: 'row' | 'system';
  rows: number;
}

export interface OverlayPoint {
  id: string;
  system: string | null;
  x: number;
  y: number;
  /** Error in y, when known. */
  y_err: number | null;
  rejected: boolean;
  /** Input row added, removed or changed between the releases. */
  changed: boolean;
  status: RowStatus;
}

export interface OverlaySide {
  points: OverlayPoint[];
  /** Line(s) of the fitted model as polyline points (x, y). */
  model: { x: number; y: number }[];
}

export interface Overlay {
  id: 'pl-relation' | 'hubble-diagram' | 'ladder-diagram';
  title: string;
  x_label: string;
  y_label: string;
  x_log: boolean;
  y_log: boolean;
  /** Names of integer x positions (the ladder diagram's rungs), or null for a numeric axis. */
  x_categories: string[] | null;
  a: OverlaySide;
  b: OverlaySide;
  /** The y values of this overlay depend on a blinded quantity on some side. */
  blinded: boolean;
  /**
   * Why points were left out to protect the blinding, or null. One blinded and one unblinded
   * release (or two blinded differently) cannot share a Hubble diagram: the offset between the
   * two samples about the unblinded model would measure the hidden offset.
   */
  withheld: string | null;
}

export interface BlindingComparison {
  a: boolean;
  b: boolean;
  /** Both unblinded, or both blinded with the same hidden offset; null when it cannot be told. */
  alike: boolean | null;
  /** H0 values (and blinded parameters) are withheld. */
  values_hidden: boolean;
  /** The H0 shift and its attribution are withheld (blinded differently, or not known to be alike). */
  shift_hidden: boolean;
  note: string;
}

export interface DiffLinks {
  page: string;
  figures: Record<string, string>;
  /** The report's comparison page compares b with its `previous`; false when a is another release. */
  matches_report: boolean;
}

export interface DiffReport {
  schema: typeof DIFF_SCHEMA;
  a: string;
  b: string;
  releases: {
    a: { id: string; title: string; date: string; previous: string | null; blinded: boolean; reached: string };
    b: { id: string; title: string; date: string; previous: string | null; blinded: boolean; reached: string };
  };
  blinding: BlindingComparison;
  /** Nothing differs: every table, choice, variant and result is the same. */
  identical: boolean;
  h0: H0Shift | null;
  sigma_method: string;
  flag_threshold_sigma: number;
  /** Shifts smaller than this fraction of the quantity's own error are never flagged. */
  flag_negligible_fraction: number;
  attribution: AttributionEntry[];
  attribution_detail: Attribution | null;
  /** Why there is no attribution (not reached, blinded differently, a hybrid failed), else null. */
  attribution_note: string | null;
  inputs: TableChange[];
  input_changes: InputChanges;
  parameters: ParameterShift[];
  systems: SystemShift[];
  fit: { name: string; a: number; b: number }[];
  top_objects: ObjectInfluence[];
  top_objects_method: string;
  /** Changed rows whose influence could not be estimated (e.g. a new host with no counterpart). */
  objects_not_estimated: number;
  overlays: Overlay[];
  links: DiffLinks | null;
}
