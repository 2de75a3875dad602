/**
 * The summary of a recovery (recovery.json, schema rungbook.recovery/1): for every followed
 * quantity, the mean and standard deviation of the pulls and the 1- and 2-sigma coverage, each
 * with its own uncertainty from the number of seeds, and a verdict against stated bounds.
 *
 * It is computed from the seed lines alone, in seed order, so a run split into shards and merged
 * gives the same bytes as one run (JSON numbers read back to the same doubles).
 *
 * Uncertainties from the number of seeds n (pulls z_i, sample SD s):
 *   mean:      s / sqrt(n)
 *   SD:        s / sqrt(2 (n - 1))        (large-n standard error of a Gaussian sample's SD)
 *   coverage:  sqrt(p (1 - p) / n)         (binomial), with p the observed fraction
 * Source: standard results for a Gaussian sample and a binomial proportion (common practice;
 * e.g. any statistics handbook; the SD formula is the large-sample approximation).
 */
import { upperRegularizedGamma } from '../math/special.ts';
import type { SeedLine } from './seed.ts';

export const RECOVERY_SCHEMA = 'rungbook.recovery/1';

/** The summary's file name beside a release, where the report finds it. */
export const RECOVERY_FILE = 'recovery.json';

/** Standard normal CDF, from erf(x) = P(1/2, x^2) (Abramowitz & Stegun 7.1.1 with 6.5.1). */
export function normalCdf(x: number): number {
  const erf = 1 - upperRegularizedGamma(0.5, (x * x) / 2);
  return x >= 0 ? 0.5 * (1 + erf) : 0.5 * (1 - erf);
}

/** Fraction of a unit normal within +-k: 2 Phi(k) - 1 (0.6827 for k = 1, 0.9545 for k = 2). */
export function normalCoverage(k: number, sd = 1): number {
  return 2 * normalCdf(k / sd) - 1;
}

/**
 * The bounds the verdict applies (common practice, no source; chosen here and stated on the page):
 * - bias: |mean pull| <= 0.2, a fifth of the quoted error (the project's own recovery tests allow 0.25);
 * - error size: SD of the pulls in [0.85, 1.15], quoted errors right to 15 %;
 * - coverage: between the coverages of a Gaussian pull with SD 1.15 and 0.85, i.e. what the
 *   error-size bound allows: 1 sigma [0.615, 0.760], 2 sigma [0.918, 0.981].
 */
export const MAX_ABS_MEAN_PULL = 0.2;
export const PULL_SD_BAND: readonly [number, number] = [0.85, 1.15];

/** A statistic fails when its whole +-2 standard-error interval lies outside its band (seed noise cannot explain it). */
/**
 * Below this many seeds a quantity's verdict is inconclusive whatever its statistics: the
 * standard errors above are large-sample approximations (common practice, no source).
 */
export const MIN_SEEDS_FOR_VERDICT = 20;
export const VERDICT_SE_MULTIPLE = 2;

export interface Bounds {
  mean: [number, number];
  sd: [number, number];
  coverage1: [number, number];
  coverage2: [number, number];
}

export function recoveryBounds(): Bounds {
  const [lo, hi] = PULL_SD_BAND;
  return {
    mean: [-MAX_ABS_MEAN_PULL, MAX_ABS_MEAN_PULL],
    sd: [lo, hi],
    coverage1: [normalCoverage(1, hi), normalCoverage(1, lo)],
    coverage2: [normalCoverage(2, hi), normalCoverage(2, lo)],
  };
}

export type Verdict = 'pass' | 'fail' | 'inconclusive';

export interface Statistic {
  value: number;
  /** Its standard error from the number of seeds. */
  se: number;
  /** Expected under honest errors (0 for the mean, 1 for the SD, 0.6827 and 0.9545 for the coverages). */
  expected: number;
  bounds: [number, number];
  verdict: Verdict;
}

/** Histogram of the pulls for the report's figure: HISTOGRAM_BINS bins of HISTOGRAM_WIDTH from -HISTOGRAM_EDGE. */
export const HISTOGRAM_EDGE = 5;
export const HISTOGRAM_WIDTH = 0.5;
export const HISTOGRAM_BINS = (2 * HISTOGRAM_EDGE) / HISTOGRAM_WIDTH;

export interface PullHistogram {
  /** Left edge of the first bin and the bin width. */
  from: number;
  width: number;
  counts: number[];
  /** Pulls below the first bin and above the last. */
  below: number;
  above: number;
}

