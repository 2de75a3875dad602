/**
 * release.yaml: the manifest (id, title, date, previous, blinded) and the
 * analysis choices with their systematic variants. Only known keys are
 * accepted: an unknown key is an error that suggests the nearest known one,
 * because a silently ignored key can change or unblind a result. Problems name
 * the line (the `yaml` package's LineCounter gives node positions).
 */
import { readFileSync } from 'node:fs';
import { isMap, isScalar, isSeq, LineCounter, parseDocument, type Node as YamlNode, type Pair, type YAMLMap } from 'yaml';
import {
  ANALYSIS_KEYS,
  DEFAULT_ANALYSIS,
  MANIFEST_KEYS,
  withOverrides,
  type AnalysisChoices,
  type AnalysisKey,
  type SystematicVariant,
} from '../types/analysis.ts';
import type { ReleaseManifest } from '../types/release.ts';
import type { Problem } from './issues.ts';
import { shown } from './issues.ts';
import { nearest } from './suggest.ts';
import { CONTROL_CHARACTER, decodeUtf8 } from './text.ts';
import { yamlProblemText } from './yaml-errors.ts';

export interface ManifestRead {
  /** Present when every manifest key is valid. */
  manifest?: ReleaseManifest;
  analysis: AnalysisChoices;
  analysisKeysSet: AnalysisKey[];
  variants: SystematicVariant[];
  problems: Problem[];
}

// ---- value rules for analysis keys -------------------------------------------------------

type Rule = (v: unknown) => { ok: true } | { ok: false; expected: string };

function numberRule(opts: { min?: number; greaterThan?: number; integer?: boolean; max?: number } = {}): Rule {
  const parts = ['a finite number'];
  if (opts.integer) parts[0] = 'an integer';
  if (opts.min !== undefined && opts.max !== undefined) parts.push(`from ${opts.min} to ${opts.max}`);
  else if (opts.min !== undefined) parts.push(`>= ${opts.min}`);
  if (opts.greaterThan !== undefined) parts.push(`> ${opts.greaterThan}`);
  const expected = parts.join(' ');
  return (v) => {
    const ok =
      typeof v === 'number' &&
      Number.isFinite(v) &&
      (!opts.integer || Number.isInteger(v)) &&
      (opts.min === undefined || v >= opts.min) &&
      (opts.max === undefined || v <= opts.max) &&
      (opts.greaterThan === undefined || v > opts.greaterThan);
    return ok ? { ok: true } : { ok: false, expected };
  };
}

function nullable(rule: Rule): Rule {
  return (v) => {
    if (v === null) return { ok: true };
    const r = rule(v);
    return r.ok ? r : { ok: false, expected: `${r.expected}, or null` };
  };
}

const booleanRule: Rule = (v) => (typeof v === 'boolean' ? { ok: true } : { ok: false, expected: 'true or false' });

const increasingPair: Rule = (v) =>
  Array.isArray(v) && v.length === 2 && v.every((x) => typeof x === 'number' && Number.isFinite(x)) && v[0] < v[1]
    ? { ok: true }
    : { ok: false, expected: 'a list of two finite numbers, the first smaller, e.g. [0.4, 1.2]' };

/** One rule per analysis key; the bounds are what the methods need to make sense. */
export const ANALYSIS_RULES: Readonly<Record<AnalysisKey, Rule>> = {
  parallax_zero_point: numberRule(),
  parallax_zero_point_err: numberRule({ min: 0 }),
  parallax_floor: numberRule({ min: 0 }),
  r_v: numberRule({ greaterThan: 0 }),
  ms_color_range: increasingPair,
  ms_poly_degree: numberRule({ integer: true, min: 1, max: 6 }),
  ms_feh_slope: numberRule(),
  wesenheit_r: numberRule(),
  pl_pivot_logp: numberRule(),
  fit_pl_metallicity: booleanRule,
  sn_alpha: nullable(numberRule()),
  sn_beta: nullable(numberRule()),
  sn_mass_step_logmass: nullable(numberRule()),
  z_min: numberRule({ min: 0 }),
  z_max: numberRule({ greaterThan: 0 }),
  sigma_pec: numberRule({ min: 0 }),
  q0: numberRule(),
  j0: numberRule(),
  clip_sigma: nullable(numberRule({ greaterThan: 0 })),
};

const VARIANTS_KEY = 'variants';
const VARIANT_NAME_KEY = 'name';

// ---- helpers -------------------------------------------------------------------------------

