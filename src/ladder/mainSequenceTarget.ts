/**
 * Main-sequence fitting of one target against the fixed locus: joint fit of the
 * distance modulus mu and reddening E = E(B-V) with the binary mixture.
 *
 * Model (content/methods/main-sequence.md): mag = P(color - E) - s feh + mu + R_V E for single
 * stars, 0.753 mag brighter for equal-mass binaries; residual r = mag - that.
 * d r / d mu = -1, d r / d E = P'(color - E) - R_V: one colour-magnitude diagram
 * constrains mainly mu + (R_V - P') E, and E only through the curvature of P,
 * hence the prior on E when the release gives one.
 *
 * Binary fraction: the locus value (fitted on the anchors). A per-target fraction is
 * degenerate with mu once photometric errors blur the single and binary components
 * (the mean offset is mu - f 0.753 mag): injection-recovery on a faint target with a
 * free fraction gave mu biased by -3 sigma. Real fractions differ between clusters; that
 * difference is part of the method's systematic floor (mainSequence.ts). Intrinsic
 * scatter: the locus value.
 */
import { EQUAL_MASS_BINARY_OFFSET_MAG } from '../constants/index.ts';
import { cholesky, choleskySolve, zeros, type Matrix } from '../math/matrix.ts';
import { polyDerivative, polyValue, powerBasis } from '../math/polynomial.ts';
import { binaryProbability, mixtureCurvature, mixtureLogLikelihood, mixtureSensitivity } from './mainSequenceMixture.ts';
import { MAX_EM_ITERATIONS } from './mainSequenceLocus.ts';

/**
 * The interval searched for a free E(B-V) (mag). Slightly negative values are allowed so that a
 * target with almost no reddening is not pushed up by the bound (an estimate scatters about its
 * true value); above 1.5 mag main-sequence fitting in B-V is not used in practice (common
 * practice, no source).
 */
export const FREE_EBV_INTERVAL: readonly [number, number] = [-0.1, 1.5];
/** Starts of a free E every 0.2 mag (8 starts): on simulated targets with three times the demo's errors every start within 0.2 mag of the truth ends at the same solution. */
const FREE_EBV_START_STEP = 0.2;
/** The search from each start stops at this step (mag); the chosen solution is then polished to STEP_TOL. */
const SEARCH_STEP_TOL = 1e-6;
/** Solutions of a free E closer than this (mag, in E and mu) are the same. */
const SAME_SOLUTION_MAG = 1e-3;


/** (mu, E) steps below this (mag) and fraction changes below it end the EM loop. */
const STEP_TOL = 1e-11;
/** Passes of "select stars in the colour range at the current E, refit" before giving up. */
const MAX_SELECTION_PASSES = 20;

export type ReddeningPrior =
  | { kind: 'fixed'; ebv: number }
  | { kind: 'gaussian'; ebv: number; ebvErr: number }
  | { kind: 'free' };

export interface TargetStarInput {
  color: number;
  colorErr: number;
  mag: number;
  magErr: number;
}

export interface LocusForTargets {
  coeffs: readonly number[];
  pivot: number;
  colorRange: readonly [number, number];
  scatter: number;
  binaryFraction: number;
}

export interface TargetFitOptions {
  rV: number;
  fehSlope: number;
  feh: number;
  prior: ReddeningPrior;
  /** Fewer stars than this in the colour range is an error of the caller's data. */
  minStars: number;
}

export interface TargetFit {
  mu: number;
  ebv: number;
  /** Covariance of (mu, E) from this target's stars (and E prior); E row/column zero when E is fixed. */
  covFit: Matrix;
  /** d (mu, E) / d locus coefficients, 2 x (degree+1). */
  dThetaDCoeffs: Matrix;
  binaryFraction: number;
  pBinary: number[];
  used: boolean[];
  nUsed: number;
  iterations: number;
  converged: boolean;
}

function median(values: readonly number[]): number {
  const s = [...values].sort((a, b) => a - b);
  const m = s.length >> 1;
  return s.length % 2 ? s[m] : 0.5 * (s[m - 1] + s[m]);
}

