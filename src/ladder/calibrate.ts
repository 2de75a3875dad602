/**
 * The whole ladder for one release: rungs in order, the global fit, H0, the error budget and
 * the systematic variants, assembled into results.json (src/types/results.ts).
 * Pure given (release, code version): no clock, no randomness, stable ordering.
 */
import type { AnalysisChoices } from '../types/analysis.ts';
import type { Release } from '../types/release.ts';
import type { CheckResult, Results, VariantResult } from '../types/results.ts';
import { RESULTS_SCHEMA } from '../types/results.ts';
import { AnalysisError, type AnalysisProblem } from '../types/issues.ts';
import { fitParallaxRung } from './parallax.ts';
import { fitMainSequenceRung } from './mainSequence.ts';
import { buildDistancePriors } from './mainSequencePriors.ts';
import { emptySampleProblem, selectHubbleFlow, log10H0 } from './hubbleFlow.ts';
import { cepheidChecks } from './cepheids.ts';
import { fitGlobal } from './globalFit.ts';
import { PARAM } from './globalModel.ts';
import { assembleResults } from './assemble.ts';
import { errorBudget, systematicError } from './budget.ts';
import { changesData, netShift, sourceOfVariant, variantAnalysis, variantNoiseH0 } from './variants.ts';
import { massStepProblem } from './massStep.ts';
import { ladderProblems, linkageProblems, requireLadder } from './requirements.ts';
import type { CalibrateOptions, LadderRun } from './ladderRun.ts';

// The run's shape lives below the modules that read it (assemble, budget, variants): no import cycle.
export type { CalibrateOptions, LadderRun } from './ladderRun.ts';

/** Analysis keys each early rung depends on: variants that leave them alone reuse the rung. */
const PARALLAX_KEYS = ['parallax_zero_point', 'parallax_zero_point_err', 'parallax_floor'] as const;
const MAIN_SEQUENCE_KEYS = [...PARALLAX_KEYS, 'r_v', 'ms_color_range', 'ms_poly_degree', 'ms_feh_slope'] as const;

/** Rung results already computed for this release, keyed by the analysis keys they depend on. */
export interface RungCache {
  parallax: Map<string, ReturnType<typeof fitParallaxRung>>;
  mainSequence: Map<string, ReturnType<typeof fitMainSequenceRung>>;
}

export function newRungCache(): RungCache {
  return { parallax: new Map(), mainSequence: new Map() };
}

function keyOf(analysis: AnalysisChoices, keys: readonly (keyof AnalysisChoices)[]): string {
  return JSON.stringify(keys.map((k) => analysis[k]));
}

function cached<T>(map: Map<string, T>, key: string, compute: () => T): T {
  let v = map.get(key);
  if (v === undefined) {
    v = compute();
    map.set(key, v);
  }
  return v;
}

/** The parallax and main-sequence rungs for these choices, from the cache or computed into it. */
export function earlyRungs(release: Release, analysis: AnalysisChoices, cache: RungCache) {
  const parallax = cached(cache.parallax, keyOf(analysis, PARALLAX_KEYS), () => fitParallaxRung(release, analysis));
  const mainSequence = cached(cache.mainSequence, keyOf(analysis, MAIN_SEQUENCE_KEYS), () => fitMainSequenceRung(release, analysis, parallax));
  return { parallax, mainSequence };
}

/**
 * The checks of the Hubble-flow sample: how many supernovae the redshift range keeps (refusing
 * an empty sample), and whether the flow is left out for want of calibrators.
 */
function hubbleFlowChecks(release: Release, analysis: AnalysisChoices, hubbleFlow: ReturnType<typeof selectHubbleFlow>): CheckResult[] {
  const checks: CheckResult[] = [];
  if (release.snHubbleFlow.length > 0) {
    checks.push({
      id: 'hubble-flow-redshift-cut',
      title: 'Hubble-flow supernovae inside the redshift range',
      passed: hubbleFlow.used.length > 0,
      severity: 'warning',
      detail: `${hubbleFlow.used.length} of ${release.snHubbleFlow.length} supernovae have ${analysis.z_min} <= z <= ${analysis.z_max}; ${hubbleFlow.excluded.length} left out`,
    });
    if (hubbleFlow.used.length === 0) throw AnalysisError.of(emptySampleProblem(release.snHubbleFlow, analysis));
  }
  if (release.snCalibrators.length === 0 && release.snHubbleFlow.length > 0) {
    checks.push({
      id: 'hubble-flow-without-calibrators',
      title: 'Hubble-flow supernovae without calibrators',
      passed: false,
      severity: 'warning',
      detail: `${release.snHubbleFlow.length} Hubble-flow supernovae are not used: without calibrator supernovae M_B is unknown, so the ladder stops before the Hubble flow`,
    });
  }
  return checks;
}

