/**
 * The comparison as text (for a terminal) and as Markdown (a short message ready to paste
 * into an email or a chat, with absolute links to the report). Both read only the DiffReport;
 * JSON output is the report itself. Long lists are capped here (all rows are in the JSON).
 * What they state (the headline on H0, the sigma wording, the rankings) comes from the
 * comparison's one vocabulary (vocabulary.ts), which the report's comparison page uses too.
 */
import { ANALYSIS_UNITS } from '../types/analysis.ts';
import { tableTouched } from './inputs.ts';
import type { ColumnSummary, DiffReport, ObjectInfluence, ParameterShift, SystemShift, TableChange } from './types.ts';
import { objectLink, systemPagePath } from '../layout/routes.ts';
import {
  GROUP_NAME_IN_TEXT,
  h0Headline,
  MESSAGE,
  PLAIN,
  rankedContributions,
  rankedInputChanges,
  sigmaWords,
  signedNumber,
  type RankedInputChange,
} from './vocabulary.ts';

export { rankedContributions };

/** Changed cells listed in text output (all of them are in the JSON). */
export const TEXT_CELLS_MAX = 25;
/** Systems listed in text output (those with a change first). */
export const TEXT_SYSTEMS_MAX = 30;
/** Contributions and input changes listed in the Markdown message. */
export const MARKDOWN_CONTRIBUTIONS_MAX = 3;
export const MARKDOWN_INPUTS_MAX = 4;
export const MARKDOWN_OBJECTS_MAX = 5;

/** x with a sign and `digits` decimals, as plain text ("+0.12", "-0.03", "0.00" for an exact zero). */
export function signed(x: number, digits: number): string {
  return signedNumber(x, digits, PLAIN);
}

/** Three significant digits with a sign, without exponent for the usual magnitudes. */
export function signedSig(x: number): string {
  if (x === 0) return '0';
  const a = Math.abs(x);
  const digits = a >= 100 ? 0 : Math.max(0, 2 - Math.floor(Math.log10(a)));
  return signed(x, Math.min(digits, 8));
}

function plain(x: number | string | null): string {
  if (x === null) return '(empty)';
  if (typeof x === 'string') return x;
  return String(x);
}

/** " mas" after a value whose unit is "mas"; nothing without a unit. */
export function unitSuffix(unit: string | null): string {
  return unit ? ` ${unit}` : '';
}

/** Plain ids that no Markdown reader turns into markup or a link (letters, digits, . - and inner _). */
const MARKDOWN_SAFE_TEXT = /^[A-Za-z0-9](?:[A-Za-z0-9.-]|(?<=[A-Za-z0-9])_(?=[A-Za-z0-9]))*$/;

/**
 * Text from the data (row ids, column names, units, variant names) for the Markdown message: kept
 * as it is when it is a plain id, otherwise put in a code span, where no link, image, raw HTML,
 * emphasis or automatic link is recognised (CommonMark, GFM). A code span's fence is longer than
 * any run of backticks inside, and padded with a space when the text begins or ends with one.
 * So a pasted message never carries a link, image or markup that the data put there.
 */
