/**
 * The one vocabulary of a comparison, shared by the command line (render.ts: the terminal text
 * and the message to paste) and the report's comparison page (src/report/compare/view.ts), so
 * that the two cannot drift: how a signed number and a shift in sigma are written, what the
 * headline on H0 states (which case, which numbers, at what precision, the sigma clause, the
 * flag), the order of the input groups that moved H0 and the ranking of the input changes.
 * How the text is set (plain signs for a terminal, typographic ones for the page) is a
 * parameter, the Typography, not a second copy. Each output sets these facts in its own frame
 * (a terminal line, a sentence of the message, a sentence of the page).
 */
import { tableTouched } from './inputs.ts';
import type { AnalysisChange, AttributionEntry, DiffReport, GroupName, TableChange, VariantChange } from './types.ts';

/** How a comparison's text is set. */
export interface Typography {
  /** Sign of a negative number. */
  minus: string;
  /**
   * A number that rounds to zero keeps the sign of its exact value ("+0.00", "-0.00", so a
   * terminal still tells the direction), or is written as a bare zero ("0.00", on the page).
   */
  zeroKeepsSign: boolean;
  /** Name of the unit of a shift measured in the uncertainty of the difference. */
  sigma: string;
}

/** For a terminal: ASCII signs and the word "sigma". */
export const PLAIN: Typography = { minus: '-', zeroKeepsSign: true, sigma: 'sigma' };
/**
 * For the message to paste (Markdown, for email or chat): the sigma sign, with the ASCII
 * hyphen-minus of the plain text for numbers (what a reader may copy back into a terminal).
 */
export const MESSAGE: Typography = { minus: '-', zeroKeepsSign: true, sigma: 'σ' };
/** For the report's pages: the minus sign (U+2212) and the sigma sign. */
export const TYPOGRAPHIC: Typography = { minus: '\u2212', zeroKeepsSign: false, sigma: 'σ' };

/** x with `digits` decimals, the typography's minus, never "-0" ("NaN", "∞" for the non-finite). */
export function numberText(x: number, digits: number, t: Typography): string {
  if (!Number.isFinite(x)) return Number.isNaN(x) ? 'NaN' : x > 0 ? '∞' : `${t.minus}∞`;
  const s = x.toFixed(digits);
  if (/^-0(?:\.0+)?$/.test(s)) return s.slice(1);
  return s.startsWith('-') ? t.minus + s.slice(1) : s;
}

/** x with a sign and `digits` decimals ("+0.12", "-0.03"); an exact zero is "0.00" (and, see zeroKeepsSign, a rounded one). */
export function signedNumber(x: number, digits: number, t: Typography): string {
  if (t.zeroKeepsSign) {
    if (x === 0) return (0).toFixed(digits);
    const s = x.toFixed(digits);
    return x > 0 ? `+${s}` : s.startsWith('-') ? t.minus + s.slice(1) : `${t.minus}${s}`;
  }
  if (x === 0 || Number(x.toFixed(digits)) === 0) return numberText(0, digits, t);
  return x > 0 ? `+${numberText(x, digits, t)}` : numberText(x, digits, t);
}

/** A shift in units of the uncertainty of the difference, one decimal: "+1.3 sigma", "+1.3 σ"; "—" when there is none. */
export function sigmaWords(x: number | null, t: Typography): string {
  return x === null ? '—' : `${signedNumber(x, 1, t)} ${t.sigma}`;
}

/** Decimals of H0, its shift and the sigma of the difference in every headline (km/s/Mpc). */
export const H0_DECIMALS = 2;
/** Decimals of the H0 ratio b/a shown while blinded. */
export const RATIO_DECIMALS = 5;

/**
 * What a headline on H0 states, the same for every output: one of three cases, and for a
 * shift the numbers already written in the typography. (Identical releases are said apart by
 * each output, before or instead of the headline: DiffReport.identical.)
 */
export type H0Headline =
  | { case: 'not-measured' }
  /** The shift is withheld (blinding); the sigma of the difference may still be given. */
  | { case: 'withheld'; sigmaDiff: string | null }
  | {
      case: 'moved';
      /** H0 of a and b, or null while blinded (then `ratio`, b/a, is given instead). */
      values: { a: string; b: string } | null;
      ratio: string | null;
      shift: string;
      /**
       * 'sigma': the shift in sigma of the difference is `sigma`; 'no-spread': the difference
       * has none (a change of choices, or of values at fixed noise); 'unknown': no sigma.
       */
      spread: 'sigma' | 'no-spread' | 'unknown';
      sigma: string;
      sigmaDiff: string | null;
      naive: string | null;
      flagged: boolean;
    };