/** log10 H0 = (M_B + 5 a_B + 25) / 5 with its variance, and the rung the fit reached. */
function log10H0OfFit(fit: ReturnType<typeof fitGlobal>): { h0: LadderRun['log10H0']; reached: Results['reached'] } {
  let reached: Results['reached'] = 'cepheids';
  let h0: LadderRun['log10H0'] = null;
  const iMB = fit.paramNames.indexOf(PARAM.MB);
  const iAB = fit.paramNames.indexOf(PARAM.aB);
  if (iMB >= 0) reached = 'sn_calibrators';
  if (iMB >= 0 && iAB >= 0) {
    reached = 'hubble_flow';
    const p = fit.paramNames.length;
    const g = new Float64Array(p);
    g[iMB] = 0.2;
    g[iAB] = 1;
    let variance = 0;
    for (let i = 0; i < p; i++) for (let j = 0; j < p; j++) variance += g[i] * fit.cov[i * p + j] * g[j];
    // the intrinsic scatters' estimation uncertainty, carried into H0 (globalFit.ts, scatterUncertainty)
    variance += fit.scatterVariance(g);
    h0 = { value: log10H0(fit.q[iMB], fit.q[iAB]), variance, gradient: g };
  }
  return { h0, reached };
}

/**
 * One pass of the ladder with the given analysis choices. Refuses first, before any fit, a
 * release whose structure the ladder cannot use (src/ladder/requirements.ts); what remains to
 * refuse is what only the fits can tell (a parameter the data do not determine).
 */
export function runLadder(release: Release, analysis: AnalysisChoices, cache: RungCache = newRungCache()): LadderRun {
  requireLadder(release, analysis);
  const checks: CheckResult[] = [];
  const { parallax, mainSequence } = earlyRungs(release, analysis, cache);
  checks.push(...parallax.checks);
  checks.push(...mainSequence.checks);
  const priors = buildDistancePriors(parallax, mainSequence);
  const hubbleFlow = selectHubbleFlow(release.snHubbleFlow, analysis);
  checks.push(...cepheidChecks(release.cepheids));
  // Without calibrator supernovae M_B is unknown, so the Hubble flow cannot be reached: its rows
  // stay out of the fit (they would only determine a_B, which then leads nowhere) and a check says so.
  checks.push(...hubbleFlowChecks(release, analysis, hubbleFlow));
  const flowInFit = release.snCalibrators.length > 0 ? hubbleFlow.used : [];
  const fieldSystems = new Set(release.systems.filter((s) => s.kind === 'field').map((s) => s.system));
  let reached: Results['reached'] = release.mainSequence.length > 0 ? 'main_sequence' : 'parallax';
  if (release.cepheids.length === 0) {
    return { analysis, parallax, mainSequence, priors, hubbleFlow, fit: null, log10H0: null, checks, reached };
  }
  // Checked by requireLadder on the release; asserted again on the rungs' own results.
  const [unlinked] = linkageProblems(
    release,
    priors.systems,
    parallax.fieldStars.map((s) => s.star),
  );
  if (unlinked !== undefined) throw AnalysisError.of(unlinked);
  const fit = fitGlobal({
    analysis,
    priors,
    fieldStars: parallax.fieldStars,
    zeroPointErrMas: release.parallax.length > 0 ? analysis.parallax_zero_point_err : 0,
    cepheids: release.cepheids,
    fieldSystems,
    // Cepheids in galaxies may be blended (crowding): the fit's mixture likelihood (cepheidMixture.ts)
    blendSystems: new Set(release.systems.filter((s) => s.kind === 'galaxy').map((s) => s.system)),
    calibrators: release.snCalibrators,
    hubbleFlow: flowInFit,
  });
  const supernovae = [...release.snCalibrators, ...flowInFit.map((h) => h.row)];
  const stepProblem = supernovae.length > 0 ? massStepProblem(analysis, supernovae) : null;
  checks.push({
    id: 'sn-host-mass-step',
    title: 'Supernova host-mass step fitted',
    passed: stepProblem === null || analysis.sn_mass_step_logmass === null,
    severity: 'info',
    detail: stepProblem === null ? `fitted at log10(M/M_sun) = ${analysis.sn_mass_step_logmass}` : `not fitted: ${stepProblem}`,
  });
  const { h0, reached: reachedByFit } = log10H0OfFit(fit);
  reached = reachedByFit;
  checks.push({
    id: 'global-fit-converged',
    title: 'Global fit converged',
    passed: fit.converged,
    severity: 'warning',
    detail: `${fit.iterations} iterations; chi2/dof = ${(fit.chi2 / fit.dof).toFixed(3)} with ${fit.dof} degrees of freedom`,
  });
  return { analysis, parallax, mainSequence, priors, hubbleFlow, fit, log10H0: h0, checks, reached };
}

