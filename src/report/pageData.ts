/**
 * From results.json to the data of one release's pages (ReleaseData): every
 * number formatted, every table laid out, every figure referenced. Pure: the
 * same results give the same data.
 */
import { DEFAULT_ANALYSIS, type AnalysisKey } from '../types/analysis.ts';
import type { Results, SystemResult } from '../types/results.ts';
import { objectLink, releasePagePath, releasePath, rungPath, systemPagePath } from '../layout/routes.ts';
import { parameterBlinded } from './blinding.ts';
import { changesParagraph } from './compare/view.ts';
import { analysisValueText, distanceText, fixed, int, percent, pm, sig, valueErr } from './format.ts';
import { type ColumnSpec, tableView } from './tables.ts';
import type { SystemsIndexView } from './types.ts';
import type {
  CheckView,
  ComparisonView,
  DownloadLink,
  FigureRef,
  Headline,
  InputUsed,
  KeyValue,
  PageLink,
  PublishedView,
  ReleaseData,
  RowMark,
  RungData,
  TableView,
} from './types.ts';
import { GENERATED_MARK } from './types.ts';
import { measuredRecoveryTable, type MeasuredRecovery } from './measured.ts';

/** The rung pages: URL segment, method note (file under content/methods), input tables, figures. */
export const RUNG_PAGES = [
  { slug: 'parallax', note: 'parallax', title: 'Parallax', inputs: ['parallax', 'systems'], figures: ['parallax-anchors', 'parallax-posteriors'] },
  { slug: 'main-sequence', note: 'main-sequence', title: 'Main sequence', inputs: ['main_sequence', 'systems'], figures: ['ms-locus', 'ms-targets'] },
  { slug: 'cepheids', note: 'cepheids', title: 'Cepheids', inputs: ['cepheids'], figures: ['pl-relation', 'pl-residuals'] },
  { slug: 'supernovae', note: 'supernovae', title: 'Supernovae', inputs: ['sn_calibrators'], figures: ['sn-calibrators'] },
  { slug: 'hubble-flow', note: 'hubble-flow', title: 'Hubble flow', inputs: ['sn_hubble_flow'], figures: ['hubble-diagram', 'hubble-residuals'] },
] as const;

/** Method notes the pages pull in; the build fails when one is missing. */
export const REQUIRED_NOTES: readonly string[] = [
  ...RUNG_PAGES.map((r) => r.note),
  'global-fit',
  'error-budget',
  'variants',
  'blinding',
  'internal-review',
  'comparison',
  'leave-one-out',
];

export const OVERVIEW_FIGURES = ['ladder-diagram'];
export const BUDGET_FIGURES = ['error-budget'];
export const VARIANT_FIGURES = ['variants'];

/** Rows shown in a long table before pointing to the download. */
const TABLE_LIMIT = 60;

export interface PageInputs {
  results: Results;
  figures: Record<string, FigureRef>;
  downloads: DownloadLink[];
  tableDownload: (name: string) => { csv: string; ecsv: string };
  summaryProse: string;
  notesProse: string | null;
  previousBuilt: boolean;
  /** Publication notice of a published release (its results are the published ones). */
  published?: PublishedView | null;
  /** The comparison page's content, or null (ReleaseData.comparisonState says why). */
  comparison?: ComparisonView | null;
  /** Comparison pages of later releases that compare themselves with this one. */
  next?: PageLink[];
  /** The systems index and leave-one-out summary (src/report/systems.ts). */
  systems?: SystemsIndexView;
  /** The recovery test's measured table, shown with the global-fit note (src/report/measured.ts). */
  measuredRecovery?: MeasuredRecovery | null;
}

/** A release's pages in navigation order (the recovery page, when there is one, is put before the figures). */
export function releasePages(id: string): PageLink[] {
  return [
    { path: releasePath(id), title: 'Summary' },
    ...RUNG_PAGES.map((r) => ({ path: rungPath(id, r.slug), title: r.title })),
    { path: releasePagePath(id, 'globalFit'), title: 'Global fit' },
    { path: releasePagePath(id, 'errorBudget'), title: 'Error budget' },
    { path: releasePagePath(id, 'variants'), title: 'Variants' },
    { path: releasePagePath(id, 'systems'), title: 'Systems' },
    { path: releasePagePath(id, 'data'), title: 'Data & provenance' },
    { path: releasePagePath(id, 'compare'), title: 'Comparison' },
    { path: releasePagePath(id, 'figures'), title: 'Figures' },
  ];
}

