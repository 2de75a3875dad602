/**
 * Main-sequence rung: the locus from the geometric anchors' members, then each
 * target's (mu, E) against it, with every error carried through once: the target's own
 * stars, the locus statistics (coefficients, binary fraction, intrinsic scatter), the anchors' moduli (and through them the parallax
 * zero point), the anchors' reddening and metallicity errors and the target's
 * metallicity error. Targets share the locus, so they come out correlated with each
 * other and with the anchors; buildDistancePriors assembles that covariance.
 */
import type { AnalysisChoices } from '../types/analysis.ts';
import { AnalysisError, type AnalysisProblem } from '../types/issues.ts';
import type { MainSequenceRow, Release, SystemRow } from '../types/release.ts';
import type { CheckResult, LocusResult, MainSequenceStarResult, MainSequenceTargetResult } from '../types/results.ts';
import { addMatrices, diag, matMul, sandwich, symmetrize, zeros, type Matrix } from '../math/matrix.ts';
import { polyDerivative } from '../math/polynomial.ts';
import { fitLocus, type LocusStarInput } from './mainSequenceLocus.ts';
import { fitTarget, type ReddeningPrior, type TargetFit } from './mainSequenceTarget.ts';
import { mainSequenceChecks, type CheckInputs } from './mainSequenceChecks.ts';
import type { ParallaxRungResult } from './parallax.ts';

/** Locus stars needed per polynomial coefficient (the mixture also fits a fraction and a scatter). */
export const MIN_LOCUS_STARS_PER_COEFF = 5;
/** Stars needed in a target's colour range: two parameters and a binary fraction, with margin. */
export const MIN_TARGET_STARS = 5;

export interface MainSequenceRungResult {
  locus: LocusResult | null;
  targets: MainSequenceTargetResult[];
  stars: MainSequenceStarResult[];
  checks: CheckResult[];
  /** The parallax anchors (all of them, in the parallax rung's order): columns of the Jacobian. */
  anchorSystems: string[];
  /** G = d mu_target / d mu_anchor, one row per target. */
  targetAnchorJacobian: Matrix;
  /**
   * Covariance of the targets' mu from main-sequence fitting alone: own fits, locus
   * statistics (coefficients, binary fraction and scatter, shared by all targets), target
   * metallicity, anchors' reddening and metallicity errors.
   * The anchors' moduli and the zero point are excluded (they enter through G).
   */
  targetCovarianceMainSequence: Matrix;
}

function fail(what: string, value: unknown, expected: string): never {
  throw new AnalysisError(`analysis choice ${what} = ${JSON.stringify(value)}; expected ${expected}`);
}

/**
 * Floor of a main-sequence-fitting distance, added in quadrature to each target's mu, for what
 * the rung does not propagate itself: the tie of each target's photometric zero points to the
 * anchors' (0.02 mag; ground-based zero points tie to 0.01-0.02 mag, from memory). The rest of
 * the 2-3 % error budget of the method with a well-known metallicity (An et al. 2007, ApJ 655,
 * 233) is now carried term by term (the target's own stars, its metallicity and reddening, the
 * locus with its binary fraction and scatter, the anchors' distances, reddenings and
 * metallicities); the former 0.05 mag floor counted those terms a second time (recovery pulls of
 * the target clusters' own-rung distances with standard deviation 0.70-0.76). The simulation of
 * `rungbook recover` does not realise this floor, so those pulls come out slightly below 1
 * (about 0.95): that is the floor, not a fault.
 */
export const MS_METHOD_FLOOR_MAG = 0.02;

/** Which main-sequence rows belong to which system, the anchors among them, and the targets. */
interface MainSequenceLayout {
  rowsBySystem: Map<string, MainSequenceRow[]>;
  /** Indices (in `anchorSystems`) of the anchors that have main-sequence rows. */
  anchorIdx: number[];
  /** Systems with main-sequence rows and no parallax rows. */
  targets: SystemRow[];
  /** Systems with main-sequence and parallax rows that are not anchors (kind field). */
  ignored: string[];
}

