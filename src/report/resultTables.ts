/**
 * The result tables offered for download with each release (CSV and ECSV),
 * taken straight from results.json: one table per kind of row. Column names,
 * units and descriptions are given once here; both formats use them.
 */
import type { EcsvColumn, TableRow } from '../io/writeEcsv.ts';
import type { Results } from '../types/results.ts';
import { parameterBlinded } from './blinding.ts';
import { col } from './figures/plotting.ts';

export interface ResultTable {
  /** File stem, e.g. "cepheids" gives cepheids.csv and cepheids.ecsv. */
  name: string;
  title: string;
  columns: EcsvColumn[];
  rows: TableRow[];
}

const KMSMPC = 'km / (Mpc s)';

/** The fitted parameters, blinded ones flagged. */
function parametersTable(r: Results): ResultTable {
  return {
    name: 'parameters',
    title: 'Fitted parameters',
    columns: [
      col('name', 'string'),
      col('value', 'float64'),
      col('err', 'float64'),
      col('unit', 'string'),
      col('fixed', 'bool'),
      col('blinded', 'bool'),
      col('description', 'string'),
    ],
    rows: Object.entries(r.parameters).map(([name, p]) => ({
      name,
      value: p.value,
      err: p.err,
      unit: p.unit,
      fixed: p.fixed === true,
      blinded: parameterBlinded(r, name),
      description: p.description,
    })),
  };
}

/** Every system with its distance and the rung that gave it. */
function systemsTable(r: Results): ResultTable {
  return {
    name: 'systems',
    title: 'Systems and their distances',
    columns: [
      col('system', 'string'),
      col('kind', 'string'),
      col('roles', 'string', '', 'roles separated by spaces'),
      col('method', 'string', '', 'rung that gave the reported distance'),
      col('mu', 'float64', 'mag'),
      col('mu_err', 'float64', 'mag'),
      col('distance', 'float64', 'Mpc'),
      col('mu_prior', 'float64', 'mag', 'from the system’s own rung, before the global fit'),
      col('mu_prior_err', 'float64', 'mag'),
      col('feh', 'float64', 'dex'),
      col('ebv', 'float64', 'mag'),
      col('ebv_err', 'float64', 'mag'),
    ],
    rows: r.systems.map((s) => ({
      system: s.id,
      kind: s.kind,
      roles: s.roles.join(' '),
      method: s.method,
      mu: s.mu,
      mu_err: s.mu_err,
      distance: s.distance_mpc,
      mu_prior: s.mu_prior,
      mu_prior_err: s.mu_prior_err,
      feh: s.feh,
      ebv: s.ebv,
      ebv_err: s.ebv_err,
    })),
  };
}

/** The parallax rung: one row per geometric anchor. */
function parallaxAnchorsTable(r: Results): ResultTable {
  return {
    name: 'parallax_anchors',
    title: 'Geometric anchors',
    columns: [
      col('system', 'string'),
      col('n_stars', 'int64'),
      col('mean_parallax', 'float64', 'mas'),
      col('mean_parallax_err', 'float64', 'mas'),
      col('error_scale', 'float64'),
      col('mu', 'float64', 'mag'),
      col('mu_err_stat', 'float64', 'mag'),
      col('mu_err', 'float64', 'mag'),
      col('dmu_dzp', 'float64', 'mag / mas'),
    ],
    rows: r.rungs.parallax.anchors.map((a) => ({
      system: a.system,
      n_stars: a.n_stars,
      mean_parallax: a.mean_parallax_mas,
      mean_parallax_err: a.mean_parallax_err_mas,
      error_scale: a.error_scale,
      mu: a.mu,
      mu_err_stat: a.mu_err_stat,
      mu_err: a.mu_err,
      dmu_dzp: a.dmu_dzp,
    })),
  };
}