export function headline(r: Results): Headline {
  const unit = 'km/s/Mpc';
  if (r.h0 === null) {
    return {
      state: 'not_reached',
      value: null,
      stat: null,
      sys: null,
      total: null,
      unit,
      text: `No H0: the ladder stops at the ${r.reached.replace('_', ' ')} rung.`,
    };
  }
  const stat = pm(r.h0.value, r.h0.stat).split(' ± ');
  const sys = pm(r.h0.value, r.h0.sys).split(' ± ');
  const total = pm(r.h0.value, r.h0.total).split(' ± ');
  const value = stat[0]!;
  if (r.blinded) {
    // The blinding offset scales H0 and its errors by one hidden factor: only relative errors can be read.
    const rel = (e: number) => fixed((100 * e) / r.h0!.value, 1);
    return {
      state: 'blinded',
      value,
      stat: rel(r.h0.stat),
      sys: rel(r.h0.sys),
      total: rel(r.h0.total),
      unit: '%',
      text: `H0 is blinded (scaled by a hidden factor); relative uncertainties ± ${rel(r.h0.stat)} % (stat) ± ${rel(r.h0.sys)} % (sys).`,
    };
  }
  return {
    state: 'measured',
    value,
    stat: stat[1]!,
    sys: sys[1]!,
    total: total[1]!,
    unit,
    text: `H0 = ${value} ± ${stat[1]} (stat) ± ${sys[1]} (sys) ${unit}`,
  };
}

function param(r: Results, name: string, label: string): KeyValue | null {
  const p = r.parameters[name];
  if (!p) return null;
  return {
    label,
    value: `${pm(p.value, p.fixed ? null : p.err)}${p.unit ? ` ${p.unit}` : ''}${p.fixed ? ' (fixed)' : ''}`,
    blinded: parameterBlinded(r, name),
  };
}

const kv = (label: string, value: string, blinded = false): KeyValue => ({ label, value, blinded });
const present = <T>(x: T | null): x is T => x !== null;

function inputsFor(r: Results, tables: readonly string[]): InputUsed[] {
  return r.provenance.inputs
    .filter((f) => tables.includes(f.table))
    .map((f) => ({ file: f.file, table: f.table, format: f.format, rows: f.rows, sha256: f.sha256, extraColumns: [...f.extraColumns] }));
}

function fileOf(r: Results, table: string): string {
  return r.provenance.inputs.find((f) => f.table === table)?.file ?? `${table} (absent)`;
}

function rejectedTable(r: Results, id: string, tables: readonly string[], dl: PageInputs['tableDownload']): TableView | null {
  const rows = r.rejected.filter((x) => tables.includes(x.table));
  if (rows.length === 0) return null;
  return tableView(
    id,
    'Rejected rows',
    [
      ['id', 'Row id', null, false],
      ['system', 'System', null, false],
      ['file', 'File', null, false],
      ['line', 'Line', null, true],
      ['residual', 'Residual', 'σ', true],
      ['treatment', 'Treatment', null, false],
      ['membership', 'Core membership', null, true],
    ],
    rows.map((x) => [
      x.id,
      x.system ?? '—',
      fileOf(r, x.table),
      String(x.line),
      fixed(x.residual_sigma, 1),
      x.treatment === 'clipped' ? 'removed (clipping)' : 'down-weighted (blend mixture)',
      x.membership === null ? '—' : fixed(x.membership, 3),
    ]),
    {
      caption:
        'Rows removed by the outlier rule (standardised residual beyond the clipping threshold; for Cepheids only the too-faint side), and Cepheids kept but down-weighted by the mixture likelihood because they are probably blended (core membership below 0.5; the row enters with its membership as a weight); the line is the row’s line in its input file.',
      limit: TABLE_LIMIT,
      marks: rows.map(() => 'rejected'),
      downloads: dl('rejected'),
      // Each object links to its row on its system's page (Hubble-flow supernovae have no system).
      links: rows.map((x) => [
        x.system === null ? null : objectLink(r.release.id, x.system, x.id),
        x.system === null ? null : systemPagePath(r.release.id, x.system),
        null,
        null,
        null,
        null,
        null,
      ]),
    },
  );
}

function systemMu(s: SystemResult): string {
  return s.mu === null ? '—' : pm(s.mu, s.mu_err);
}

// --- rung pages ---------------------------------------------------------------

