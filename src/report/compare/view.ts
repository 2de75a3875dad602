/**
 * From a comparison (src/diff, schema rungbook.diff/1) to the content of a
 * release's comparison page: a memo that says first what H0 did and why, then
 * the evidence (attribution, the rows that moved it, input and result changes,
 * overlays), then the methods, and a message to paste.
 *
 * Nothing here is computed anew: every number is the comparison's, formatted.
 * While a release is blinded the comparison has already withheld what must not
 * be shown (src/diff/blinding.ts); this module only marks what remains. What
 * the memo states (the headline on H0, the sigma wording, the rankings) comes
 * from the comparison's one vocabulary (src/diff/vocabulary.ts), as the command
 * line's does.
 */
import { objectLink, systemPagePath } from '../../layout/routes.ts';
import { renderMarkdown, tableLine, unitSuffix } from '../../diff/render.ts';
import { tableTouched } from '../../diff/inputs.ts';
import { h0Headline, rankedContributions, rankedInputChanges, TYPOGRAPHIC, type RankedInputChange } from '../../diff/vocabulary.ts';
import type { DiffReport, ParameterShift, Shift, SystemShift } from '../../diff/types.ts';
import { analysisValueText, fixed, int, sig } from '../format.ts';
import { ANALYSIS_UNITS } from '../../types/analysis.ts';
import { tableView } from '../tables.ts';
import type { ComparisonView, KeyValue, MethodText, RowMark, TableView } from '../types.ts';
import { GROUP_TITLE, sigmaText, signedText, STATUS_TEXT } from './words.ts';

/** Changed cells listed on the page (all of them are in `rungbook diff --format json`). */
export const PAGE_CELLS_MAX = 40;
/** Systems listed on the page: every flagged or changed one, then the largest shifts, up to this many. */
export const PAGE_SYSTEMS_MAX = 40;
/** Input changes named in the memo's opening. */
export const OPENING_INPUTS_MAX = 4;

const H0_UNIT = 'km/s/Mpc';

function shiftCells(s: Shift, decimals: number): [string, string, string] {
  const delta = s.delta === null ? 'withheld' : signedText(s.delta, decimals);
  const sd = s.sigma_diff === null ? '—' : s.sigma_diff === 0 ? '0' : sig(s.sigma_diff, 2);
  const ds = s.deterministic ? 'no spread' : sigmaText(s.delta_sigma);
  return [delta, sd, ds];
}

function valueOr(x: number | null, decimals: number, blinded: boolean): string {
  if (x === null) return blinded ? 'hidden (blinded)' : '—';
  return fixed(x, decimals);
}

/** Decimals for a parameter from its size of error (4 for magnitudes; at least the shift's 2 significant digits). */
function paramDecimals(p: ParameterShift): number {
  const ref = p.sigma_diff && p.sigma_diff > 0 ? p.sigma_diff : Math.abs(p.delta ?? 0);
  if (!(ref > 0)) return 4;
  return Math.min(6, Math.max(2, 1 - Math.floor(Math.log10(ref))));
}

/** The memo's opening sentence on H0 (src/diff/vocabulary.ts decides what it states). */
function headlineText(r: DiffReport): { text: string; flagged: boolean } {
  if (r.identical)
    return { text: `Nothing changed: releases ${r.a} and ${r.b} have identical inputs and analysis choices, and every result is the same.`, flagged: false };
  const hl = h0Headline(r, TYPOGRAPHIC);
  if (hl.case === 'not-measured')
    return {
      text: `H₀ is not measured in both releases (${r.a}: ${r.releases.a.reached}; ${r.b}: ${r.releases.b.reached}); the other results are compared below.`,
      flagged: false,
    };
  // the blinding sentence itself stands in its own marked line below the headline
  if (hl.case === 'withheld')
    return { text: 'H₀ and its shift are withheld because of blinding. Everything that does not follow from H₀ is compared below.', flagged: false };
  const size = `${hl.shift} ${H0_UNIT}`;
  const values = hl.values ? `, from ${hl.values.a} to ${hl.values.b}` : ' (a shift of blinded values: the true shift times the common hidden factor)';
  const sigma =
    hl.spread === 'no-spread'
      ? 'The shift has no statistical spread: it comes from changed choices, or changed values at fixed noise.'
      : hl.spread === 'sigma'
        ? `That is ${hl.sigma} of the uncertainty of the difference (σ = ${hl.sigmaDiff} ${H0_UNIT}; the naive quadrature sum of both errors would say ${hl.naive ?? '—'}).`
        : 'The uncertainty of the difference could not be estimated.';
  const flag = hl.flagged ? ` Flagged: above ${r.flag_threshold_sigma} σ of the difference.` : '';
  return { text: `H₀ moved by ${size}${values}. ${sigma}${flag}`, flagged: hl.flagged };
}