/** The parallax rung: one row per star, with its distance posterior. */
function parallaxStarsTable(r: Results): ResultTable {
  return {
    name: 'parallax_stars',
    title: 'Parallax stars',
    columns: [
      col('star', 'string'),
      col('system', 'string'),
      col('line', 'int64'),
      col('parallax', 'float64', 'mas'),
      col('parallax_err', 'float64', 'mas'),
      col('parallax_corr', 'float64', 'mas'),
      col('frac_err', 'float64'),
      col('dist_inverse', 'float64', 'pc'),
      col('dist_mode', 'float64', 'pc'),
      col('dist_q05', 'float64', 'pc'),
      col('dist_q50', 'float64', 'pc'),
      col('dist_q95', 'float64', 'pc'),
      col('bimodal', 'bool'),
      col('low_significance', 'bool'),
    ],
    rows: r.rungs.parallax.stars.map((s) => ({
      star: s.star,
      system: s.system,
      line: s.line,
      parallax: s.parallax_mas,
      parallax_err: s.parallax_err_mas,
      parallax_corr: s.parallax_corr_mas,
      frac_err: s.frac_err,
      dist_inverse: s.dist_inverse_pc,
      dist_mode: s.dist_mode_pc,
      dist_q05: s.dist_q05_pc,
      dist_q50: s.dist_q50_pc,
      dist_q95: s.dist_q95_pc,
      bimodal: s.bimodal,
      low_significance: s.low_significance,
    })),
  };
}

/** The main-sequence rung: one row per target cluster. */
function mainSequenceTargetsTable(r: Results): ResultTable {
  return {
    name: 'main_sequence_targets',
    title: 'Main-sequence targets',
    columns: [
      col('system', 'string'),
      col('n_stars', 'int64'),
      col('n_used', 'int64'),
      col('mu', 'float64', 'mag'),
      col('mu_err', 'float64', 'mag'),
      col('ebv', 'float64', 'mag'),
      col('ebv_err', 'float64', 'mag'),
      col('corr_mu_ebv', 'float64'),
      col('feh', 'float64', 'dex'),
      col('binary_fraction', 'float64'),
    ],
    rows: r.rungs.main_sequence.targets.map((t) => ({ ...t })),
  };
}

/** The main-sequence rung: one row per star. */
function mainSequenceStarsTable(r: Results): ResultTable {
  return {
    name: 'main_sequence_stars',
    title: 'Main-sequence stars',
    columns: [
      col('star', 'string'),
      col('system', 'string'),
      col('line', 'int64'),
      col('role', 'string'),
      col('color0', 'float64', 'mag'),
      col('abs_mag', 'float64', 'mag'),
      col('p_binary', 'float64'),
      col('used', 'bool'),
    ],
    rows: r.rungs.main_sequence.stars.map((s) => ({
      star: s.star,
      system: s.system,
      line: s.line,
      role: s.role,
      color0: s.color0,
      abs_mag: s.abs_mag,
      p_binary: s.p_binary,
      used: s.used,
    })),
  };
}

/** The Cepheid rung: one row per Cepheid. */
function cepheidsTable(r: Results): ResultTable {
  return {
    name: 'cepheids',
    title: 'Cepheids',
    columns: [
      col('star', 'string'),
      col('system', 'string'),
      col('line', 'int64'),
      col('log_period', 'float64'),
      col('w', 'float64', 'mag'),
      col('w_err', 'float64', 'mag'),
      col('oh', 'float64', 'dex'),
      col('abs_w', 'float64', 'mag'),
      col('residual', 'float64', 'mag'),
      col('rejected', 'bool'),
      col('membership', 'float64'),
    ],
    rows: r.rungs.cepheids.map((c) => ({ ...c })),
  };
}

/** The supernova rung: calibrators and Hubble flow, one table each. */
function supernovaTables(r: Results): ResultTable[] {
  return (['calibrators', 'hubble_flow'] as const).map((which) => ({
    name: which === 'calibrators' ? 'sn_calibrators' : 'sn_hubble_flow',
    title: which === 'calibrators' ? 'Calibrator supernovae' : 'Hubble-flow supernovae',
    columns: [
      col('sn', 'string'),
      col('system', 'string'),
      col('line', 'int64'),
      col('z', 'float64'),
      col('m_b', 'float64', 'mag'),
      col('x1', 'float64'),
      col('c', 'float64', 'mag'),
      col('m_corr', 'float64', 'mag'),
      col('m_corr_err', 'float64', 'mag'),
      col('mu', 'float64', 'mag'),
      col('residual', 'float64', 'mag'),
      col('in_sample', 'bool'),
      col('rejected', 'bool'),
    ],
    rows: r.rungs.supernovae[which].map((s) => ({ ...s })),
  }));
}