/** Stars whose per-star distance is weak or two-peaked (display only). */
function flaggedStarsTable(flagged: Results['rungs']['parallax']['stars'], p: PageInputs): TableView {
  return tableView(
    'flagged-stars',
    'Stars with weak or two-peaked distances',
    [
      ['star', 'Star', null, false],
      ['system', 'System', null, false],
      ['line', 'Line', null, true],
      ['plx', 'Corrected parallax', 'mas', true],
      ['frac', 'σ/parallax', null, true],
      ['q', 'Distance 5 / 50 / 95 %', 'pc', true],
      ['flag', 'Flag', null, false],
    ],
    flagged.map((s) => [
      s.star,
      s.system,
      String(s.line),
      pm(s.parallax_corr_mas, s.parallax_err_mas),
      fixed(s.frac_err, 2),
      `${sig(s.dist_q05_pc, 3)} / ${sig(s.dist_q50_pc, 3)} / ${sig(s.dist_q95_pc, 3)}`,
      [s.low_significance ? 'parallax/error < 5' : '', s.bimodal ? 'bimodal' : ''].filter(Boolean).join(', '),
    ]),
    { caption: 'Display only: these per-star distances do not enter the fit.', limit: TABLE_LIMIT, downloads: p.tableDownload('parallax_stars') },
  );
}

function parallaxRung(r: Results, p: PageInputs): Omit<RungData, 'slug' | 'note' | 'title' | 'figures'> {
  const { anchors, stars } = r.rungs.parallax;
  const a = r.analysis;
  const low = stars.filter((s) => s.low_significance).length;
  const flagged = stars.filter((s) => s.low_significance || s.bimodal);
  const tables: TableView[] = [];
  if (anchors.length > 0) {
    tables.push(
      tableView(
        'anchors',
        'Geometric anchors',
        [
          ['system', 'System', null, false],
          ['n', 'Stars', null, true],
          ['plx', 'Mean parallax', 'mas', true],
          ['scale', 'Error scale', null, true],
          ['mu_stat', 'μ (statistical)', 'mag', true],
          ['mu', 'μ (with zero point)', 'mag', true],
          ['d', 'Distance', null, true],
        ],
        anchors.map((x) => [
          x.system,
          int(x.n_stars),
          pm(x.mean_parallax_mas, x.mean_parallax_err_mas),
          fixed(x.error_scale, 2),
          pm(x.mu, x.mu_err_stat),
          pm(x.mu, x.mu_err),
          distanceText(10 ** ((x.mu - 25) / 5)),
        ]),
        {
          caption: 'Inverse-variance mean of the zero-point corrected parallaxes of each anchor, and the distance modulus that follows.',
          downloads: p.tableDownload('parallax_anchors'),
        },
      ),
    );
  }
  if (flagged.length > 0) tables.push(flaggedStarsTable(flagged, p));
  return {
    reached: anchors.length > 0 || stars.length > 0,
    status: anchors.length > 0 ? `${anchors.length} geometric anchors from ${int(stars.length)} stars.` : 'No parallax data in this release.',
    keyValues: [
      kv('Anchors', int(anchors.length)),
      kv('Stars', int(stars.length)),
      kv('Parallax zero point', `${analysisValueText(a.parallax_zero_point)} ± ${analysisValueText(a.parallax_zero_point_err)} mas`),
      kv('Parallax floor', `${analysisValueText(a.parallax_floor)} mas`),
      param(r, 'zeta', 'Fitted zero-point shift ζ'),
    ].filter(present),
    tables,
    inputs: inputsFor(r, ['parallax', 'systems']),
    rowsUsed: [
      `${int(stars.length)} rows of ${fileOf(r, 'parallax')} in ${anchors.length} anchors; ${int(low)} with parallax/error below 5.`,
      ...anchors.map((x) => `${x.system}: ${int(x.n_stars)} stars.`),
    ],
  };
}