function mainSequenceLayout(release: Release, anchorSystems: readonly string[]): MainSequenceLayout {
  const rowsBySystem = new Map<string, MainSequenceRow[]>();
  for (const r of release.mainSequence) {
    const list = rowsBySystem.get(r.system);
    if (list) list.push(r);
    else rowsBySystem.set(r.system, [r]);
  }
  const withParallax = new Set(release.parallax.map((r) => r.system));
  const anchorIdx = anchorSystems.map((_, i) => i).filter((i) => rowsBySystem.has(anchorSystems[i]));
  const targets = release.systems.filter((x) => rowsBySystem.has(x.system) && !withParallax.has(x.system));
  const ignored = [...rowsBySystem.keys()].filter((id) => withParallax.has(id) && !anchorSystems.includes(id));
  return { rowsBySystem, anchorIdx, targets, ignored };
}

/** Main-sequence targets: systems with main-sequence rows and no parallax rows (their distance comes from the locus). */
export function mainSequenceTargets(release: Release): SystemRow[] {
  return mainSequenceLayout(release, []).targets;
}

/** An anchor star's intrinsic colour c0 = color - E(B-V) of its anchor (0 when the anchor gives none). */
function anchorColor0(row: MainSequenceRow, sys: SystemRow): number {
  return row.color - (sys.ebv ?? 0);
}

/**
 * Why the main-sequence rung cannot run on this release, or null: targets but no geometric
 * anchor with main-sequence rows to calibrate the locus on, or too few anchor stars in the
 * colour range for the locus' degree. `anchorSystems` are the geometric anchors of the
 * parallax rung. The one statement of these rules: the rung refuses with them and
 * `rungbook check` reports them (src/ladder/requirements.ts).
 */
export function mainSequenceProblem(release: Release, analysis: AnalysisChoices, anchorSystems: readonly string[]): AnalysisProblem | null {
  const { anchorIdx, targets, rowsBySystem } = mainSequenceLayout(release, anchorSystems);
  if (anchorIdx.length === 0) {
    if (targets.length === 0) return null;
    const noParallax = release.absentTables.includes('parallax') ? ' (the release has no parallax table)' : '';
    return {
      message: `main-sequence target(s) ${targets.map((t) => `"${t.system}"`).join(', ')} but no geometric anchor has main-sequence rows${noParallax}`,
      hint: 'add main_sequence photometry for at least one cluster with parallaxes, so that the locus can be calibrated',
    };
  }
  const range = analysis.ms_color_range;
  const degree = analysis.ms_poly_degree;
  const sysById = new Map(release.systems.map((x) => [x.system, x]));
  let inRange = 0;
  for (const a of anchorIdx) {
    const sys = sysById.get(anchorSystems[a])!;
    for (const row of rowsBySystem.get(sys.system)!) {
      const c0 = anchorColor0(row, sys);
      if (c0 >= range[0] && c0 <= range[1]) inRange++;
    }
  }
  const needed = MIN_LOCUS_STARS_PER_COEFF * (degree + 1);
  if (inRange < needed) {
    return {
      message: `${inRange} anchor main-sequence star(s) lie in the colour range [${range.join(', ')}]; a degree-${degree} locus needs at least ${needed}`,
      hint: 'add anchor photometry, widen ms_color_range, or lower ms_poly_degree',
    };
  }
  return null;
}

/** An anchor's main-sequence star: intrinsic colour and absolute magnitude at [Fe/H] = 0. */
interface AnchorStar {
  row: MainSequenceRow;
  c0: number;
  y: number;
}

/**
 * The anchors' stars on the absolute scale (their parallax distance, reddening and metallicity
 * taken out), those in the colour range as the locus' input, and the anchors' E(B-V) and [Fe/H]
 * errors (which move the locus). Records in `inputs` the anchors without E(B-V) or [Fe/H].
 */