function contributionsText(r: DiffReport): string | null {
  if (r.blinding.shift_hidden && (r.blinding.a || r.blinding.b)) return null; // said by the blinding line
  if (!r.h0 || r.h0.delta === null || r.attribution.length === 0 || r.identical)
    return r.attribution_note && !r.identical ? `No attribution: ${r.attribution_note}.` : null;
  const { moving, cancelling } = rankedContributions(r);
  if (moving.length === 0) return null;
  const parts = moving
    .slice(0, 3)
    .map((e) => `${GROUP_TITLE[e.group]} ${signedText(e.delta_h0, 2)}${cancelling || e.fraction === null ? '' : ` (${fixed(100 * e.fraction, 0)} %)`}`);
  const rest = moving.length > 3 ? `, and ${moving.length - 3} more group${moving.length - 3 === 1 ? '' : 's'}` : '';
  return `What moved it: ${parts.join(', ')}${rest} ${H0_UNIT}${cancelling ? ', partly cancelling' : ''}.`;
}

/** One input change of the memo's opening (variants are listed with the inputs, not here). */
function openingInputChange(x: Exclude<RankedInputChange, { kind: 'variant' }>): string {
  if (x.kind === 'table') return tableLine(x.change).replaceAll(' -> ', ' → ');
  const c = x.change;
  return `release.yaml: ${c.key} ${analysisValueText(c.a)} → ${analysisValueText(c.b)}${unitSuffix(ANALYSIS_UNITS[c.key])}`;
}

/** The largest input changes, in the comparison's one ranking (src/diff/vocabulary.ts). */
function largestInputs(r: DiffReport): string[] {
  return rankedInputChanges(r)
    .filter((x): x is Exclude<RankedInputChange, { kind: 'variant' }> => x.kind !== 'variant')
    .slice(0, OPENING_INPUTS_MAX)
    .map(openingInputChange);
}

function keyValues(r: DiffReport): KeyValue[] {
  const h = r.h0;
  if (!h) return [];
  const blinded = r.blinding.a || r.blinding.b;
  const kv: KeyValue[] = [];
  if (h.a !== null && h.b !== null) {
    kv.push({ label: `H₀ of ${r.a}`, value: `${fixed(h.a, 2)} ± ${fixed(h.stat_a ?? NaN, 2)} ${H0_UNIT}`, blinded: false });
    kv.push({ label: `H₀ of ${r.b}`, value: `${fixed(h.b, 2)} ± ${fixed(h.stat_b ?? NaN, 2)} ${H0_UNIT}`, blinded: false });
  } else {
    kv.push({ label: 'H₀ values', value: 'hidden while a release is blinded', blinded: true });
  }
  kv.push({ label: 'Shift', value: h.delta === null ? 'withheld (blinding)' : `${signedText(h.delta, 2)} ${H0_UNIT}`, blinded: blinded && h.delta !== null });
  if (h.sigma_diff !== null) kv.push({ label: 'σ of the difference', value: `${fixed(h.sigma_diff, 2)} ${H0_UNIT}`, blinded: false });
  if (h.sigma_naive !== null) kv.push({ label: 'Naive quadrature sum (not used)', value: `${fixed(h.sigma_naive, 2)} ${H0_UNIT}`, blinded: false });
  if (h.delta !== null)
    kv.push({
      label: 'Shift / σ of the difference',
      value: h.deterministic ? 'no spread (choices or fixed-noise values)' : sigmaText(h.delta_sigma),
      blinded: false,
    });
  if (h.ratio !== null && blinded) kv.push({ label: `H₀ ratio ${r.b} / ${r.a}`, value: fixed(h.ratio, 5), blinded: false });
  return kv;
}