/** The headline's facts for comparison `r`, numbers set in typography `t`. */
export function h0Headline(r: DiffReport, t: Typography): H0Headline {
  const h = r.h0;
  const two = (x: number | null) => (x === null ? null : numberText(x, H0_DECIMALS, t));
  if (!h) return { case: 'not-measured' };
  if (h.delta === null) return { case: 'withheld', sigmaDiff: two(h.sigma_diff) };
  return {
    case: 'moved',
    values: h.a !== null && h.b !== null ? { a: numberText(h.a, H0_DECIMALS, t), b: numberText(h.b, H0_DECIMALS, t) } : null,
    ratio: h.ratio === null ? null : numberText(h.ratio, RATIO_DECIMALS, t),
    shift: signedNumber(h.delta, H0_DECIMALS, t),
    spread: h.deterministic ? 'no-spread' : h.sigma_diff === null ? 'unknown' : 'sigma',
    sigma: sigmaWords(h.delta_sigma, t),
    sigmaDiff: two(h.sigma_diff),
    naive: two(h.sigma_naive),
    flagged: h.flagged,
  };
}

/** The input groups as titles (table rows, figure labels on the page; the JSON keeps the keys). */
export const GROUP_TITLE: Record<GroupName, string> = {
  parallax: 'Parallaxes',
  main_sequence: 'Main-sequence photometry',
  cepheids: 'Cepheids',
  sn_calibrators: 'Calibrator supernovae',
  sn_hubble_flow: 'Hubble-flow supernovae',
  systems: 'Systems table',
  analysis: 'Analysis choices',
};

/**
 * The input groups inside a sentence of the message to paste. (Its "supernova calibrators"
 * and the page's "Calibrator supernovae" name one group in two ways; both are kept here,
 * side by side, as long as the published words may not change.)
 */
export const GROUP_NAME_IN_TEXT: Record<GroupName, string> = {
  parallax: 'parallaxes',
  main_sequence: 'main-sequence photometry',
  cepheids: 'Cepheids',
  sn_calibrators: 'supernova calibrators',
  sn_hubble_flow: 'Hubble-flow supernovae',
  systems: 'systems table',
  analysis: 'analysis choices',
};

/**
 * The groups that differ, largest contribution first, and whether they pull in opposite
 * directions: then shares of the total (270 % and -170 %) read as errors and are not given.
 */
export function rankedContributions(r: Pick<DiffReport, 'attribution'>): { moving: AttributionEntry[]; cancelling: boolean } {
  const moving = r.attribution.filter((e) => e.differs).sort((x, y) => Math.abs(y.delta_h0) - Math.abs(x.delta_h0));
  return { moving, cancelling: moving.some((e) => Math.sign(e.delta_h0) !== Math.sign(moving[0]!.delta_h0)) };
}

export type RankedInputChange =
  { kind: 'table'; change: TableChange } | { kind: 'analysis'; change: AnalysisChange } | { kind: 'variant'; change: VariantChange };

/**
 * A column added, removed or renamed touches every row of its table: it ranks above any count
 * of rows (and below a changed analysis choice).
 */
const COLUMN_CHANGE_WEIGHT = 1e6;

/**
 * The input changes, largest first: a changed analysis choice (it moves every fit), then the
 * tables, a table whose columns changed first, then by the rows added, removed and changed;
 * then the systematic variants added, removed or changed (they move no baseline value). Ties
 * keep the order of the report (tables in their order, then the choices, then the variants).
 */
export function rankedInputChanges(r: Pick<DiffReport, 'inputs' | 'input_changes'>): RankedInputChange[] {
  const out: { weight: number; item: RankedInputChange }[] = [];
  for (const t of r.inputs.filter(tableTouched))
    out.push({ weight: t.added + t.removed + t.changed + (t.column_changes.length ? COLUMN_CHANGE_WEIGHT : 0), item: { kind: 'table', change: t } });
  for (const c of r.input_changes.analysis) out.push({ weight: Infinity, item: { kind: 'analysis', change: c } });
  for (const v of r.input_changes.variants) out.push({ weight: 0, item: { kind: 'variant', change: v } });
  return out.sort((x, y) => y.weight - x.weight).map((x) => x.item);
}