/**
 * EM with a Gauss-Newton M-step. E-step: responsibilities q_i at the current (mu, E, f).
 * M-step: f = mean q; one Gauss-Newton step on sum_i (r_i + q_i delta)^2 / v_i + prior,
 * halved until that objective does not increase. Stars are those whose c0 = color - E
 * lies in the colour range; the selection is redone at the converged E until it
 * no longer changes (or, if it cycles, reduced to the stars kept in every state of
 * the cycle). Cost O(iterations n).
 */
export function fitTarget(stars: readonly TargetStarInput[], locus: LocusForTargets, opts: TargetFitOptions): TargetFit {
  if (opts.prior.kind === 'free') return fitTargetFreeReddening(stars, locus, opts);
  return fitTargetFrom(stars, locus, opts, { ebv: opts.prior.ebv, bounds: [-Infinity, Infinity] });
}

/** The fit from a given start of E, with E kept within bounds (used for a free E only). */
function fitTargetFrom(
  stars: readonly TargetStarInput[],
  locus: LocusForTargets,
  opts: TargetFitOptions,
  start: { ebv: number; bounds: readonly [number, number]; tolerance?: number },
): TargetFit {
  const delta = EQUAL_MASS_BINARY_OFFSET_MAG;
  const { rV, fehSlope, feh, prior } = opts;
  const freeE = prior.kind !== 'fixed';
  const tau2 = locus.scatter ** 2;
  const [lo, hi] = locus.colorRange;
  const P = (c0: number) => polyValue(locus.coeffs, c0 - locus.pivot);
  const dP = (c0: number) => polyDerivative(locus.coeffs, c0 - locus.pivot);
  const inRange = (ebv: number) => stars.map((s) => s.color - ebv >= lo && s.color - ebv <= hi);
  const priorInfo = prior.kind === 'gaussian' ? 1 / prior.ebvErr ** 2 : 0;
  const priorPull = (ebv: number) => (prior.kind === 'gaussian' ? (ebv - prior.ebv) / prior.ebvErr ** 2 : 0);

  const clamp = (e: number) => Math.min(start.bounds[1], Math.max(start.bounds[0], e));
  let ebv = start.ebv;
  let used = inRange(ebv);
  const resid = (s: TargetStarInput, m: number, e: number) => s.mag - (P(s.color - e) - fehSlope * feh + m + rV * e);
  let mu = median(stars.filter((_, i) => used[i]).map((s) => resid(s, 0, ebv)).concat(used.some(Boolean) ? [] : [0]));
  let fraction = locus.binaryFraction;
  let iterations = 0;
  let converged = false;

  /** EM on a fixed set of stars, updating mu, E and f in place; true when converged. */
  const emOnSelection = (used: boolean[]): boolean => {
    const sel = stars.filter((_, i) => used[i]);
    if (sel.length < opts.minStars) {
      throw new RangeError(`${sel.length} star(s) in the colour range [${lo}, ${hi}] at E(B-V) = ${ebv.toFixed(3)}; at least ${opts.minStars} needed`);
    }
    const variances = (e: number) => sel.map((s) => s.magErr ** 2 + (dP(s.color - e) * s.colorErr) ** 2 + tau2);
    const objective = (m: number, e: number, q: number[], v: number[]) =>
      sel.reduce((acc, s, i) => acc + (resid(s, m, e) + q[i] * delta) ** 2 / v[i], 0) +
      (prior.kind === 'gaussian' ? (e - prior.ebv) ** 2 / prior.ebvErr ** 2 : 0);
    for (let it = 0; it < MAX_EM_ITERATIONS; it++) {
      iterations++;
      const v = variances(ebv);
      const q = sel.map((s, i) => binaryProbability(resid(s, mu, ebv), v[i], fraction, delta));
      // The binary fraction is shared with the locus: for a target it is degenerate with mu
      // (the mean offset is mu - f 0.753) once photometric errors blur the two components.
      const newFraction = locus.binaryFraction;
      // Gauss-Newton normal equations for (mu[, E]) on rho_i = r_i + q_i delta.
      const p = freeE ? 2 : 1;
      const a = zeros(p, p);
      const g = new Array<number>(p).fill(0);
      sel.forEach((s, i) => {
        const rho = resid(s, mu, ebv) + q[i] * delta;
        const grad = freeE ? [-1, dP(s.color - ebv) - rV] : [-1];
        for (let j = 0; j < p; j++) {
          g[j] += (grad[j] * rho) / v[i];
          for (let k = 0; k < p; k++) a[j][k] += (grad[j] * grad[k]) / v[i];
        }
      });
      if (freeE) {
        a[1][1] += priorInfo;
        g[1] += priorPull(ebv);
      }
      const l = cholesky(a);
      if (l === null) throw new RangeError('E(B-V) is not constrained by the photometry (flat locus over the stars used)');
      const step = choleskySolve(l, g.map((x) => -x));
      const before = objective(mu, ebv, q, v);
      let t = 1;
      while (t > 1e-6 && objective(mu + t * step[0], freeE ? clamp(ebv + t * step[1]) : ebv, q, v) > before) t /= 2;
      const ebvBefore = ebv;
      mu += t * step[0];
      if (freeE) ebv = clamp(ebv + t * step[1]);
      const moved = Math.max(Math.abs(t * step[0]), Math.abs(ebv - ebvBefore), Math.abs(newFraction - fraction));
      fraction = newFraction;
      if (moved < (start.tolerance ?? STEP_TOL)) return true;
    }
    return false;
  };

  // Selection passes. A star near a colour limit can drop out at one E and come back at
  // the next, so the passes may cycle; then the stars in range in every state of the
  // cycle are kept (the stable core), which makes the result independent of the start.
  const key = (u: boolean[]) => u.map((b) => (b ? '1' : '0')).join('');
  const seen: boolean[][] = [used];
  for (let pass = 0; pass < MAX_SELECTION_PASSES; pass++) {
    const emConverged = emOnSelection(used);
    const next = inRange(ebv);
    if (key(next) === key(used)) {
      converged = emConverged;
      break;
    }
    const first = seen.findIndex((u) => key(u) === key(next));
    if (first >= 0) {
      const cycle = seen.slice(first);
      used = stars.map((_, i) => cycle.every((u) => u[i]));
      converged = emOnSelection(used);
      break;
    }
    seen.push(next);
    used = next;
  }

  return finish(stars, locus, opts, { mu, ebv, fraction, used, iterations, converged });
}