function mainSequenceRung(r: Results, p: PageInputs): Omit<RungData, 'slug' | 'note' | 'title' | 'figures'> {
  const ms = r.rungs.main_sequence;
  const tables: TableView[] = [];
  if (ms.locus) {
    const L = ms.locus;
    tables.push(
      tableView(
        'locus',
        'Main-sequence locus',
        [
          ['k', 'Power of (c − pivot)', null, true],
          ['coef', 'Coefficient', 'mag', true],
        ],
        L.coeffs.map((c, k) => [String(k), pm(c, Math.sqrt(L.covariance[k]?.[k] ?? NaN))]),
        { caption: `Absolute V at [Fe/H] = 0 as a polynomial of degree ${L.degree} in intrinsic B−V minus the pivot ${fixed(L.color_pivot, 2)} mag.` },
      ),
    );
  }
  if (ms.targets.length > 0) {
    tables.push(
      tableView(
        'targets',
        'Main-sequence targets',
        [
          ['system', 'System', null, false],
          ['stars', 'Stars used', null, true],
          ['mu', 'μ', 'mag', true],
          ['ebv', 'E(B−V)', 'mag', true],
          ['corr', 'Correlation μ–E', null, true],
          ['feh', '[Fe/H]', 'dex', true],
          ['bin', 'Binary fraction', null, true],
          ['d', 'Distance', null, true],
        ],
        ms.targets.map((t) => [
          t.system,
          `${int(t.n_used)} of ${int(t.n_stars)}`,
          pm(t.mu, t.mu_err),
          pm(t.ebv, t.ebv_err),
          fixed(t.corr_mu_ebv, 2),
          fixed(t.feh, 2),
          percent(t.binary_fraction),
          distanceText(10 ** ((t.mu - 25) / 5)),
        ]),
        {
          caption: 'Distance modulus and reddening of each target from sliding the anchors’ locus onto its stars.',
          downloads: p.tableDownload('main_sequence_targets'),
        },
      ),
    );
  }
  const a = r.analysis;
  const nAnchorStars = ms.stars.filter((s) => s.role === 'anchor').length;
  const nTargetStars = ms.stars.filter((s) => s.role === 'target').length;
  return {
    reached: ms.locus !== null,
    status: ms.locus ? `Locus from ${int(ms.locus.n_stars)} anchor stars; ${ms.targets.length} targets.` : 'No main-sequence fitting in this release.',
    keyValues: [
      ...(ms.locus
        ? [
            kv('Locus degree', String(ms.locus.degree)),
            kv('Colour range', `${fixed(ms.locus.color_range[0], 2)} to ${fixed(ms.locus.color_range[1], 2)} mag`),
            kv('Scatter about the locus', `${fixed(ms.locus.scatter, 3)} mag`),
            kv('Binary fraction', percent(ms.locus.binary_fraction)),
          ]
        : []),
      kv('R_V', analysisValueText(a.r_v)),
      kv('Metallicity slope', `${analysisValueText(a.ms_feh_slope)} mag/dex`),
    ],
    tables,
    inputs: inputsFor(r, ['main_sequence', 'systems']),
    rowsUsed: [
      `${int(nAnchorStars)} anchor stars and ${int(nTargetStars)} target stars from ${fileOf(r, 'main_sequence')}; ${int(ms.stars.filter((s) => s.used).length)} used in the fits.`,
    ],
  };
}

function cepheidRung(r: Results, p: PageInputs): Omit<RungData, 'slug' | 'note' | 'title' | 'figures'> {
  const ceph = r.rungs.cepheids;
  const bySystem = new Map<string, { n: number; rej: number }>();
  for (const c of ceph) {
    const e = bySystem.get(c.system) ?? { n: 0, rej: 0 };
    e.n += 1;
    if (c.rejected) e.rej += 1;
    bySystem.set(c.system, e);
  }
  const systems = r.systems.filter((s) => bySystem.has(s.id));
  const tables: TableView[] = [];
  if (systems.length > 0) {
    tables.push(
      tableView(
        'cepheid-systems',
        'Systems with Cepheids',
        [
          ['system', 'System', null, false],
          ['kind', 'Kind', null, false],
          ['n', 'Cepheids (rejected)', null, true],
          ['prior', 'μ before the fit', 'mag', true],
          ['mu', 'μ after the fit', 'mag', true],
          ['d', 'Distance', null, true],
        ],
        systems.map((s) => {
          const e = bySystem.get(s.id)!;
          return [
            s.id,
            s.kind,
            `${int(e.n)} (${int(e.rej)})`,
            s.mu_prior === null ? '—' : pm(s.mu_prior, s.mu_prior_err),
            systemMu(s),
            distanceText(s.distance_mpc),
          ];
        }),
        {
          caption: 'Anchors enter with their geometric or main-sequence distance as a prior; hosts get their distance from the fit.',
          downloads: p.tableDownload('systems'),
          links: systems.map((s) => [systemPagePath(r.release.id, s.id), null, null, null, null, null]),
        },
      ),
    );
  }
  const rej = rejectedTable(r, 'cepheid-rejected', ['cepheids'], p.tableDownload);
  if (rej) tables.push(rej);
  const a = r.analysis;
  const nRej = ceph.filter((c) => c.rejected).length;
  // the blend mixture (content/methods/cepheids.md): rows below one half core membership, and the expected number of blends
  const nBlend = r.rejected.filter((x) => x.table === 'cepheids' && x.treatment === 'downweighted').length;
  const expectedBlends = ceph.reduce((sum, c) => sum + (c.rejected ? 0 : 1 - c.membership), 0);
  return {
    reached: ceph.length > 0,
    status:
      ceph.length > 0
        ? `${int(ceph.length)} Cepheids in ${systems.length} systems; ${int(nRej)} rejected; ${int(nBlend)} kept as probable blends (core membership below 0.5).`
        : 'No Cepheids in this release.',
    keyValues: [
      param(r, 'M_W', 'M_W at the pivot period'),
      param(r, 'b_W', 'Slope b_W'),
      param(r, 'Z_W', 'Metallicity term Z_W'),
      kv('Intrinsic scatter', `${fixed(r.fit.scatter.cepheids, 3)} mag`),
      kv('Expected number of blends (sum of 1 − core membership)', fixed(expectedBlends, 1)),
      kv('Pivot log P', analysisValueText(a.pl_pivot_logp)),
      kv('Wesenheit coefficient R', analysisValueText(a.wesenheit_r)),
    ].filter(present),
    tables,
    inputs: inputsFor(r, ['cepheids']),
    rowsUsed: [`${int(ceph.length)} rows of ${fileOf(r, 'cepheids')}; ${int(nRej)} rejected (listed with their lines below).`],
  };
}