function attributionTable(r: DiffReport): TableView | null {
  if (r.attribution.length === 0 || !r.attribution_detail) return null;
  const blinded = r.blinding.a || r.blinding.b;
  // A share of the total reads well only when every contribution pushes the same way; with
  // contributions of both signs they cancel and shares run past 100 % (or below -100 %).
  const total = r.attribution_detail.total;
  const oneSign = total !== 0 && r.attribution.every((e) => e.delta_h0 === 0 || Math.sign(e.delta_h0) === Math.sign(total));
  const rows = r.attribution.map((e) => [
    GROUP_TITLE[e.group],
    e.group,
    e.differs ? 'yes' : 'no',
    signedText(e.delta_h0, 3),
    !oneSign || e.fraction === null ? '—' : `${fixed(100 * e.fraction, 1)} %`,
    e.rows_sum === null ? '—' : signedText(e.rows_sum, 3),
  ]);
  rows.push(['Total', '', '', signedText(r.attribution_detail.total, 3), r.attribution_detail.total === 0 ? '—' : '100.0 %', '']);
  return tableView(
    'attribution',
    'Contributions to the H₀ shift',
    [
      ['group', 'Input group', null, false],
      ['key', 'Key in the JSON', null, false],
      ['differs', 'Differs', null, false],
      ['delta', 'Contribution', H0_UNIT, true],
      ['fraction', 'Share', null, true],
      ['rows', 'Sum of row estimates', H0_UNIT, true],
    ],
    rows,
    {
      caption:
        `The contributions add up to the total shift (relative difference ${r.attribution_detail.sum_rel_error.toExponential(1)}). ` +
        '"Sum of row estimates" adds the linear estimates of the rows listed below; it differs from the contribution where rows interact.' +
        (oneSign
          ? ''
          : ' Shares are not shown: the contributions have both signs and partly cancel, so a share of the total would be misleading (it can exceed 100 %); read the contributions themselves.') +
        (blinded ? ' Blinded: contributions are in blinded km/s/Mpc.' : ''),
      marks: rows.map(() => (blinded ? 'blinded' : null)),
    },
  );
}

function objectsTable(r: DiffReport): TableView | null {
  if (r.top_objects.length === 0) return null;
  const rows = r.top_objects.map((o, i) => [
    String(i + 1),
    o.level === 'system' ? `${o.id} (${o.rows} rows)` : o.id,
    o.system ?? '—',
    o.table,
    STATUS_TEXT[o.status],
    o.columns.length ? o.columns.join(', ') : '—',
    signedText(o.delta_h0, 3),
    o.estimate === 'linear' ? 'linear' : o.estimate === 'anchor' ? 'through the anchor' : 'recalibration',
  ]);
  return tableView(
    'top-objects',
    `The ${rows.length} rows that moved H₀ most`,
    [
      ['rank', '#', null, true],
      ['id', 'Row', null, false],
      ['system', 'System', null, false],
      ['table', 'Table', null, false],
      ['status', 'Change', null, false],
      ['columns', 'Columns changed', null, false],
      ['delta', 'Effect on H₀', H0_UNIT, true],
      ['estimate', 'Estimated by', null, false],
    ],
    rows,
    {
      caption: r.objects_not_estimated
        ? `${int(r.objects_not_estimated)} changed rows have no estimate (for example a row of a system the other release lacks).`
        : null,
      marks: rows.map(() => (r.blinding.a || r.blinding.b ? 'blinded' : null)),
      links: r.top_objects.map((o) => {
        // A removed row is on the previous release's pages, every other on this release's.
        const rel = o.status === 'removed' ? r.a : r.b;
        const row = o.system === null ? null : o.level === 'system' ? systemPagePath(rel, o.system) : objectLink(rel, o.system, o.id);
        return [null, row, o.system === null ? null : systemPagePath(rel, o.system), null, null, null, null, null];
      }),
    },
  );
}