/**
 * A release date as YYYY-MM-DD. YAML 1.2 (the `yaml` package's default) reads
 * a bare date as text; a YAML 1.1 reader gives a Date at midnight UTC. Both
 * are accepted; anything else (a time of day, an impossible day) is not.
 */
export function normaliseDate(value: unknown): string | undefined {
  let s: string | undefined;
  if (value instanceof Date) {
    if (Number.isNaN(value.getTime())) return undefined;
    const iso = value.toISOString();
    if (!iso.endsWith('T00:00:00.000Z')) return undefined;
    s = iso.slice(0, 10);
  } else if (typeof value === 'string') s = value.trim();
  if (s === undefined || !/^\d{4}-\d{2}-\d{2}$/.test(s)) return undefined;
  const [y, m, d] = s.split('-').map(Number);
  const t = new Date(Date.UTC(y, m - 1, d));
  return t.getUTCFullYear() === y && t.getUTCMonth() === m - 1 && t.getUTCDate() === d ? s : undefined;
}

function unknownKeyProblem(key: string, known: readonly string[], line: number, where: string): Problem {
  const near = nearest(key, known);
  return {
    code: 'unknown-key',
    line,
    column: where ? `${where}.${key}` : key,
    message: `unknown key${where ? ` in ${where}` : ''}`,
    expected: 'one of ' + known.join(', '),
    found: JSON.stringify(key),
    hint: near ? `did you mean "${near}"?` : 'an unknown key is refused rather than ignored',
  };
}

function jsOf(node: unknown): unknown {
  if (node === null || node === undefined) return null;
  if (isScalar(node)) return node.value;
  if (typeof node === 'object' && node !== null && 'toJSON' in node) return (node as { toJSON(): unknown }).toJSON();
  return node;
}

// ---- the reader ----------------------------------------------------------------------------

type LineOf = (node: unknown, fallback?: number) => number | undefined;

/** The top-level keys of release.yaml and how to report a problem at one of them. */
interface ManifestKeys {
  pairs: Map<string, Pair>;
  bad(key: string, code: string, message: string, expected: string, found: string, hint?: string): void;
  missing(key: string, expected: string): void;
}

function manifestKeys(root: YAMLMap, lineOf: LineOf, problems: Problem[]): ManifestKeys {
  const pairs = new Map<string, Pair>();
  for (const pair of root.items) {
    const key = isScalar(pair.key) ? String(pair.key.value) : String(jsOf(pair.key));
    if (!(MANIFEST_KEYS as readonly string[]).includes(key)) {
      problems.push(unknownKeyProblem(key, MANIFEST_KEYS, lineOf(pair.key, 1)!, ''));
      continue;
    }
    pairs.set(key, pair);
  }
  const valueLine = (key: string): number | undefined => {
    const p = pairs.get(key);
    return p ? (lineOf(p.value) ?? lineOf(p.key)) : undefined;
  };
  return {
    pairs,
    bad: (key, code, message, expected, found, hint) => {
      problems.push({ code, line: valueLine(key), column: key, message, expected, found, hint });
    },
    missing: (key, expected) => {
      problems.push({ code: 'missing-key', column: key, message: `release.yaml has no "${key}"`, expected, found: 'no such key' });
    },
  };
}

/** id: a quoted string equal to the folder name. */
function readId(k: ManifestKeys, folderName: string): string | undefined {
  const idPair = k.pairs.get('id');
  if (!idPair) {
    k.missing('id', `id: "${folderName}"`);
    return undefined;
  }
  const node = idPair.value;
  const quoted = isScalar(node) && (node.type === 'QUOTE_DOUBLE' || node.type === 'QUOTE_SINGLE');
  const value = jsOf(node);
  if (typeof value !== 'string' || !quoted) {
    k.bad(
      'id',
      'bad-id',
      'the release id must be a quoted string',
      `"${folderName}" (in quotes)`,
      shown(value),
      `unquoted, 2026.10 would be read as the number 2026.1; write id: "${folderName}"`,
    );
  } else if (value !== folderName) {
    k.bad(
      'id',
      'id-mismatch',
      'the release id differs from the name of its folder',
      JSON.stringify(folderName),
      JSON.stringify(value),
      'rename the folder or fix the id',
    );
  } else return value;
  return undefined;
}