/**
 * Everything for which `calibrateRelease` would refuse this release, in its words: every
 * structural problem (src/ladder/requirements.ts), or, when there is none, what the baseline
 * pass of the ladder refuses (the same `runLadder` the calibration runs first; the systematic
 * variants never refuse a release, a failed variant is reported in its results). Empty when the
 * release calibrates. This is what `rungbook check` runs after the input contract.
 */
export function checkLadder(release: Release): AnalysisProblem[] {
  const problems = ladderProblems(release, release.analysis);
  if (problems.length > 0) return problems;
  try {
    runLadder(release, release.analysis);
  } catch (e) {
    if (e instanceof AnalysisError) return [{ message: e.message, hint: e.hint }];
    throw e;
  }
  return [];
}

/**
 * What a variant's run gives: its H0 (log10 and variance), the statistical noise of its change
 * of data (0 when it changes no data; null when it cannot be computed), or the reason it failed.
 */
export type VariantOutcome = { log10H0: { value: number; variance: number } | null; noise: number | null; error: string | null };

function safeNoise(compute: () => number | null): number | null {
  try {
    const n = compute();
    return n !== null && Number.isFinite(n) ? n : null;
  } catch {
    return null;
  }
}

/**
 * Run one systematic variant (a failed variant is reported, never refuses the release). The
 * baseline is needed only for the noise of a variant that changes the data
 * (src/ladder/variants.ts); it is computed here when not given.
 */
export function runVariant(
  release: Release,
  variant: Release['variants'][number],
  cache: RungCache = newRungCache(),
  baseline?: () => LadderRun,
): VariantOutcome {
  const { analysis } = variantAnalysis(release.analysis, variant.overrides);
  try {
    const run = runLadder(release, analysis, cache);
    const base = changesData(release.analysis, variant.overrides) ? (baseline ?? (() => runLadder(release, release.analysis, cache)))() : null;
    // A noise that cannot be computed (a degenerate fit) is null: the whole shift then counts.
    const noise = base ? safeNoise(() => variantNoiseH0(base, run)) : 0;
    return { log10H0: run.log10H0 ? { value: run.log10H0.value, variance: run.log10H0.variance } : null, noise, error: null };
  } catch (e) {
    if (e instanceof AnalysisError) return { log10H0: null, noise: null, error: e.message };
    throw e;
  }
}

/** A variant's entry of results.json from its outcome and the baseline. */
export function variantResult(release: Release, variant: Release['variants'][number], outcome: VariantOutcome, baseline: LadderRun): VariantResult {
  // source, derived values and whether it changes the data: src/ladder/variants.ts
  const source = sourceOfVariant(variant.overrides).id;
  const changes_data = changesData(release.analysis, variant.overrides);
  const { derived } = variantAnalysis(release.analysis, variant.overrides);
  const described = { source, ...(Object.keys(derived).length > 0 ? { derived } : {}), changes_data };
  if (outcome.error !== null) {
    return {
      name: variant.name,
      overrides: variant.overrides,
      h0: null,
      h0_stat: null,
      delta_h0: null,
      error: outcome.error,
      ...described,
      noise_h0: null,
      delta_h0_net: null,
    };
  }
  const run = outcome.log10H0;
  const h0 = run ? 10 ** run.value : null;
  const base = baseline.log10H0 ? 10 ** baseline.log10H0.value : null;
  const delta = h0 !== null && base !== null ? h0 - base : null;
  const noise = outcome.noise;
  return {
    name: variant.name,
    overrides: variant.overrides,
    h0,
    h0_stat: run && h0 !== null ? h0 * Math.LN10 * Math.sqrt(run.variance) : null,
    delta_h0: delta,
    error: null,
    ...described,
    noise_h0: noise,
    delta_h0_net: delta !== null && noise !== null ? netShift(delta, noise) : delta,
  };
}

/** results.json content from the baseline run and the variants' outcomes (in the release's order). */
export function finishCalibration(release: Release, baseline: LadderRun, outcomes: VariantOutcome[], options: CalibrateOptions): Results {
  const variants = release.variants.map((v, i) => variantResult(release, v, outcomes[i], baseline));
  const sys = systematicError(variants);
  const budget = errorBudget(baseline, variants);
  return assembleResults(release, baseline, variants, sys, budget, options);
}

/**
 * The full calibration of a release: baseline, variants, budget, results.json content, in this
 * thread (calibrateOnWorkers in calibrateParallel.ts runs the variants on worker threads, with
 * the same result).
 */
export function calibrateRelease(release: Release, options: CalibrateOptions): Results {
  const cache = newRungCache();
  const baseline = runLadder(release, release.analysis, cache);
  const outcomes = release.variants.map((variant) => runVariant(release, variant, cache, () => baseline));
  return finishCalibration(release, baseline, outcomes, options);
}

export const RESULTS_SCHEMA_ID = RESULTS_SCHEMA;