/** One row per input table: rows before and after, added, removed, changed, and what else differs. */
function tablesTable(r: DiffReport): TableView {
  return tableView(
    'input-tables',
    'Tables',
    [
      ['table', 'Table', null, false],
      ['file', 'File', null, false],
      ['rows', 'Rows', null, true],
      ['added', 'Added', null, true],
      ['removed', 'Removed', null, true],
      ['changed', 'Changed', null, true],
      ['detail', 'Of the changed', null, false],
    ],
    r.inputs.map((t) => [
      t.table,
      t.file_a === t.file_b ? (t.file_b ?? '(absent)') : `${t.file_a ?? '(absent)'} → ${t.file_b ?? '(absent)'}`,
      `${int(t.rows_a)} → ${int(t.rows_b)}`,
      int(t.added),
      int(t.removed),
      int(t.changed),
      [
        t.changed ? `${int(t.corrected)} corrected, ${int(t.remeasured)} with new errors` : '',
        t.order_changed ? 'rows reordered' : '',
        t.bytes_only ? 'file bytes changed, no values' : '',
        t.format_a !== t.format_b ? `format ${t.format_a ?? '—'} → ${t.format_b ?? '—'}` : '',
      ]
        .filter(Boolean)
        .join('; ') || (tableTouched(t) ? 'see columns' : 'unchanged'),
    ]),
    { marks: r.inputs.map((t) => (tableTouched(t) ? 'flagged' : null)) },
  );
}

/** The columns whose values changed: how many rows, the median and largest change. Null when none. */
function columnsTable(r: DiffReport): TableView | null {
  const colRows: string[][] = [];
  for (const t of r.inputs) {
    for (const c of t.columns) {
      colRows.push([
        `${t.table}.${c.column}`,
        c.unit === null ? 'text' : c.unit === '' ? '—' : c.unit,
        int(c.changed),
        c.median === null ? '—' : signedText(c.median, decimalsFor(c.median, c.largest)),
        c.largest === null ? '—' : signedText(c.largest, decimalsFor(c.median, c.largest)),
        c.largest_id ?? '—',
        [c.appeared ? `${int(c.appeared)} gained a value` : '', c.disappeared ? `${int(c.disappeared)} lost their value` : ''].filter(Boolean).join(', ') ||
          '—',
      ]);
    }
  }
  return colRows.length
    ? tableView(
        'input-columns',
        'Columns that changed',
        [
          ['column', 'Column', null, false],
          ['unit', 'Unit', null, false],
          ['changed', 'Rows changed', null, true],
          ['median', 'Median change', null, true],
          ['largest', 'Largest change', null, true],
          ['largest_id', 'Largest in', null, false],
          ['appeared', 'Values appeared or gone', null, false],
        ],
        colRows,
        { caption: 'Changes are new minus old, in the unit of the column; a text column lists how many rows differ.' },
      )
    : null;
}

/** The analysis choices of release.yaml that differ, each side's value (and whether it is the default). Null when none. */
function analysisTable(r: DiffReport): TableView | null {
  const ic = r.input_changes;
  return ic.analysis.length
    ? tableView(
        'analysis-changes',
        'Analysis choices (release.yaml)',
        [
          ['key', 'Key', null, false],
          ['unit', 'Unit', null, false],
          ['a', `In ${r.a}`, null, false],
          ['b', `In ${r.b}`, null, false],
        ],
        ic.analysis.map((c) => [
          c.key,
          ANALYSIS_UNITS[c.key] || '—',
          `${analysisValueText(c.a)}${c.set_a ? '' : ' (default)'}`,
          `${analysisValueText(c.b)}${c.set_b ? '' : ' (default)'}`,
        ]),
      )
    : null;
}