/** title: non-empty printable text. */
function readTitle(k: ManifestKeys): string | undefined {
  const titlePair = k.pairs.get('title');
  if (!titlePair) {
    k.missing('title', 'a title');
    return undefined;
  }
  const value = jsOf(titlePair.value);
  if (typeof value !== 'string' || value.trim() === '')
    k.bad('title', 'bad-title', 'the title must be non-empty text', 'text', shown(value), 'put the title in quotes');
  else if (CONTROL_CHARACTER.test(value.trim()))
    k.bad('title', 'control-character', 'the title holds a control character', 'printable text on one line', shown(value));
  else return value;
  return undefined;
}

/** date: a calendar date YYYY-MM-DD. */
function readDate(k: ManifestKeys): string | undefined {
  const datePair = k.pairs.get('date');
  if (!datePair) {
    k.missing('date', 'a date YYYY-MM-DD');
    return undefined;
  }
  const value = jsOf(datePair.value);
  const date = normaliseDate(value);
  if (date === undefined) k.bad('date', 'bad-date', 'the date is not a calendar date written YYYY-MM-DD', 'a date such as 2026-06-15', shown(value));
  return date;
}

/** previous: the quoted id of an earlier release, or null (also when absent); undefined when wrong. */
function readPrevious(k: ManifestKeys, folderName: string): string | null | undefined {
  const previousPair = k.pairs.get('previous');
  if (!previousPair) return null;
  const value = jsOf(previousPair.value);
  if (value === null) return null;
  if (typeof value !== 'string' || value.trim() === '') {
    k.bad(
      'previous',
      'bad-previous',
      'previous must be the id of an earlier release, as a quoted string, or null',
      'a quoted id such as "2026.1", or null',
      shown(value),
      'quote the id',
    );
    return undefined;
  }
  if (value === folderName) {
    k.bad('previous', 'bad-previous', 'a release cannot be its own previous release', 'the id of an earlier release', JSON.stringify(value));
    return undefined;
  }
  return value;
}

/** blinded: true or false (false when absent); undefined when wrong. */
function readBlinded(k: ManifestKeys): boolean | undefined {
  const blindedPair = k.pairs.get('blinded');
  if (!blindedPair) return false;
  const value = jsOf(blindedPair.value);
  if (typeof value !== 'boolean') {
    k.bad('blinded', 'bad-value', 'blinded must be true or false', 'true or false', shown(value));
    return undefined;
  }
  return value;
}

/**
 * Parse release.yaml text. `folderName` is the name of the release folder,
 * which the id must equal.
 */
export function parseManifest(text: string, folderName: string): ManifestRead {
  const problems: Problem[] = [];
  const result: ManifestRead = {
    analysis: { ...DEFAULT_ANALYSIS, ms_color_range: [...DEFAULT_ANALYSIS.ms_color_range] },
    analysisKeysSet: [],
    variants: [],
    problems,
  };
  const lineCounter = new LineCounter();
  const doc = parseDocument(text, { lineCounter, uniqueKeys: true, prettyErrors: true });
  const lineOf: LineOf = (node, fallback) => {
    const range = (node as YamlNode | null | undefined)?.range;
    return range ? lineCounter.linePos(range[0]).line : fallback;
  };
  if (doc.errors.length > 0) {
    for (const e of doc.errors) {
      problems.push({ code: 'bad-yaml', line: e.linePos?.[0].line, message: `not valid YAML: ${yamlProblemText(e.message)}` });
    }
    return result;
  }
  const root = doc.contents;
  if (!isMap(root)) {
    problems.push({
      code: 'bad-manifest',
      line: lineOf(root, 1),
      message: 'release.yaml must be a mapping of keys to values',
      expected: 'keys ' + MANIFEST_KEYS.join(', '),
      found: root === null ? 'an empty file' : shown(jsOf(root)),
    });
    return result;
  }

  const k = manifestKeys(root, lineOf, problems);
  // in this order, so that the problems are listed in the order of the keys of the format
  const id = readId(k, folderName);
  const title = readTitle(k);
  const date = readDate(k);
  const previous = readPrevious(k, folderName);
  const blinded = readBlinded(k);

  const analysisPair = k.pairs.get('analysis');
  if (analysisPair && analysisPair.value !== null && !(isScalar(analysisPair.value) && analysisPair.value.value === null)) {
    if (!isMap(analysisPair.value)) {
      k.bad('analysis', 'bad-value', 'analysis must be a mapping of analysis keys to values', 'a mapping', shown(jsOf(analysisPair.value)));
    } else readAnalysis(analysisPair.value, result, lineOf);
  }

  if (id !== undefined && title !== undefined && date !== undefined && previous !== undefined && blinded !== undefined) {
    result.manifest = { id, title, date, previous, blinded };
  }
  return result;
}