export function pullHistogram(z: readonly number[]): PullHistogram {
  const counts = new Array<number>(HISTOGRAM_BINS).fill(0);
  let below = 0;
  let above = 0;
  for (const x of z) {
    const i = Math.floor((x + HISTOGRAM_EDGE) / HISTOGRAM_WIDTH);
    if (i < 0) below++;
    else if (i >= HISTOGRAM_BINS) above++;
    else counts[i]!++;
  }
  return { from: -HISTOGRAM_EDGE, width: HISTOGRAM_WIDTH, counts, below, above };
}

export interface QuantitySummary {
  key: string;
  /** Seeds that gave this quantity. */
  n: number;
  histogram: PullHistogram;
  mean: Statistic;
  sd: Statistic;
  coverage1: Statistic;
  coverage2: Statistic;
  verdict: Verdict;
}

export interface RecoverySummary {
  schema: typeof RECOVERY_SCHEMA;
  release: { id: string; blinded: boolean; inputs_hash: string };
  code_version: string;
  seeds: { first: number; count: number; calibrated: number; failed: number };
  /** Seeds whose simulated release the ladder refused, with its message (at most 20 listed). */
  failures: { seed: number; message: string }[];
  /** What the truth is (the release's own fit; for a blinded release the blinded fit). */
  truth: string;
  bounds: Bounds;
  verdict: Verdict;
  /** One sentence saying why the verdict is what it is. */
  verdict_reason: string;
  quantities: QuantitySummary[];
}

/**
 * The verdict of one statistic: fail when the +-2 se interval is wholly outside the band;
 * inconclusive when that interval is wider than the band (too few seeds to tell); else pass.
 */
export function statisticVerdict(value: number, se: number, bounds: readonly [number, number]): Verdict {
  const lo = value - VERDICT_SE_MULTIPLE * se;
  const hi = value + VERDICT_SE_MULTIPLE * se;
  if (hi < bounds[0] || lo > bounds[1]) return 'fail';
  if (hi - lo > bounds[1] - bounds[0]) return 'inconclusive';
  return 'pass';
}

function combine(vs: Verdict[]): Verdict {
  if (vs.includes('fail')) return 'fail';
  if (vs.includes('inconclusive')) return 'inconclusive';
  return 'pass';
}

function stat(value: number, se: number, expected: number, bounds: [number, number]): Statistic {
  return { value, se, expected, bounds, verdict: statisticVerdict(value, se, bounds) };
}

/** Summary statistics of one quantity's pulls (in seed order). */
export function summarisePulls(key: string, z: readonly number[], bounds: Bounds = recoveryBounds()): QuantitySummary {
  const n = z.length;
  let sum = 0;
  for (const x of z) sum += x;
  const mean = n > 0 ? sum / n : NaN;
  let ss = 0;
  for (const x of z) ss += (x - mean) ** 2;
  const sd = n > 1 ? Math.sqrt(ss / (n - 1)) : NaN;
  const cover = (k: number) => {
    let c = 0;
    for (const x of z) if (Math.abs(x) <= k) c++;
    return n > 0 ? c / n : NaN;
  };
  const c1 = cover(1);
  const c2 = cover(2);
  const e1 = normalCoverage(1);
  const e2 = normalCoverage(2);
  const coverSe = (p: number) => Math.sqrt((p * (1 - p)) / n);
  const s: Omit<QuantitySummary, 'verdict'> = {
    key,
    n,
    histogram: pullHistogram(z),
    mean: stat(mean, sd / Math.sqrt(n), 0, bounds.mean),
    sd: stat(sd, sd / Math.sqrt(2 * (n - 1)), 1, bounds.sd),
    // A coverage of exactly 0 or 1 has a binomial standard error of 0; the verdict then uses the
    // spread honest errors would give (the expected coverage), so a few seeds cannot fail it.
    coverage1: { ...stat(c1, coverSe(c1), e1, bounds.coverage1), verdict: statisticVerdict(c1, Math.max(coverSe(c1), coverSe(e1)), bounds.coverage1) },
    coverage2: { ...stat(c2, coverSe(c2), e2, bounds.coverage2), verdict: statisticVerdict(c2, Math.max(coverSe(c2), coverSe(e2)), bounds.coverage2) },
  };
  const verdict = n < MIN_SEEDS_FOR_VERDICT ? 'inconclusive' : combine([s.mean.verdict, s.sd.verdict, s.coverage1.verdict, s.coverage2.verdict]);
  return { ...s, verdict };
}

export interface SummaryHeader {
  release: { id: string; blinded: boolean; inputs_hash: string };
  code_version: string;
  first: number;
  count: number;
  /** Quantity keys in their order (from the truth). */
  keys: string[];
}