function supernovaRung(r: Results, p: PageInputs): Omit<RungData, 'slug' | 'note' | 'title' | 'figures'> {
  const cal = r.rungs.supernovae.calibrators;
  const tables: TableView[] = [];
  const bl = parameterBlinded(r, 'M_B');
  if (cal.length > 0) {
    tables.push(
      tableView(
        'calibrators',
        'Calibrator supernovae',
        [
          ['sn', 'Supernova', null, false],
          ['host', 'Host', null, false],
          ['line', 'Line', null, true],
          ['mb', 'm_B', 'mag', true],
          ['x1', 'x1', null, true],
          ['c', 'c', null, true],
          ['mcorr', 'Standardised m', 'mag', true],
          ['mu', 'Host μ', 'mag', true],
          ['abs', 'm − μ', 'mag', true],
        ],
        cal.map((s) => [
          s.sn,
          s.system ?? '—',
          String(s.line),
          fixed(s.m_b, 3),
          fixed(s.x1, 2),
          fixed(s.c, 3),
          pm(s.m_corr, s.m_corr_err),
          fixed(s.mu, 3),
          fixed(s.m_corr - s.mu, 3),
        ]),
        {
          caption: 'Standardised peak magnitude m_B + α x1 − β c of each calibrator and its host’s Cepheid distance.',
          marks: cal.map((s): RowMark => (s.rejected ? 'rejected' : null)),
          downloads: p.tableDownload('sn_calibrators'),
        },
      ),
    );
  }
  const rej = rejectedTable(r, 'calibrator-rejected', ['sn_calibrators'], p.tableDownload);
  if (rej) tables.push(rej);
  return {
    reached: cal.length > 0,
    status: cal.length > 0 ? `${cal.length} calibrators; ${cal.filter((s) => s.rejected).length} rejected.` : 'No supernova calibrators in this release.',
    keyValues: [
      param(r, 'M_B', 'M_B'),
      param(r, 'alpha', 'Stretch coefficient α'),
      param(r, 'beta', 'Colour coefficient β'),
      cal.length > 0 ? kv('Intrinsic scatter', `${fixed(r.fit.scatter.supernovae, 3)} mag`) : null,
    ].filter(present),
    tables,
    inputs: inputsFor(r, ['sn_calibrators']),
    rowsUsed: cal.length > 0 ? [`${cal.length} rows of ${fileOf(r, 'sn_calibrators')}${bl ? '; M_B is shown while the release is blinded' : ''}.`] : [],
  };
}

function hubbleFlowRung(r: Results, p: PageInputs): Omit<RungData, 'slug' | 'note' | 'title' | 'figures'> {
  const flow = r.rungs.supernovae.hubble_flow;
  const a = r.analysis;
  const inFit = flow.filter((s) => s.in_sample && !s.rejected);
  const outside = flow.filter((s) => !s.in_sample);
  const tables: TableView[] = [];
  const rej = rejectedTable(r, 'flow-rejected', ['sn_hubble_flow'], p.tableDownload);
  if (rej) tables.push(rej);
  return {
    reached: flow.length > 0,
    status: flow.length > 0 ? `${int(inFit.length)} of ${int(flow.length)} supernovae in the fit.` : 'No Hubble-flow supernovae in this release.',
    keyValues: [
      r.h0 ? kv('H0', `${pm(r.h0.value, r.h0.stat)} (stat) ± ${valueErr(r.h0.value, r.h0.sys).err} (sys) km/s/Mpc`, r.blinded) : null,
      param(r, 'a_B', 'Intercept a_B'),
      kv('Redshift range of the fit', `${analysisValueText(a.z_min)} to ${analysisValueText(a.z_max)}`),
      kv('Peculiar-velocity scatter', `${analysisValueText(a.sigma_pec)} km/s`),
      kv('q0, j0', `${analysisValueText(a.q0)}, ${analysisValueText(a.j0)}`),
    ].filter(present),
    tables,
    inputs: inputsFor(r, ['sn_hubble_flow']),
    rowsUsed:
      flow.length > 0
        ? [
            `${int(flow.length)} rows of ${fileOf(r, 'sn_hubble_flow')}: ${int(inFit.length)} in the fit, ${int(outside.length)} outside the redshift range, ${int(flow.filter((s) => s.rejected).length)} rejected.`,
          ]
        : [],
  };
}