/**
 * A target without a reddening prior. The fit above redoes its star sample after each fit, and
 * on sparse or noisy photometry E can walk from a start at 0: dropping stars loosens the fit,
 * which allows a further step (seen in simulated releases: E(B-V) = 0.63 for a true value below
 * 0.1, until too few stars were left). So the fit is started every FREE_EBV_START_STEP across
 * FREE_EBV_INTERVAL and kept inside it; distinct solutions are compared on the stars that both
 * use (the same data for both, mixture likelihood of mainSequenceMixture.ts), and the one that
 * beats every other is kept. E is refused, saying why, when that solution lies at an end of the
 * interval or its error is wider than the interval: the photometry cannot fix it.
 */
function fitTargetFreeReddening(stars: readonly TargetStarInput[], locus: LocusForTargets, opts: TargetFitOptions): TargetFit {
  const [a, b] = FREE_EBV_INTERVAL;
  const found: TargetFit[] = [];
  const reasons = new Set<string>();
  for (let e = a + FREE_EBV_START_STEP / 2; e < b; e += FREE_EBV_START_STEP) {
    try {
      const fit = fitTargetFrom(stars, locus, opts, { ebv: e, bounds: FREE_EBV_INTERVAL, tolerance: SEARCH_STEP_TOL });
      if (!found.some((f) => Math.abs(f.ebv - fit.ebv) < SAME_SOLUTION_MAG && Math.abs(f.mu - fit.mu) < SAME_SOLUTION_MAG)) found.push(fit);
    } catch (err) {
      if (!(err instanceof RangeError)) throw err;
      reasons.add(err.message); // this start fails (e.g. too few stars in range there); others may not
    }
  }
  if (found.length === 0) {
    throw new RangeError(
      `E(B-V) is not constrained by the photometry: no start in [${a}, ${b}] gives a fit (${[...reasons].slice(0, 2).join('; ')})`,
    );
  }
  const deviance = (fit: TargetFit, common: boolean[]) => {
    const r: number[] = [];
    const v: number[] = [];
    stars.forEach((s, i) => {
      if (!common[i]) return;
      const c0 = s.color - fit.ebv - locus.pivot;
      r.push(s.mag - (polyValue(locus.coeffs, c0) - opts.fehSlope * opts.feh + fit.mu + opts.rV * fit.ebv));
      v.push(s.magErr ** 2 + (polyDerivative(locus.coeffs, c0) * s.colorErr) ** 2 + locus.scatter ** 2);
    });
    return -2 * mixtureLogLikelihood(r, v, fit.binaryFraction, EQUAL_MASS_BINARY_OFFSET_MAG);
  };
  const beats = (x: TargetFit, y: TargetFit) => {
    const common = x.used.map((u, i) => u && y.used[i]);
    return deviance(x, common) <= deviance(y, common);
  };
  const wins = found.map((x) => found.filter((y) => y !== x && beats(x, y)).length);
  const searched = found[found.map((_, i) => i).sort((i, j) => wins[j] - wins[i] || found[i].ebv - found[j].ebv)[0]];
  // Polish the chosen solution to the full tolerance.
  const best = fitTargetFrom(stars, locus, opts, { ebv: searched.ebv, bounds: FREE_EBV_INTERVAL });
  const ebvErr = Math.sqrt(best.covFit[1][1]);
  if (best.ebv <= a + 1e-9 || best.ebv >= b - 1e-9 || !(ebvErr < b - a)) {
    throw new RangeError(
      `E(B-V) is not constrained by the photometry: the best fit lies at ${best.ebv.toFixed(3)}` +
        (Number.isFinite(ebvErr) ? ` +- ${ebvErr.toFixed(3)}` : '') +
        ` (searched ${a} to ${b}); the photometric errors are too large for the curvature of the locus to fix E`,
    );
  }
  return best;
}