/** The summary of a complete set of seed lines (any order; sorted by seed here). */
export function summarise(header: SummaryHeader, lines: readonly SeedLine[]): RecoverySummary {
  const sorted = [...lines].sort((a, b) => a.seed - b.seed);
  const bounds = recoveryBounds();
  const failures = sorted.filter((l): l is Extract<SeedLine, { failed: string }> => 'failed' in l);
  const ok = sorted.filter((l): l is Extract<SeedLine, { quantities: unknown }> => 'quantities' in l);
  const quantities = header.keys.map((key) => {
    const z: number[] = [];
    for (const l of ok) {
      const q = l.quantities[key];
      if (q) z.push(q.pull);
    }
    return summarisePulls(key, z, bounds);
  });
  const failing = quantities.filter((q) => q.verdict === 'fail');
  const unclear = quantities.filter((q) => q.verdict === 'inconclusive');
  let verdict: Verdict;
  let reason: string;
  if (failures.length > 0) {
    verdict = 'fail';
    reason = `${failures.length} of ${sorted.length} simulated releases could not be calibrated`;
    if (failing.length > 0) reason += `, and ${failing.length} quantities fail the bounds`;
  } else if (failing.length > 0) {
    verdict = 'fail';
    reason = `${failing.length} of ${quantities.length} quantities fail the bounds: ${failing
      .slice(0, 5)
      .map((q) => q.key)
      .join(', ')}${failing.length > 5 ? ', ...' : ''}`;
  } else if (unclear.length > 0) {
    verdict = 'inconclusive';
    reason = `no quantity fails, but ${sorted.length} seeds are too few to tell for ${unclear.length} of ${quantities.length} quantities: run more seeds`;
  } else {
    verdict = 'pass';
    reason = `all ${quantities.length} quantities are within the bounds over ${sorted.length} seeds`;
  }
  return {
    schema: RECOVERY_SCHEMA,
    release: header.release,
    code_version: header.code_version,
    seeds: { first: header.first, count: header.count, calibrated: ok.length, failed: failures.length },
    failures: failures.slice(0, 20).map((f) => ({ seed: f.seed, message: f.failed })),
    truth: header.release.blinded
      ? "the release's own blinded fit: H0, a_B and M_B carry the blinding offset, and the true values are never used"
      : "the release's own fit (parameters, intrinsic scatters, distances)",
    bounds,
    verdict,
    verdict_reason: reason,
    quantities,
  };
}

/** recovery.json text: two-space JSON with a final newline (byte-stable). */
export function serializeSummary(s: RecoverySummary): string {
  return `${JSON.stringify(s, null, 2)}\n`;
}

/**
 * Read a recovery.json (the report reads the one beside a release). Throws an Error naming the
 * file and the first field that is not as this code writes it.
 */
export function parseRecoverySummary(file: string, text: string): RecoverySummary {
  let v: unknown;
  try {
    v = JSON.parse(text);
  } catch (e) {
    throw new Error(`${file}: not JSON (${(e as Error).message}); write it with rungbook recover`, { cause: e });
  }
  const bad = (what: string) => new Error(`${file}: ${what}; write it again with rungbook recover`);
  const s = v as RecoverySummary;
  if (!s || typeof s !== 'object' || s.schema !== RECOVERY_SCHEMA) throw bad(`"schema" is not "${RECOVERY_SCHEMA}"`);
  if (!s.release || typeof s.release.id !== 'string' || typeof s.release.blinded !== 'boolean' || typeof s.release.inputs_hash !== 'string')
    throw bad('"release" is not { id, blinded, inputs_hash }');
  if (!['pass', 'fail', 'inconclusive'].includes(s.verdict) || typeof s.verdict_reason !== 'string')
    throw bad('"verdict" is not pass, fail or inconclusive with its reason');
  if (!s.seeds || !['first', 'count', 'calibrated', 'failed'].every((k) => Number.isInteger((s.seeds as unknown as Record<string, unknown>)[k])))
    throw bad('"seeds" is not { first, count, calibrated, failed }');
  if (!Array.isArray(s.quantities)) throw bad('"quantities" is not a list');
  const num = (x: unknown) => x === null || typeof x === 'number';
  for (const [i, q] of s.quantities.entries()) {
    const ok =
      q &&
      typeof q.key === 'string' &&
      Number.isInteger(q.n) &&
      (['mean', 'sd', 'coverage1', 'coverage2'] as const).every(
        (k) => q[k] && num(q[k].value) && num(q[k].se) && ['pass', 'fail', 'inconclusive'].includes(q[k].verdict),
      ) &&
      q.histogram &&
      Array.isArray(q.histogram.counts) &&
      q.histogram.counts.every((c) => Number.isInteger(c));
    if (!ok) throw bad(`quantities[${i}] is not a quantity summary`);
  }
  return s;
}