const RUNG_BUILDERS = {
  parallax: parallaxRung,
  'main-sequence': mainSequenceRung,
  cepheids: cepheidRung,
  supernovae: supernovaRung,
  'hubble-flow': hubbleFlowRung,
} as const;

// --- other pages --------------------------------------------------------------------

/** A parameter's value as the table shows it: fixed, value ± error, and for the scatters their asymmetric 68 % interval. */
function parameterValueText(x: Results['parameters'][string]): string {
  if (x.fixed) return `${sig(x.value, 4)} (fixed)`;
  const text = pm(x.value, x.err);
  return x.interval68 ? `${text} (68 % interval ${sig(x.interval68[0], 3)}–${sig(x.interval68[1], 3)})` : text;
}

function parametersTable(r: Results, p: PageInputs): TableView {
  const entries = Object.entries(r.parameters);
  return tableView(
    'parameters',
    'Fitted parameters',
    [
      ['name', 'Parameter', null, false],
      ['value', 'Value', null, true],
      ['unit', 'Unit', null, false],
      ['description', 'Meaning', null, false],
    ],
    entries.map(([name, x]) => [name, parameterValueText(x), x.unit || '—', x.description]),
    { marks: entries.map(([name]): RowMark => (parameterBlinded(r, name) ? 'blinded' : null)), downloads: p.tableDownload('parameters') },
  );
}

function globalFit(r: Results, p: PageInputs): ReleaseData['globalFit'] {
  const f = r.fit;
  const tables: TableView[] = [parametersTable(r, p)];
  const c = r.correlation;
  if (c.names.length > 0) {
    tables.push(
      tableView(
        'correlation',
        'Correlation of the main parameters',
        [['name', 'Parameter', null, false] as ColumnSpec, ...c.names.map((n): ColumnSpec => [n, n, null, true])],
        c.names.map((n, i) => [n, ...c.matrix[i]!.map((x) => fixed(x, 2))]),
      ),
    );
  }
  const rej = rejectedTable(r, 'all-rejected', ['cepheids', 'sn_calibrators', 'sn_hubble_flow'], p.tableDownload);
  if (rej) tables.push(rej);
  const q = f.quality ?? null;
  if (q) tables.push(hostScatterTable(q, p));
  if (p.measuredRecovery) tables.push(measuredRecoveryTable(p.measuredRecovery));
  return {
    note: 'global-fit',
    tables,
    keyValues: [
      kv('χ² / degrees of freedom', `${fixed(f.chi2, 1)} / ${f.dof}`),
      kv('p-value', fixed(f.p_value, 3)),
      ...(q
        ? [
            kv(
              'Cepheid scatter alike in every host (Bartlett)',
              `${q.passed ? 'passed' : 'FAILED'}: T = ${fixed(q.statistic, 2)} with ${q.dof} degrees of freedom, p = ${sig(q.p_value, 2)} (fails below ${q.alpha})`,
            ),
          ]
        : []),
      kv('Data rows / parameters', `${int(f.n_data)} / ${int(f.n_parameters)}`),
      kv('Rows rejected', int(f.n_rejected)),
      kv('Converged', f.converged ? `yes, in ${f.iterations} iterations` : `no (stopped after ${f.iterations} iterations)`),
      kv('Clipping threshold', r.analysis.clip_sigma === null ? 'off' : `${analysisValueText(r.analysis.clip_sigma)} σ`),
    ],
  };
}

/** Bartlett's test per host: each host's residual variance against the pooled one (src/ladder/fitQuality.ts). */
function hostScatterTable(q: NonNullable<Results['fit']['quality']>, p: PageInputs): TableView {
  return tableView(
    'host-scatter',
    'Cepheid residual scatter by host',
    [
      ['system', 'Host', null, false],
      ['n', 'Cepheids in the fit', null, true],
      ['dof', 'Degrees of freedom', null, true],
      ['chi2', 'χ²', null, true],
      ['ratio', 'Variance / pooled variance', null, true],
      ['p', 'p (two-sided)', null, true],
    ],
    q.groups.map((g) => [g.system, int(g.n), fixed(g.dof, 1), fixed(g.chi2, 1), fixed(g.variance_ratio, 2), sig(g.p_value, 2)]),
    {
      caption:
        `Bartlett's test that every host's standardised Cepheid residuals have the same variance: T = ${fixed(q.statistic, 2)}, ` +
        `${q.dof} degrees of freedom, p = ${sig(q.p_value, 2)}. Degrees of freedom are the rows less their leverages.` +
        (q.excluded.length > 0 ? ` Left out for too few rows: ${q.excluded.join(', ')}.` : ''),
      marks: q.groups.map((g): RowMark => (g.p_value < q.alpha ? 'flagged' : null)),
      downloads: p.tableDownload('host_scatter'),
    },
  );
}