/** The error budget of H0 by source. */
function budgetTable(r: Results): ResultTable {
  return {
    name: 'budget',
    title: 'Error budget of H0',
    columns: [col('source', 'string'), col('label', 'string'), col('kind', 'string'), col('sigma_h0', 'float64', KMSMPC), col('fraction', 'float64')],
    rows: r.budget.map((b) => ({ source: b.source, label: b.label, kind: b.kind, sigma_h0: b.sigma_h0, fraction: b.fraction })),
  };
}

/** The systematic variants and their H0. */
function variantsTable(r: Results): ResultTable {
  return {
    name: 'variants',
    title: 'Systematic variants',
    columns: [
      col('name', 'string'),
      col('overrides', 'string', '', 'JSON object of the analysis keys it changes'),
      col('h0', 'float64', KMSMPC),
      col('h0_stat', 'float64', KMSMPC),
      col('delta_h0', 'float64', KMSMPC),
      col('error', 'string'),
    ],
    rows: r.variants.map((v) => ({ name: v.name, overrides: JSON.stringify(v.overrides), h0: v.h0, h0_stat: v.h0_stat, delta_h0: v.delta_h0, error: v.error })),
  };
}

/** Each source of systematic error with its alternatives, their shifts and noise. */
function systematicSourcesTable(r: Results): ResultTable {
  return {
    name: 'systematic_sources',
    title: 'Sources of systematic error and their alternatives',
    columns: [
      col('source', 'string'),
      col('sigma_source', 'float64', KMSMPC, 'half the full range of H0 over the baseline and the alternatives'),
      col('alternative', 'string'),
      col('delta_h0', 'float64', KMSMPC),
      col('changes_data', 'bool'),
      col('noise_h0', 'float64', KMSMPC, 'standard deviation of delta_h0 from statistical noise alone'),
      col('delta_h0_net', 'float64', KMSMPC, 'delta_h0 less the noise in quadrature, floored at 0'),
      col('derived', 'string', '', 'JSON object of values derived for the alternative'),
    ],
    rows: (r.systematics ?? []).flatMap((s) =>
      r.variants
        .filter((v) => s.alternatives.includes(v.name))
        .map((v) => ({
          source: s.source,
          sigma_source: s.sigma_h0,
          alternative: v.name,
          delta_h0: v.delta_h0,
          changes_data: v.changes_data ?? false,
          noise_h0: v.noise_h0 ?? null,
          delta_h0_net: v.delta_h0_net ?? null,
          derived: JSON.stringify(v.derived ?? {}),
        })),
    ),
  };
}

/** The Cepheid residual scatter by host (Bartlett test). */
function hostScatterTable(r: Results): ResultTable {
  return {
    name: 'host_scatter',
    title: 'Cepheid residual scatter by host (Bartlett test)',
    columns: [
      col('system', 'string'),
      col('n', 'int64'),
      col('dof', 'float64'),
      col('chi2', 'float64'),
      col('variance_ratio', 'float64'),
      col('p_value', 'float64'),
    ],
    rows: (r.fit.quality?.groups ?? []).map((g) => ({ ...g })),
  };
}

/** The rows the global fit rejected or down-weighted. */
function rejectedTable(r: Results): ResultTable {
  return {
    name: 'rejected',
    title: 'Rejected rows',
    columns: [
      col('table', 'string'),
      col('id', 'string'),
      col('system', 'string'),
      col('line', 'int64'),
      col('residual_sigma', 'float64'),
      col('treatment', 'string'),
      col('membership', 'float64'),
    ],
    rows: r.rejected.map((x) => ({ ...x })),
  };
}

/** The data-quality checks. */
function checksTable(r: Results): ResultTable {
  return {
    name: 'checks',
    title: 'Data-quality checks',
    columns: [col('id', 'string'), col('title', 'string'), col('passed', 'bool'), col('severity', 'string'), col('detail', 'string')],
    rows: r.checks.map((c) => ({ ...c })),
  };
}

export function resultTables(r: Results): ResultTable[] {
  // in the order of the downloads: parameters and systems, then rung by rung, then budget, variants and checks
  const tables: ResultTable[] = [
    parametersTable(r),
    systemsTable(r),
    parallaxAnchorsTable(r),
    parallaxStarsTable(r),
    mainSequenceTargetsTable(r),
    mainSequenceStarsTable(r),
    cepheidsTable(r),
    ...supernovaTables(r),
    budgetTable(r),
    variantsTable(r),
    systematicSourcesTable(r),
    hostScatterTable(r),
    rejectedTable(r),
    checksTable(r),
  ];
  return tables;
}