export function mdData(text: string): string {
  const flat = text.replace(/[\r\n\t]+/g, ' ');
  if (MARKDOWN_SAFE_TEXT.test(flat) && !/www\./i.test(flat)) return flat;
  const longest = Math.max(0, ...Array.from(flat.matchAll(/`+/g), (m) => m[0].length));
  const fence = '`'.repeat(longest + 1);
  const pad = /^[` ]|[` ]$/.test(flat) ? ' ' : '';
  return `${fence}${pad}${flat}${pad}${fence}`;
}

/** One column's summary; `data` formats the names and ids taken from the files (default: as they are). */
export function columnLine(t: TableChange, c: ColumnSummary, data: (text: string) => string = (x) => x): string {
  const unit = c.unit ? ` ${data(c.unit)}` : '';
  let s = `${data(c.column)}: ${c.changed} ${t.noun} changed`;
  if (c.median !== null && c.largest !== null) {
    s += `, median ${signedSig(c.median)}${unit}, largest ${signedSig(c.largest)}${unit}${c.largest_id === null ? '' : ` (${data(c.largest_id)})`}`;
  }
  if (c.appeared) s += `, ${c.appeared} gained a value`;
  if (c.disappeared) s += `, ${c.disappeared} lost their value`;
  return s;
}

export function tableLine(t: TableChange): string {
  const file = t.file_a === t.file_b ? (t.file_b ?? `${t.table} (absent)`) : `${t.file_a ?? '(absent)'} -> ${t.file_b ?? '(absent)'}`;
  const parts = [`${t.rows_a} -> ${t.rows_b} ${t.noun}`];
  if (t.changed) parts.push(`${t.changed} changed (${t.corrected} corrected, ${t.remeasured} with new uncertainties)`);
  if (t.added) parts.push(`${t.added} added`);
  if (t.removed) parts.push(`${t.removed} removed`);
  if (t.order_changed) parts.push('rows reordered');
  if (t.bytes_only) parts.push('file bytes changed (comments, metadata or formatting), no values');
  if (t.format_a !== t.format_b) parts.push(`format ${t.format_a ?? '-'} -> ${t.format_b ?? '-'}`);
  return `${file}: ${parts.join(', ')}`;
}

/** The headline on H0 for a terminal (vocabulary.ts decides what it states). */
function headline(r: DiffReport): string {
  const hl = h0Headline(r, PLAIN);
  if (hl.case === 'not-measured') return 'H0: not measured in both releases.';
  if (hl.case === 'withheld') return `H0: ${r.blinding.note}. sigma of the difference ${hl.sigmaDiff ?? '—'} km/s/Mpc.`;
  const values = hl.values
    ? `${hl.values.a} -> ${hl.values.b} km/s/Mpc, `
    : `values blinded (ratio b/a ${hl.ratio}; the shift is in blinded km/s/Mpc, the true shift times the common hidden factor), `;
  const sig = hl.spread === 'no-spread' ? 'no statistical spread (a change of choices or of values at fixed noise)' : hl.sigma;
  const sd = hl.sigmaDiff === null ? '' : ` ± ${hl.sigmaDiff}`;
  return `H0: ${values}shift ${hl.shift}${sd} km/s/Mpc (${sig}; naive quadrature sum ${hl.naive ?? '—'})${hl.flagged ? '  [FLAGGED]' : ''}`;
}

function paramRow(p: ParameterShift): string {
  const v = (x: number | null) => (x === null ? (p.blinded ? 'blinded' : '—') : x.toFixed(4));
  const d = p.delta === null ? '—' : signedSig(p.delta);
  return `  ${p.name.padEnd(20)} ${v(p.a).padStart(10)} ${v(p.b).padStart(10)} ${d.padStart(10)} ${(p.sigma_diff === null ? '—' : p.sigma_diff.toPrecision(2)).padStart(9)} ${(p.deterministic ? 'fixed-noise' : sigmaWords(p.delta_sigma, PLAIN)).padStart(12)}${p.flagged ? '  *' : ''}  ${p.unit}`;
}

function systemRow(s: SystemShift): string {
  const v = (x: number | null) => (x === null ? '—' : x.toFixed(3));
  const d = s.delta === null ? '—' : signed(s.delta, 3);
  return `  ${s.id.padEnd(22)} ${v(s.a).padStart(8)} ${v(s.b).padStart(8)} ${d.padStart(8)} ${(s.sigma_diff === null ? '—' : s.sigma_diff.toFixed(3)).padStart(7)} ${(s.deterministic ? 'fixed-noise' : sigmaWords(s.delta_sigma, PLAIN)).padStart(12)}${s.flagged ? '  *' : ''}${s.inputs_changed ? '  (inputs changed)' : ''}`;
}

/** What moved H0: each differing group's Shapley share, the unchanged groups, the total. */
function attributionSection(r: DiffReport): string[] {
  const L = ["What moved H0 (each input group's share of the shift; they add up to it)"];
  if (r.attribution.length === 0) return [...L, `  ${r.attribution_note ?? 'no attribution'}`];
  for (const e of r.attribution) {
    if (!e.differs) continue;
    const rows = e.rows_sum === null ? '' : `   (sum of its row estimates ${signed(e.rows_sum, 3)})`;
    L.push(
      `  ${e.group.padEnd(16)} ${signed(e.delta_h0, 3).padStart(8)} km/s/Mpc${e.fraction === null ? '' : `  ${(100 * e.fraction).toFixed(0).padStart(4)} %`}${rows}`,
    );
  }
  const unchanged = r.attribution.filter((e) => !e.differs).map((e) => e.group);
  if (unchanged.length) L.push(`  unchanged (0): ${unchanged.join(', ')}`);
  L.push(`  ${'total'.padEnd(16)} ${signed(r.attribution_detail!.total, 3).padStart(8)} km/s/Mpc`);
  return L;
}

/** The rows that moved H0 most (empty when none was estimated). */
function topRowsSection(r: DiffReport): string[] {
  if (!r.top_objects.length) return [];
  const L = ['', `Rows that moved H0 most (estimates, km/s/Mpc)`];
  for (const o of r.top_objects) {
    const what = o.level === 'system' ? `${o.rows} rows of ${o.id}` : `${o.id}${o.system ? ` (${o.system})` : ''}`;
    const cols = o.columns.length ? ` ${o.columns.join(', ')}` : '';
    L.push(`  ${signed(o.delta_h0, 3).padStart(8)}  ${o.table}: ${what} ${o.status}${cols}`);
  }
  if (r.objects_not_estimated) L.push(`  (${r.objects_not_estimated} changed rows without an estimate)`);
  return L;
}

/** " (a: default)", " (b: default)" after an analysis choice left to its default on that side. */
function defaultsNote(c: { set_a: boolean; set_b: boolean }): string {
  return `${!c.set_a ? ' (a: default)' : ''}${!c.set_b ? ' (b: default)' : ''}`;
}

/** Every changed table with its columns and ids, then the analysis choices, variants, release.yaml and notes. */
function inputSection(r: DiffReport): string[] {
  const L = ['Input changes'];
  const changedTables = r.inputs.filter(tableTouched);
  if (changedTables.length === 0) L.push('  no table changed');
  for (const t of changedTables) {
    L.push(`  ${tableLine(t)}`);
    for (const c of t.columns) L.push(`    ${columnLine(t, c)}`);
    for (const c of t.column_changes) L.push(`    column: ${c.detail}`);
    if (t.added_ids.length) L.push(`    added: ${t.added_ids.join(', ')}${t.added > t.added_ids.length ? `, ... (${t.added - t.added_ids.length} more)` : ''}`);
    if (t.removed_ids.length)
      L.push(`    removed: ${t.removed_ids.join(', ')}${t.removed > t.removed_ids.length ? `, ... (${t.removed - t.removed_ids.length} more)` : ''}`);
  }
  const ic = r.input_changes;
  for (const c of ic.analysis)
    L.push(`  analysis: ${c.key} ${JSON.stringify(c.a)} -> ${JSON.stringify(c.b)}${unitSuffix(ANALYSIS_UNITS[c.key])}${defaultsNote(c)}`);
  for (const key of ic.analysis_set_only) L.push(`  analysis: ${key} has the same value, set in release.yaml on one side and left to its default on the other`);
  for (const v of ic.variants) L.push(`  variant ${v.kind}: "${v.name}"${v.kind === 'changed' ? ` ${JSON.stringify(v.a)} -> ${JSON.stringify(v.b)}` : ''}`);
  for (const m of ic.manifest) L.push(`  release.yaml ${m.field}: ${JSON.stringify(m.a)} -> ${JSON.stringify(m.b)}`);
  if (ic.notes_changed) L.push('  notes.md changed');
  if (ic.cells.length) {
    L.push('');
    L.push(`Changed values (${Math.min(TEXT_CELLS_MAX, ic.cells.length)} of ${ic.cells.length}; all in --format json)`);
    for (const c of ic.cells.slice(0, TEXT_CELLS_MAX)) {
      L.push(`  ${c.table}:${c.line_b} ${c.id} ${c.column}: ${plain(c.a)} -> ${plain(c.b)}${unitSuffix(c.unit)}`);
    }
  }
  return L;
}

/** Parameters, systems' moduli (flagged first, then by |delta / sigma|) and the fit's quantities. */
function resultSections(r: DiffReport): string[] {
  const L: string[] = [];
  L.push(`Parameters (sigma: of the difference; * flagged: |delta| > ${r.flag_threshold_sigma} sigma and >= ${r.flag_negligible_fraction} of its own error)`);
  L.push(`  ${'name'.padEnd(20)} ${'a'.padStart(10)} ${'b'.padStart(10)} ${'delta'.padStart(10)} ${'sigma'.padStart(9)} ${'delta/sigma'.padStart(12)}`);
  for (const p of r.parameters) L.push(paramRow(p));
  L.push('');
  const sys = [...r.systems].sort((x, y) => Number(y.flagged) - Number(x.flagged) || Math.abs(y.delta_sigma ?? 0) - Math.abs(x.delta_sigma ?? 0));
  L.push(`System distance moduli (mag)${sys.length > TEXT_SYSTEMS_MAX ? `, ${TEXT_SYSTEMS_MAX} of ${sys.length}` : ''}`);
  L.push(`  ${'system'.padEnd(22)} ${'a'.padStart(8)} ${'b'.padStart(8)} ${'delta'.padStart(8)} ${'sigma'.padStart(7)} ${'delta/sigma'.padStart(12)}`);
  for (const s of sys.filter((x) => x.a !== null || x.b !== null).slice(0, TEXT_SYSTEMS_MAX)) L.push(systemRow(s));
  L.push('');
  L.push('Fit');
  for (const f of r.fit) L.push(`  ${f.name.padEnd(20)} ${String(round(f.a)).padStart(10)} -> ${String(round(f.b)).padStart(10)}`);
  return L;
}

/** How the numbers were estimated, and the link to the report's page. */
function methodSection(r: DiffReport): string[] {
  const L = ['How the uncertainty of a difference is estimated', wrap(r.sigma_method, 2)];
  if (r.attribution_detail) L.push('How the shift is attributed', wrap(r.attribution_detail.method, 2));
  if (r.top_objects.length) L.push('How the rows are estimated', wrap(r.top_objects_method, 2));
  if (r.links) {
    const rb = r.releases.b;
    L.push('', `Report: ${r.links.page}${r.links.matches_report ? '' : ` (compares ${rb.id} with its previous release ${rb.previous ?? '(none)'})`}`);
  }
  return L;
}

/** Plain-text report for a terminal. */
export function renderText(r: DiffReport): string {
  const ra = r.releases.a;
  const rb = r.releases.b;
  const L: string[] = [`Comparison: ${ra.id} (${ra.title}, ${ra.date}) -> ${rb.id} (${rb.title}, ${rb.date})`];
  if (r.blinding.a || r.blinding.b) L.push(`Blinding: ${r.blinding.note}.`);
  if (r.identical) L.push('The two releases have identical inputs and analysis choices: nothing changed.');
  L.push('', headline(r), '');
  L.push(...attributionSection(r));
  L.push(...topRowsSection(r));
  L.push('', ...inputSection(r));
  L.push('', ...resultSections(r));
  L.push('', ...methodSection(r));
  return L.join('\n') + '\n';
}

function round(x: number): number {
  return Number.isInteger(x) ? x : Number(x.toPrecision(5));
}

function wrap(text: string, indent: number, width = 100): string {
  const words = text.split(/\s+/);
  const lines: string[] = [];
  let line = '';
  for (const w of words) {
    if (line && line.length + 1 + w.length > width - indent) {
      lines.push(line);
      line = w;
    } else line = line ? `${line} ${w}` : w;
  }
  if (line) lines.push(line);
  return lines.map((l) => `${' '.repeat(indent)}${l}`).join('\n');
}

/** One input change of the message's list, in the order of vocabulary.ts's ranking. */
function messageInputChange(x: RankedInputChange): string {
  if (x.kind === 'analysis') {
    const c = x.change;
    return `\`analysis\`: ${c.key} ${JSON.stringify(c.a)} → ${JSON.stringify(c.b)}${unitSuffix(ANALYSIS_UNITS[c.key])}`;
  }
  if (x.kind === 'variant') return `variant ${x.change.kind}: ${mdData(x.change.name)}`;
  const t = x.change;
  const parts: string[] = [];
  if (t.changed) parts.push(`${t.changed} ${t.noun} changed`);
  if (t.added) parts.push(`${t.added} added`);
  if (t.removed) parts.push(`${t.removed} removed`);
  const col = [...t.columns].sort((p, q) => q.changed - p.changed)[0];
  if (col) parts.push(columnLine(t, col, mdData));
  for (const c of t.column_changes) parts.push(mdData(c.detail));
  if (t.bytes_only) parts.push('file changed, no values');
  return `\`${t.table}\`: ${parts.join('; ')}`;
}

/**
 * Absolute link to a row that moved H0, on its system's page of the report (src/layout/anchors.ts):
 * a removed row is on the earlier release's pages, any other on the later one's; a system-level
 * estimate links the system's page. Null without report links or without a system.
 */
function objectUrl(r: DiffReport, o: ObjectInfluence): string | null {
  if (!r.links || o.system === null) return null;
  // The comparison page is <site><base>releases/<b>/compare/: the site's root is three folders up.
  const root = new URL('../../../', r.links.page);
  const rel = o.status === 'removed' ? r.a : r.b;
  return new URL(o.level === 'system' ? systemPagePath(rel, o.system) : objectLink(rel, o.system, o.id), root).href;
}

/** The message's first line: the headline on H0 (vocabulary.ts decides what it states). */
function messageHeadline(r: DiffReport): string {
  const title = `Release ${mdData(r.b)} compared with ${mdData(r.a)}`;
  if (r.identical) return `**${title}: identical inputs and analysis choices; nothing changed.**`;
  const hl = h0Headline(r, MESSAGE);
  if (hl.case === 'not-measured') return `**${title}: H0 is not measured in both releases.**`;
  if (hl.case === 'withheld') return `**${title}: H0 shift withheld (blinding).** ${r.blinding.note}.`;
  const sig =
    hl.spread === 'no-spread'
      ? 'with no statistical spread: a change of choices, or of values at fixed noise'
      : hl.spread === 'sigma'
        ? `${hl.sigma} of the difference (σ = ${hl.sigmaDiff} km/s/Mpc)`
        : 'with no estimate of the uncertainty of the difference';
  const values = hl.values
    ? ` from ${hl.values.a} to ${hl.values.b} km/s/Mpc`
    : ` (BLINDED alike: values hidden; a shift of blinded values, i.e. the true shift times the common hidden factor; ratio b/a = ${hl.ratio})`;
  return `**${title}: H0 moved by ${hl.shift} km/s/Mpc**${values}, ${sig}.${hl.flagged ? ' Flagged.' : ''}`;
}

/** Markdown message ready to paste: headline, top contributions, largest input changes, links. */
export function renderMarkdown(r: DiffReport): string {
  const L: string[] = [messageHeadline(r)];
  const h = r.h0;
  const { moving, cancelling } = rankedContributions(r);
  const top = moving.slice(0, MARKDOWN_CONTRIBUTIONS_MAX);
  if (top.length && h && h.delta !== null) {
    L.push('');
    L.push(cancelling ? 'What moved it (partly cancelling):' : 'What moved it:');
    for (const e of top)
      L.push(
        `- ${GROUP_NAME_IN_TEXT[e.group]}: ${signed(e.delta_h0, 2)} km/s/Mpc${cancelling || e.fraction === null ? '' : ` (${(100 * e.fraction).toFixed(0)} %)`}`,
      );
    const objs = r.top_objects.slice(0, MARKDOWN_OBJECTS_MAX);
    if (objs.length) {
      const named = (o: ObjectInfluence) => {
        const text = o.level === 'system' ? `${mdData(o.id)} (${o.rows} rows)` : mdData(o.id);
        const url = objectUrl(r, o);
        return url === null ? text : `[${text}](${url})`;
      };
      L.push(`- largest single rows: ${objs.map((o) => `${named(o)} ${signed(o.delta_h0, 3)}`).join(', ')}`);
    }
  } else if (r.attribution_note && !r.identical && h && h.delta !== null) {
    L.push('');
    L.push(`Attribution: ${r.attribution_note}.`);
  }
  const inputs = rankedInputChanges(r).slice(0, MARKDOWN_INPUTS_MAX).map(messageInputChange);
  if (inputs.length) {
    L.push('');
    L.push('Largest input changes:');
    for (const t of inputs) L.push(`- ${t}`);
  }
  const flagged = r.parameters.filter((p) => p.flagged && p.delta !== null).map((p) => p.name);
  if (flagged.length) {
    L.push('');
    L.push(`Parameters shifted by more than ${r.flag_threshold_sigma} σ of the difference: ${flagged.join(', ')}.`);
  }
  // a withheld shift already says why in the headline
  if ((r.blinding.a || r.blinding.b) && !(h && h.delta === null)) {
    L.push('');
    L.push(`BLINDED: ${r.blinding.note}.`);
  }
  L.push('');
  L.push("σ of a difference: each row's error propagated through both fits, shared rows counted once (identical data → 0; nested samples → √(σa² − σb²)).");
  if (r.links) {
    L.push('');
    const figs = Object.entries(r.links.figures)
      .map(([k, url]) => `[${k}](${url})`)
      .join(' · ');
    L.push(
      `[Comparison page](${r.links.page})${r.links.matches_report ? '' : ` (it compares ${r.b} with ${r.releases.b.previous ?? 'no earlier release'})`}${figs ? ` · Figures: ${figs}` : ''}`,
    );
  }
  L.push('');
  L.push('_Internal results for collaboration review; not for citation._');
  return L.join('\n') + '\n';
}