/** Each source of systematic error with its alternatives, their shifts and the noise expected (src/ladder/budget.ts). */
function sourcesTable(r: Results, p: PageInputs): TableView | null {
  const sources = r.systematics ?? [];
  if (sources.length === 0) return null;
  const rows: string[][] = [];
  const marks: RowMark[] = [];
  for (const s of sources) {
    for (const name of s.alternatives) {
      const v = r.variants.find((x) => x.name === name);
      if (!v) continue;
      rows.push([
        s.label,
        fixed(s.sigma_h0, 2),
        v.name,
        v.delta_h0 === null ? '—' : fixed(v.delta_h0, 2),
        v.noise_h0 === null || v.noise_h0 === undefined ? '—' : v.changes_data ? fixed(v.noise_h0, 2) : '0 (same data)',
        v.delta_h0_net === null || v.delta_h0_net === undefined ? '—' : fixed(v.delta_h0_net, 2),
      ]);
      marks.push(v.h0 === null ? 'failed' : r.blinded ? 'blinded' : null);
    }
  }
  return tableView(
    'systematic-sources',
    'Sources of systematic error and their alternatives',
    [
      ['source', 'Source', null, false],
      ['sigma', 'σ of the source', 'km/s/Mpc', true],
      ['alternative', 'Alternative', null, false],
      ['delta', 'Shift of H0', 'km/s/Mpc', true],
      ['noise', 'Noise expected', 'km/s/Mpc', true],
      ['net', 'Shift less noise', 'km/s/Mpc', true],
    ],
    rows,
    {
      caption:
        "A source's σ is half the full range of H0 over the baseline and its alternatives; an alternative that changes the data counts only " +
        'the part of its shift beyond the statistical noise of that change (subtracted in quadrature, floored at 0); sources add in quadrature.',
      marks,
      downloads: p.tableDownload('systematic_sources'),
    },
  );
}

function budget(r: Results, p: PageInputs): ReleaseData['budget'] {
  if (r.h0 === null || r.budget.length === 0) return { note: 'error-budget', table: null, sources: null, figures: [], keyValues: [] };
  const h = headline(r);
  return {
    note: 'error-budget',
    sources: sourcesTable(r, p),
    table: tableView(
      'budget',
      'Error budget of H0',
      [
        ['source', 'Source', null, false],
        ['kind', 'Kind', null, false],
        ['sigma', 'σ(H0)', 'km/s/Mpc', true],
        ['share', 'Share of the variance', null, true],
      ],
      [
        ...r.budget.map((b) => [b.label, b.kind, fixed(b.sigma_h0, 2), percent(b.fraction)]),
        ['Total', 'statistical ⊕ systematic', fixed(r.h0.total, 2), percent(1)],
      ],
      {
        caption: r.blinded ? 'While the release is blinded, every σ(H0) carries the hidden blinding factor; the shares are exact.' : null,
        marks: [...r.budget.map((): RowMark => (r.blinded ? 'blinded' : null)), r.blinded ? 'blinded' : null],
        downloads: p.tableDownload('budget'),
      },
    ),
    figures: BUDGET_FIGURES.filter((id) => p.figures[id]),
    keyValues: [
      kv('Statistical', `± ${h.stat} ${h.unit}`, r.blinded),
      kv('Systematic', `± ${h.sys} ${h.unit}`, r.blinded),
      kv('Total', `± ${h.total} ${h.unit}`, r.blinded),
    ],
  };
}