/**
 * The baseline values of the analysis block into `result` (problems added); whether they are
 * sound, and where the variants list is.
 */
function readAnalysisValues(map: YAMLMap, result: ManifestRead, lineOf: LineOf): { valid: boolean; variantsNode: unknown; variantsLine: number | undefined } {
  const problems = result.problems;
  const knownHere = [...ANALYSIS_KEYS, VARIANTS_KEY];
  const lines: Partial<Record<AnalysisKey, number>> = {};
  let variantsNode: unknown;
  let variantsLine: number | undefined;
  let valid = true;
  for (const pair of map.items) {
    const key = isScalar(pair.key) ? String(pair.key.value) : String(jsOf(pair.key));
    const keyLine = lineOf(pair.key, 1)!;
    if (key === VARIANTS_KEY) {
      variantsNode = pair.value;
      variantsLine = keyLine;
      continue;
    }
    if (!(ANALYSIS_KEYS as readonly string[]).includes(key)) {
      problems.push(unknownKeyProblem(key, knownHere, keyLine, 'analysis'));
      continue;
    }
    const k = key as AnalysisKey;
    const value = jsOf(pair.value);
    const rule = ANALYSIS_RULES[k](value);
    if (!rule.ok) {
      valid = false;
      problems.push({
        code: 'bad-analysis-value',
        line: lineOf(pair.value, keyLine),
        column: `analysis.${k}`,
        message: `invalid value for ${k}`,
        expected: rule.expected,
        found: shown(value),
      });
      continue;
    }
    (result.analysis as unknown as Record<string, unknown>)[k] = value;
    result.analysisKeysSet.push(k);
    lines[k] = keyLine;
  }
  // A variant is checked against the baseline only when the baseline itself is sound.
  if (valid) valid = crossCheck(result.analysis, lines.z_max ?? lines.z_min, 'analysis', problems);
  return { valid, variantsNode, variantsLine };
}

/** A variant's name: non-empty printable text, unique among the variants (`names`: name -> line). */
function variantNameProblem(value: unknown, line: number | undefined, where: string, names: Map<string, number>, keyLine: number): Problem | null {
  if (typeof value !== 'string' || value.trim() === '') {
    return { code: 'bad-variant-name', line, column: `${where}.name`, message: 'a variant name must be non-empty text', expected: 'text', found: shown(value) };
  }
  if (CONTROL_CHARACTER.test(value)) {
    return {
      code: 'control-character',
      line,
      column: `${where}.name`,
      message: 'a variant name holds a control character',
      expected: 'printable text on one line',
      found: shown(value),
    };
  }
  const first = names.get(value);
  if (first !== undefined) {
    return {
      code: 'duplicate-variant',
      line,
      column: `${where}.name`,
      message: 'two variants have the same name',
      expected: 'unique variant names',
      found: `${JSON.stringify(value)} (also at line ${first})`,
    };
  }
  names.set(value, keyLine);
  return null;
}

/** A variant otherwise sound that has no name, or overrides nothing (it would repeat the baseline); null when neither. */
function incompleteVariant(name: string | undefined, overrideCount: number, itemLine: number, where: string): Problem | null {
  if (name === undefined) {
    return { code: 'bad-variant-name', line: itemLine, column: `${where}.name`, message: 'a variant has no name', expected: 'name: <text>', found: 'no name' };
  }
  if (overrideCount === 0) {
    return {
      code: 'empty-variant',
      line: itemLine,
      column: where,
      message: 'the variant overrides no analysis key, so it would repeat the baseline',
      expected: 'at least one analysis key',
      found: 'only a name',
    };
  }
  return null;
}