/** Changes that are no table's: choices set on one side only, variants, release.yaml fields, the notes. */
function otherChanges(r: DiffReport): string[] {
  const ic = r.input_changes;
  return [
    ...ic.analysis_set_only.map((k) => `release.yaml: ${k} keeps its value but is set explicitly on one side only.`),
    ...ic.variants.map((v) => `Systematic variant "${v.name}" ${v.kind}.`),
    ...ic.manifest.map((m) => `release.yaml ${m.field}: ${analysisValueText(m.a)} → ${analysisValueText(m.b)}.`),
    ...(ic.notes_changed ? ['The release notes (notes.md) changed.'] : []),
  ];
}

/** The changed values themselves, up to PAGE_CELLS_MAX. Null when none. */
function cellsTable(r: DiffReport): TableView | null {
  const ic = r.input_changes;
  return ic.cells.length
    ? tableView(
        'changed-values',
        'Changed values',
        [
          ['where', 'Table:line', null, false],
          ['id', 'Row', null, false],
          ['column', 'Column', null, false],
          ['a', `In ${r.a}`, null, true],
          ['b', `In ${r.b}`, null, true],
          ['unit', 'Unit', null, false],
        ],
        ic.cells.map((c) => [`${c.table}:${c.line_b}`, c.id, c.column, cellText(c.a), cellText(c.b), c.unit ?? '—']),
        {
          limit: PAGE_CELLS_MAX,
          caption: `All ${int(ic.cells.length)} changed values are in the output of \`rungbook diff --format json\` on the two release folders.`,
        },
      )
    : null;
}

function inputTables(r: DiffReport): ComparisonView['inputs'] {
  const columnChanges = r.inputs.flatMap((t) => t.column_changes.map((c) => `${t.table}: ${c.detail}`));
  return { tables: tablesTable(r), columns: columnsTable(r), columnChanges, analysis: analysisTable(r), other: otherChanges(r), cells: cellsTable(r) };
}

function decimalsFor(...xs: (number | null)[]): number {
  const m = Math.max(...xs.map((x) => Math.abs(x ?? 0)));
  if (!(m > 0)) return 3;
  return Math.min(6, Math.max(0, 2 - Math.floor(Math.log10(m))));
}

function cellText(x: number | string | null): string {
  if (x === null) return '(empty)';
  if (typeof x === 'string') return x;
  return String(x).replace(/^-/, '\u2212');
}

function markOf(s: Shift & { blinded?: boolean }): RowMark {
  if (s.flagged) return 'flagged';
  if (s.blinded) return 'blinded';
  return null;
}

function parameterTable(r: DiffReport): TableView {
  const rows = r.parameters.map((p) => {
    const d = paramDecimals(p);
    return [p.name, valueOr(p.a, d, p.blinded), valueOr(p.b, d, p.blinded), ...shiftCells(p, d), p.unit || '—', p.sigma_rule ?? '—'];
  });
  return tableView(
    'parameter-shifts',
    'Parameters',
    [
      ['name', 'Parameter', null, false],
      ['a', `In ${r.a}`, null, true],
      ['b', `In ${r.b}`, null, true],
      ['delta', 'Shift', null, true],
      ['sigma', 'σ of the difference', null, true],
      ['ratio', 'Shift / σ', null, true],
      ['unit', 'Unit', null, false],
      ['rule', 'σ rule', null, false],
    ],
    rows,
    {
      caption: `Flagged: |shift| above ${r.flag_threshold_sigma} σ of the difference and at least ${r.flag_negligible_fraction} of the parameter's own error. σ rules: linear (propagated through both fits), nested, independent, fixed.`,
      marks: r.parameters.map(markOf),
    },
  );
}