function anchorStars(
  release: Release,
  analysis: AnalysisChoices,
  parallax: ParallaxRungResult,
  layout: MainSequenceLayout,
  inputs: CheckInputs,
): { anchorRows: AnchorStar[]; locusStars: (LocusStarInput & { row: MainSequenceRow })[]; ebvErrA: number[]; fehErrA: number[] } {
  const { r_v: rV, ms_feh_slope: s } = analysis;
  const range = analysis.ms_color_range;
  const anchorSystems = parallax.anchors.map((a) => a.system);
  const sysById = new Map(release.systems.map((x) => [x.system, x]));
  const nA = anchorSystems.length;
  const ebvErrA = new Array<number>(nA).fill(0);
  const fehErrA = new Array<number>(nA).fill(0);
  const locusStars: (LocusStarInput & { row: MainSequenceRow })[] = [];
  const anchorRows: AnchorStar[] = [];
  for (const a of layout.anchorIdx) {
    const id = anchorSystems[a];
    const sys = sysById.get(id)!;
    if (sys.ebv === undefined) inputs.anchorsNoEbv.push(id);
    if (sys.feh === undefined) inputs.noFeh.push(id);
    const ebv = sys.ebv ?? 0;
    ebvErrA[a] = sys.ebv !== undefined ? (sys.ebvErr ?? 0) : 0;
    fehErrA[a] = sys.fehErr ?? 0;
    for (const row of layout.rowsBySystem.get(id)!) {
      const c0 = anchorColor0(row, sys);
      const y = row.mag - parallax.anchors[a].mu - rV * ebv + s * (sys.feh ?? 0);
      anchorRows.push({ row, c0, y });
      if (c0 >= range[0] && c0 <= range[1]) {
        locusStars.push({ row, anchor: a, color0: c0, absMagFeh0: y, magErr: row.magErr, colorErr: row.colorErr });
      }
    }
  }
  return { anchorRows, locusStars, ebvErrA, fehErrA };
}

/** The locus fit, or the data's limit said as such (photometry that cannot constrain it). */
function fitLocusOrExplain(
  locusStars: (LocusStarInput & { row: MainSequenceRow })[],
  options: Parameters<typeof fitLocus>[1],
  range: readonly number[],
): ReturnType<typeof fitLocus> {
  try {
    return fitLocus(locusStars, options);
  } catch (e) {
    // Photometry that cannot constrain the locus (all stars at one colour, say) is the data's
    // limit, not a defect of the code: say so, in the words of the numerical kernel.
    if (!(e instanceof RangeError)) throw e;
    throw new AnalysisError(
      `the main-sequence locus cannot be fitted on the ${locusStars.length} anchor star(s) in the colour range [${range.join(', ')}]: ${e.message}`,
      'add anchor photometry that spans the colour range, or lower ms_poly_degree',
    );
  }
}

/** Covariances of the locus: of its coefficients, and of lambda = (coefficients, binary fraction, scatter). */
interface LocusCovariances {
  /** Coefficients, all sources (statistics, anchors' E and [Fe/H], anchors' moduli with the zero point). */
  locusTotal: Matrix;
  /** lambda, main-sequence sources only (the anchors' moduli enter the targets through G). */
  lambdaMsOnly: Matrix;
  /** lambda, all sources. */
  lambdaTotal: Matrix;
}

function locusCovariances(fit: ReturnType<typeof fitLocus>, ebvErrA: number[], fehErrA: number[], anchorCovariance: Matrix): LocusCovariances {
  // Locus covariance parts: main-sequence-only (stat + anchors' E and feh) and anchors' moduli.
  const locusMsOnly = symmetrize(
    addMatrices(fit.covStat, sandwich(fit.dCoeffsDEbv, diag(ebvErrA.map((e) => e * e))), sandwich(fit.dCoeffsDFeh, diag(fehErrA.map((e) => e * e)))),
  );
  const locusTotal = symmetrize(addMatrices(locusMsOnly, sandwich(fit.dCoeffsDMu, anchorCovariance)));
  // The same in the space of everything the targets take from the locus, lambda = (coefficients,
  // binary fraction, intrinsic scatter): the fraction's statistical covariance with the coefficients
  // from the mixture information, the scatter's own error. The anchors' common errors move the
  // coefficients only: the scatter is measured about each anchor's own offset, and the fraction
  // (the share of stars 0.753 mag above the locus) hardly moves with a shift of a whole anchor.
  const nC = fit.coeffs.length;
  const lambdaCov = (coeffsCov: Matrix): Matrix => {
    const out = zeros(nC + 2, nC + 2);
    for (let i = 0; i <= nC; i++) for (let j = 0; j <= nC; j++) out[i][j] = i < nC && j < nC ? coeffsCov[i][j] : fit.covCoeffsFraction[i][j];
    out[nC + 1][nC + 1] = fit.scatterErr ** 2;
    return out;
  };
  return { locusTotal, lambdaMsOnly: lambdaCov(locusMsOnly), lambdaTotal: lambdaCov(locusTotal) };
}