function variantsData(r: Results, p: PageInputs): ReleaseData['variants'] {
  if (r.variants.length === 0) return { note: 'variants', table: null, figures: [] };
  return {
    note: 'variants',
    table: tableView(
      'variants',
      'Systematic variants',
      [
        ['name', 'Variant', null, false],
        ['source', 'Source (analysis choice)', null, false],
        ['overrides', 'Changes', null, false],
        ['h0', 'H0', 'km/s/Mpc', true],
        ['delta', 'Shift from the baseline', 'km/s/Mpc', true],
        ['status', 'Status', null, false],
      ],
      r.variants.map((v) => [
        v.name,
        (r.systematics ?? []).find((s) => s.alternatives.includes(v.name))?.label ?? '—',
        [
          ...Object.entries(v.overrides).map(([k, x]) => `${k} = ${analysisValueText(x)}`),
          ...Object.entries(v.derived ?? {}).map(([k, x]) => `${k} = ${typeof x === 'number' ? fixed(x, 4) : analysisValueText(x)} (derived)`),
        ].join(', ') || '—',
        v.h0 === null ? '—' : pm(v.h0, v.h0_stat),
        v.delta_h0 === null ? '—' : fixed(v.delta_h0, 2),
        v.error === null ? 'ok' : `failed: ${v.error}`,
      ]),
      { marks: r.variants.map((v): RowMark => (v.h0 === null ? 'failed' : r.blinded ? 'blinded' : null)), downloads: p.tableDownload('variants') },
    ),
    figures: VARIANT_FIGURES.filter((id) => p.figures[id]),
  };
}

function provenance(r: Results, p: PageInputs): ReleaseData['provenance'] {
  const set = new Set(r.analysis_set);
  const keys = Object.keys(r.analysis) as AnalysisKey[];
  return {
    inputs: tableView(
      'inputs',
      'Input files',
      [
        ['file', 'File', null, false],
        ['table', 'Table', null, false],
        ['format', 'Format', null, false],
        ['rows', 'Rows', null, true],
        ['sha256', 'SHA-256', null, false],
        ['extra', 'Extra columns (not used)', null, false],
      ],
      r.provenance.inputs.map((f) => [f.file, f.table, f.format, int(f.rows), f.sha256, f.extraColumns.join(', ') || '—']),
      { caption: 'Every file of the release folder that the calibration read, with its checksum.' },
    ),
    analysis: tableView(
      'analysis',
      'Analysis choices',
      [
        ['key', 'Key', null, false],
        ['value', 'Value used', null, true],
        ['default', 'Default', null, true],
        ['source', 'Set by', null, false],
      ],
      keys.map((k) => {
        const value = analysisValueText(r.analysis[k]);
        const dflt = analysisValueText(DEFAULT_ANALYSIS[k]);
        const by = !set.has(k) ? 'default' : value === dflt ? 'release.yaml (same as the default)' : 'release.yaml (differs from the default)';
        return [k, value, dflt, by];
      }),
      {
        caption: 'Keys the release sets in release.yaml, and the defaults used for the rest (marked “default”).',
        marks: keys.map((k): RowMark => (set.has(k) ? null : 'default')),
      },
    ),
    codeVersion: r.provenance.code_version,
    analysisHash: r.provenance.analysis_hash,
    inputsHash: r.provenance.inputs_hash,
    downloads: p.downloads,
  };
}

function checks(r: Results): CheckView[] {
  return r.checks.map((c) => ({ id: c.id, title: c.title, passed: c.passed, severity: c.severity, detail: c.detail }));
}

/** The complete data of one release's pages. */
export function releaseData(p: PageInputs): ReleaseData {
  const r = p.results;
  const id = r.release.id;
  const rungs: RungData[] = RUNG_PAGES.map((def) => ({
    slug: def.slug,
    note: def.note,
    title: def.title,
    figures: def.figures.filter((f) => p.figures[f]),
    ...RUNG_BUILDERS[def.slug](r, p),
  }));
  return {
    generated: GENERATED_MARK,
    id,
    title: r.release.title,
    date: r.release.date,
    previous: r.release.previous,
    previousBuilt: p.previousBuilt,
    blinded: r.blinded,
    unblinding: r.unblinding ? { by: r.unblinding.by, date: r.unblinding.date } : null,
    reached: r.reached,
    headline: headline(r),
    summaryProse: p.summaryProse,
    notesProse: p.notesProse,
    changes: { text: p.comparison ? changesParagraph(p.comparison) : null, page: releasePagePath(id, 'compare') },
    comparison: p.comparison ?? null,
    comparisonState: p.comparison ? 'shown' : r.release.previous === null ? 'first' : p.previousBuilt ? 'not-computed' : 'previous-missing',
    next: p.next ?? [],
    checks: checks(r),
    fit: globalFit(r, p).keyValues,
    parameters: parametersTable(r, p),
    figures: p.figures,
    overviewFigures: OVERVIEW_FIGURES.filter((f) => p.figures[f]),
    rungs,
    globalFit: globalFit(r, p),
    budget: budget(r, p),
    variants: variantsData(r, p),
    provenance: provenance(r, p),
    pages: releasePages(id),
    published: p.published ?? null,
    ...(p.systems ? { systems: p.systems } : {}),
  };
}