/** One entry of the variants list: its name and overrides when sound (problems added otherwise). */
function readVariant(
  item: unknown,
  i: number,
  variantsLine: number | undefined,
  names: Map<string, number>,
  problems: Problem[],
  lineOf: LineOf,
): { name: string; overrides: Partial<AnalysisChoices>; overrideLines: Partial<Record<AnalysisKey, number>>; itemLine: number } | null {
  const where = `analysis.variants[${i + 1}]`;
  const itemLine = lineOf(item, variantsLine)!;
  if (!isMap(item)) {
    problems.push({
      code: 'bad-variant',
      line: itemLine,
      column: where,
      message: 'a variant must be a mapping',
      expected: '{ name: ..., <analysis key>: <value> }',
      found: shown(jsOf(item)),
    });
    return null;
  }
  const knownInVariant = [VARIANT_NAME_KEY, ...ANALYSIS_KEYS];
  let name: string | undefined;
  let ok = true;
  const overrides: Partial<AnalysisChoices> = {};
  const overrideLines: Partial<Record<AnalysisKey, number>> = {};
  for (const pair of item.items) {
    const key = isScalar(pair.key) ? String(pair.key.value) : String(jsOf(pair.key));
    const keyLine = lineOf(pair.key, itemLine)!;
    const value = jsOf(pair.value);
    if (key === VARIANT_NAME_KEY) {
      const problem = variantNameProblem(value, lineOf(pair.value, keyLine), where, names, keyLine);
      if (problem) {
        ok = false;
        problems.push(problem);
        // a duplicate name is still the variant's name
        if (problem.code === 'duplicate-variant') name = value as string;
      } else name = value as string;
      continue;
    }
    if (!(ANALYSIS_KEYS as readonly string[]).includes(key)) {
      ok = false;
      problems.push(unknownKeyProblem(key, knownInVariant, keyLine, where));
      continue;
    }
    const k = key as AnalysisKey;
    const rule = ANALYSIS_RULES[k](value);
    if (!rule.ok) {
      ok = false;
      problems.push({
        code: 'bad-analysis-value',
        line: lineOf(pair.value, keyLine),
        column: `${where}.${k}`,
        message: `invalid value for ${k} in a variant`,
        expected: rule.expected,
        found: shown(value),
      });
      continue;
    }
    (overrides as Record<string, unknown>)[k] = value;
    overrideLines[k] = keyLine;
  }
  const incomplete = ok ? incompleteVariant(name, Object.keys(overrides).length, itemLine, where) : null;
  if (incomplete) {
    ok = false;
    problems.push(incomplete);
  }
  return ok ? { name: name!, overrides, overrideLines, itemLine } : null;
}

/** The analysis block: values, then variants; fills `result` and adds problems. */
function readAnalysis(map: YAMLMap, result: ManifestRead, lineOf: LineOf): void {
  const problems = result.problems;
  const { valid, variantsNode, variantsLine } = readAnalysisValues(map, result, lineOf);
  if (variantsNode === undefined || variantsNode === null || (isScalar(variantsNode) && variantsNode.value === null)) return;
  if (!isSeq(variantsNode)) {
    problems.push({
      code: 'bad-variants',
      line: lineOf(variantsNode, variantsLine),
      column: 'analysis.variants',
      message: 'variants must be a list',
      expected: 'a list of { name: ..., <analysis key>: <value> }',
      found: shown(jsOf(variantsNode)),
    });
    return;
  }
  const names = new Map<string, number>();
  variantsNode.items.forEach((item, i) => {
    const variant = readVariant(item, i, variantsLine, names, problems, lineOf);
    if (!variant || !valid) return;
    const where = `analysis.variants[${i + 1}]`;
    const { name, overrides, overrideLines, itemLine } = variant;
    const merged = withOverrides(result.analysis, overrides);
    if (crossCheck(merged, overrideLines.z_min ?? overrideLines.z_max ?? itemLine, where, problems)) {
      result.variants.push({ name, overrides });
    }
  });
}

/** Rules that involve two keys; true when they hold. */
function crossCheck(a: AnalysisChoices, line: number | undefined, where: string, problems: Problem[]): boolean {
  if (!(a.z_min < a.z_max)) {
    problems.push({
      code: 'bad-analysis-value',
      line,
      column: `${where}.z_min`,
      message: 'the Hubble-flow range is empty',
      expected: 'z_min < z_max',
      found: `z_min = ${a.z_min}, z_max = ${a.z_max}`,
    });
    return false;
  }
  return true;
}

/** Read release.yaml from a release folder (read-only). Decoding problems are returned as problems. */
export function readManifestFile(path: string, folderName: string): ManifestRead & { bytes: Uint8Array } {
  return parseManifestBytes(readFileSync(path), folderName);
}

/** release.yaml from its bytes (no file system access). */
export function parseManifestBytes(bytes: Uint8Array, folderName: string): ManifestRead & { bytes: Uint8Array } {
  const decoded = decodeUtf8(bytes);
  if ('problem' in decoded) {
    return {
      analysis: { ...DEFAULT_ANALYSIS, ms_color_range: [...DEFAULT_ANALYSIS.ms_color_range] },
      analysisKeysSet: [],
      variants: [],
      problems: [decoded.problem],
      bytes,
    };
  }
  return { ...parseManifest(decoded.text, folderName), bytes };
}