/** d (mu, E) / d lambda of one target's fit. */
function lambdaJacobian(tf: TargetFit): Matrix {
  return [0, 1].map((r) => [...tf.dThetaDCoeffs[r], tf.dThetaDFraction[r], tf.dThetaDScatter[r]]);
}

interface TargetFitOf {
  sys: SystemRow;
  fit: TargetFit;
  feh: number;
  fehErr: number;
  prior: ReddeningPrior;
}

/** Fit each target's stars on the locus (distance and reddening); its stars' results into `starResults`. */
function fitTargets(
  analysis: AnalysisChoices,
  layout: MainSequenceLayout,
  locus: LocusResult,
  inputs: CheckInputs,
  starResults: Map<MainSequenceRow, MainSequenceStarResult>,
): TargetFitOf[] {
  const { r_v: rV, ms_feh_slope: s } = analysis;
  const fits: TargetFitOf[] = [];
  for (const sys of layout.targets) {
    if (sys.feh === undefined) inputs.noFeh.push(sys.system);
    const prior = reddeningPrior(sys);
    const rows = layout.rowsBySystem.get(sys.system)!;
    const feh = sys.feh ?? 0;
    let tf: TargetFit;
    try {
      tf = fitTarget(
        rows,
        { coeffs: locus.coeffs, pivot: locus.color_pivot, colorRange: locus.color_range, scatter: locus.scatter, binaryFraction: locus.binary_fraction },
        {
          rV,
          fehSlope: s,
          feh,
          prior,
          minStars: MIN_TARGET_STARS,
        },
      );
    } catch (e) {
      throw new AnalysisError(
        `main-sequence target "${sys.system}" (systems line ${sys.line}): ${(e as Error).message}`,
        'add photometry in the unevolved colour range, or give an E(B-V) prior (ebv, ebv_err)',
      );
    }
    fits.push({ sys, fit: tf, feh, fehErr: sys.fehErr ?? 0, prior });
    rows.forEach((row, i) => {
      starResults.set(row, {
        star: row.star,
        system: row.system,
        line: row.line,
        color0: row.color - tf.ebv,
        abs_mag: row.mag - tf.mu - rV * tf.ebv + s * feh,
        p_binary: tf.pBinary[i],
        used: tf.used[i],
        role: 'target',
      });
    });
  }
  return fits;
}

/** A target's result: its (mu, E) with the total covariance (own fit, locus with all its sources, [Fe/H], floor). */
function targetResult(f: TargetFitOf, fehSlope: number, lambdaTotal: Matrix): MainSequenceTargetResult {
  // Total covariance of (mu, E): own fit + locus (statistics, anchors incl. zero point, anchor E and feh) + target feh.
  const total = addMatrices(f.fit.covFit, sandwich(lambdaJacobian(f.fit), lambdaTotal), [
    [(fehSlope * f.fehErr) ** 2 + MS_METHOD_FLOOR_MAG ** 2, 0],
    [0, 0],
  ]);
  const muErr = Math.sqrt(total[0][0]);
  const ebvErr = Math.sqrt(total[1][1]);
  return {
    system: f.sys.system,
    n_stars: f.fit.used.length,
    n_used: f.fit.nUsed,
    mu: f.fit.mu,
    mu_err: muErr,
    ebv: f.fit.ebv,
    ebv_err: ebvErr,
    corr_mu_ebv: ebvErr > 0 ? total[0][1] / (muErr * ebvErr) : 0,
    feh: f.feh,
    binary_fraction: f.fit.binaryFraction,
  };
}