/** Curvature and sensitivities at the solution. */
function finish(
  stars: readonly TargetStarInput[],
  locus: LocusForTargets,
  opts: TargetFitOptions,
  st: { mu: number; ebv: number; fraction: number; used: boolean[]; iterations: number; converged: boolean },
): TargetFit {
  const delta = EQUAL_MASS_BINARY_OFFSET_MAG;
  const { rV, fehSlope, feh, prior } = opts;
  const freeE = prior.kind !== 'fixed';
  const { mu, ebv, fraction, used } = st;
  const sel = stars.filter((_, i) => used[i]);
  const c0 = (s: TargetStarInput) => s.color - ebv - locus.pivot;
  const r = sel.map((s) => s.mag - (polyValue(locus.coeffs, c0(s)) - fehSlope * feh + mu + rV * ebv));
  const v = sel.map((s) => s.magErr ** 2 + (polyDerivative(locus.coeffs, c0(s)) * s.colorErr) ** 2 + locus.scatter ** 2);
  const q = sel.map((_, i) => binaryProbability(r[i], v[i], fraction, delta));
  const curv = mixtureCurvature(
    sel.map((s, i) => ({
      residual: r[i],
      variance: v[i],
      q: q[i],
      grad: freeE ? [-1, polyDerivative(locus.coeffs, c0(s)) - rV] : [-1],
    })),
    fraction,
    delta,
    freeE ? [[0, 0], [0, prior.kind === 'gaussian' ? 1 / prior.ebvErr ** 2 : 0]] : undefined,
  );
  // d r_i / d coeff_k = -(c0_i - pivot)^k.
  const degree = locus.coeffs.length - 1;
  const basis = sel.map((s) => powerBasis(c0(s), degree));
  const cols = locus.coeffs.map((_, k) => mixtureSensitivity(curv, basis.map((b) => -b[k])));
  const dThetaDCoeffs = [cols.map((c) => c[0]), cols.map((c) => (freeE ? c[1] : 0))];
  const covFit = freeE ? curv.covTheta : [[curv.covTheta[0][0], 0], [0, 0]];

  const pBinary = new Array<number>(stars.length).fill(0);
  let j = 0;
  used.forEach((u, i) => {
    if (u) pBinary[i] = q[j++];
  });
  return {
    mu,
    ebv,
    covFit,
    dThetaDCoeffs,
    binaryFraction: fraction,
    pBinary,
    used,
    nUsed: sel.length,
    iterations: st.iterations,
    converged: st.converged,
  };
}