function systemTable(r: DiffReport): TableView | null {
  const shown = r.systems.filter((s) => s.a !== null || s.b !== null);
  if (shown.length === 0) return null;
  const order = [...shown].sort(
    (x, y) =>
      Number(y.flagged) - Number(x.flagged) ||
      Number(y.inputs_changed) - Number(x.inputs_changed) ||
      Math.abs(y.delta_sigma ?? 0) - Math.abs(x.delta_sigma ?? 0) ||
      x.id.localeCompare(y.id),
  );
  const rows = order.map((s: SystemShift) => [
    s.id,
    s.kind,
    s.method_a === s.method_b ? (s.method_b ?? '—') : `${s.method_a ?? '—'} → ${s.method_b ?? '—'}`,
    valueOr(s.a, 3, false),
    valueOr(s.b, 3, false),
    ...shiftCells(s, 3),
    s.inputs_changed ? 'yes' : 'no',
  ]);
  return tableView(
    'system-shifts',
    'System distance moduli',
    [
      ['system', 'System', null, false],
      ['kind', 'Kind', null, false],
      ['method', 'Method', null, false],
      ['a', `μ in ${r.a}`, 'mag', true],
      ['b', `μ in ${r.b}`, 'mag', true],
      ['delta', 'Shift', 'mag', true],
      ['sigma', 'σ of the difference', 'mag', true],
      ['ratio', 'Shift / σ', null, true],
      ['inputs', 'Inputs changed', null, false],
    ],
    rows,
    {
      limit: PAGE_SYSTEMS_MAX,
      marks: order.map(markOf),
      caption: 'Flagged systems first, then those whose input rows changed, then by the size of the shift in σ.',
    },
  );
}

function fitTable(r: DiffReport): TableView {
  const f = (name: string, x: number) => (Number.isInteger(x) ? int(x) : name === 'chi2_per_dof' ? fixed(x, 3) : fixed(x, 4));
  return tableView(
    'fit-changes',
    'Global fit',
    [
      ['name', 'Quantity', null, false],
      ['a', `In ${r.a}`, null, true],
      ['b', `In ${r.b}`, null, true],
    ],
    r.fit.map((q) => [q.name, f(q.name, q.a), f(q.name, q.b)]),
  );
}

function methods(r: DiffReport): MethodText[] {
  const m: MethodText[] = [{ title: 'Uncertainty of a difference', text: r.sigma_method }];
  if (r.attribution_detail) m.push({ title: 'Attribution of the H₀ shift', text: r.attribution_detail.method });
  if (r.top_objects.length) m.push({ title: 'Effect of single rows', text: r.top_objects_method });
  return m;
}

/** The page's content for comparison `r`; `figures`: ids of the comparison figures drawn (compare-*). */
export function comparisonView(r: DiffReport, figures: readonly string[]): ComparisonView {
  const head = headlineText(r);
  const overlayIds = ['compare-pl-relation', 'compare-hubble-diagram', 'compare-ladder-diagram'];
  const drawn = overlayIds.filter((id) => figures.includes(id));
  const missing = r.overlays
    .filter((o) => !drawn.includes(`compare-${o.id}`) || o.withheld)
    .map((o) => `${o.title}: ${o.withheld ?? 'neither release has points for it'}.`);
  const blindingSentence = r.blinding.a || r.blinding.b ? `${r.blinding.note}.` : null;
  return {
    a: { id: r.a, title: r.releases.a.title, date: r.releases.a.date },
    b: { id: r.b, title: r.releases.b.title, date: r.releases.b.date },
    identical: r.identical,
    headline: head.text,
    flagged: head.flagged,
    contributions: contributionsText(r),
    largestInputs: largestInputs(r),
    blinding: blindingSentence,
    keyValues: keyValues(r),
    attribution: {
      table: attributionTable(r),
      figure: figures.includes('compare-attribution') ? 'compare-attribution' : null,
      note: r.attribution.length === 0 ? (r.attribution_note ?? 'no attribution') : null,
    },
    topObjects: {
      table: objectsTable(r),
      note: r.top_objects.length
        ? ''
        : r.blinding.shift_hidden
          ? 'Withheld with the shift (blinding).'
          : 'No changed row of the parallax, Cepheid or supernova tables has an estimated effect on H₀.',
    },
    inputs: inputTables(r),
    parameters: parameterTable(r),
    systems: systemTable(r),
    fit: fitTable(r),
    overlays: { figures: drawn, missing },
    methods: methods(r),
    message: renderMarkdown(r),
  };
}

/** The overview's paragraph on the comparison: the headline and the main contributions. */
export function changesParagraph(view: ComparisonView): string {
  return [view.headline, view.contributions].filter(Boolean).join(' ');
}