export function fitMainSequenceRung(release: Release, analysis: AnalysisChoices, parallax: ParallaxRungResult): MainSequenceRungResult {
  const { r_v: rV, ms_feh_slope: s, ms_poly_degree: degree } = analysis;
  const range: [number, number] = [analysis.ms_color_range[0], analysis.ms_color_range[1]];
  if (!Number.isInteger(degree) || degree < 1) fail('ms_poly_degree', degree, 'an integer >= 1');
  if (!(range[0] < range[1])) fail('ms_color_range', range, '[low, high] with low < high');
  const pivot = 0.5 * (range[0] + range[1]);

  const anchorSystems = parallax.anchors.map((a) => a.system);
  const layout = mainSequenceLayout(release, anchorSystems);
  const inputs: CheckInputs = { ignored: layout.ignored, anchorsNoEbv: [], noFeh: [], targets: [], locus: null, rV };

  const empty: MainSequenceRungResult = {
    locus: null,
    targets: [],
    stars: [],
    checks: [],
    anchorSystems,
    targetAnchorJacobian: [],
    targetCovarianceMainSequence: [],
  };
  const problem = mainSequenceProblem(release, analysis, anchorSystems);
  if (problem !== null) throw AnalysisError.of(problem);
  if (layout.anchorIdx.length === 0) return { ...empty, checks: mainSequenceChecks(inputs) };

  // ---- locus on the anchors ----
  const starResults = new Map<MainSequenceRow, MainSequenceStarResult>();
  const { anchorRows, locusStars, ebvErrA, fehErrA } = anchorStars(release, analysis, parallax, layout, inputs);
  const fit = fitLocusOrExplain(locusStars, { degree, pivot, rV, fehSlope: s, nAnchors: anchorSystems.length }, range);
  const pBinaryByRow = new Map(locusStars.map((st, i) => [st.row, fit.pBinary[i]]));
  for (const { row, c0, y } of anchorRows) {
    starResults.set(row, {
      star: row.star,
      system: row.system,
      line: row.line,
      color0: c0,
      abs_mag: y,
      p_binary: pBinaryByRow.get(row) ?? 0,
      used: pBinaryByRow.has(row),
      role: 'anchor',
    });
  }
  const { locusTotal, lambdaMsOnly, lambdaTotal } = locusCovariances(fit, ebvErrA, fehErrA, parallax.anchorCovariance);
  const locus: LocusResult = {
    degree,
    coeffs: fit.coeffs,
    color_pivot: pivot,
    covariance: locusTotal,
    color_range: range,
    scatter: fit.scatter,
    binary_fraction: fit.binaryFraction,
    n_stars: locusStars.length,
  };
  inputs.locus = { ...locus, converged: fit.converged, iterations: fit.iterations };

  // ---- targets ----
  const fits = fitTargets(analysis, layout, locus, inputs, starResults);

  // ---- propagation ----
  // B: d mu_target / d lambda. Targets share lambda, so they are correlated through it.
  const B = fits.map((f) => lambdaJacobian(f.fit)[0]);
  const G =
    fits.length === 0
      ? []
      : matMul(
          fits.map((f) => f.fit.dThetaDCoeffs[0]),
          fit.dCoeffsDMu,
        );
  const targetCov = fits.length === 0 ? [] : symmetrize(sandwich(B, lambdaMsOnly));
  fits.forEach((f, t) => (targetCov[t][t] += f.fit.covFit[0][0] + (s * f.fehErr) ** 2 + MS_METHOD_FLOOR_MAG ** 2));

  for (const f of fits) {
    const meanP = meanSlope(f.fit, layout.rowsBySystem.get(f.sys.system)!, fit.coeffs, pivot);
    inputs.targets.push({ system: f.sys.system, prior: f.prior.kind, fit: f.fit, meanSlope: meanP });
  }
  return {
    locus,
    targets: fits.map((f) => targetResult(f, s, lambdaTotal)),
    stars: release.mainSequence.filter((r) => starResults.has(r)).map((r) => starResults.get(r)!),
    checks: mainSequenceChecks(inputs),
    anchorSystems,
    targetAnchorJacobian: G,
    targetCovarianceMainSequence: targetCov,
  };
}

function reddeningPrior(sys: SystemRow): ReddeningPrior {
  if (sys.ebv === undefined) return { kind: 'free' };
  if (sys.ebvErr === undefined) return { kind: 'fixed', ebv: sys.ebv };
  return { kind: 'gaussian', ebv: sys.ebv, ebvErr: sys.ebvErr };
}

/** Mean locus slope dM_V/d(B-V) over a target's used stars (for the degeneracy message). */
function meanSlope(tf: TargetFit, rows: readonly MainSequenceRow[], coeffs: readonly number[], pivot: number): number {
  let sum = 0;
  rows.forEach((r, i) => {
    if (tf.used[i]) sum += polyDerivative(coeffs, r.color - tf.ebv - pivot);
  });
  return sum / Math.max(1, tf.nUsed);
}
