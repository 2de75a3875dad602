/**
 * Main-sequence fitting of one target against the fixed locus: joint fit of the
 * distance modulus mu and reddening E = E(B-V) with the binary mixture.
 *
 * Model (content/methods/main-sequence.md): a single star of absolute magnitude
 *   M = mag - mu - R_V E + s feh
 * has intrinsic colour C(M) = P^-1(M) (the locus read from magnitude to colour); an
 * equal-mass binary of the same magnitude is a single star 0.753 mag fainter seen twice,
 * so its colour is C(M + 0.753). The likelihood is that of the observed intrinsic colour
 * c0 = color - E at the star's magnitude:
 *   L_i = (1-f) N(c0 - C(M) | 0, v_s) + f N(c0 - C(M + 0.753) | 0, v_b),
 *   v = color_err^2 + (mag_err^2 + scatter^2) / P'(C)^2  (each component at its own colour).
 *
 * Why colour at given magnitude, not magnitude at given colour: the faint red stars carry the
 * largest colour errors, and their true colours end where the photometry ends. A star seen
 * redder than that end is most likely a bluer star scattered redward, so its magnitude
 * predicted from the observed colour is too faint on average and mu comes out short (on the
 * demo's nearby galaxy by -0.04 to -0.05 mag, about half its error, with E(B-V) low by
 * -0.013). Selecting and fitting on the magnitude, whose error is P' ~ 5 times smaller in
 * these units, leaves only a bias of order (mag_err^2 + scatter^2) times the slope of the
 * luminosity function, which the recovery tests bound (tests/ladder/mainSequenceTargetBias.test.ts).
 * This is the regression of the noisier variable on the better measured one; the treatment
 * of a colour-selected sample as biased by colour errors is common practice, no source.
 *
 * The stars used are those whose single and binary colours both lie in the colour range:
 * P(lo) <= M <= P(hi) - 0.753. The selection depends on mu and E and is redone at the
 * solution until it stops changing.
 *
 * Binary fraction and intrinsic scatter: the locus values (fitted on the anchors). A
 * per-target fraction is degenerate with mu once photometric errors blur the single and
 * binary components (injection-recovery on a faint target with a free fraction gave mu
 * biased by -3 sigma). Their uncertainties reach the target through dThetaDFraction and
 * dThetaDScatter, and the locus coefficients' through dThetaDCoeffs.
 */
import { EQUAL_MASS_BINARY_OFFSET_MAG } from '../constants/index.ts';
import { cholesky, choleskySolve, spdInverse, type Matrix } from '../math/matrix.ts';
import { polyDerivative, polyValue } from '../math/polynomial.ts';

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

/** Newton steps in (mu, E) below this (mag) end the maximisation. */
const STEP_TOL = 1e-9;
/** Newton iterations on one star sample before giving up. */
const MAX_NEWTON_ITERATIONS = 200;
/** Passes of "select stars at the current (mu, E), refit" before giving up. */
const MAX_SELECTION_PASSES = 20;
/** Finite-difference step (mag) for the gradient and Hessian of ln L in (mu, E). */
const THETA_STEP = 1e-4;
/** Relative finite-difference step for the sensitivities to the locus (coefficients, fraction, scatter). */
const LOCUS_STEP = 1e-3;
/** Grid points on which the locus is checked to rise monotonically over the colour range. */
const MONOTONIC_GRID = 200;
/**
 * Kernel width (mag) of the estimate of a target's luminosity function, and its grid step:
 * narrower than the binary offset (0.753 mag) so that the function's faint end is kept, wider
 * than the magnitude errors of most stars (common practice, no source).
 */
const LF_KERNEL_MAG = 0.1;
const LF_GRID_MAG = 0.01;
/** A star's prior binary probability stays within f / 10 and 1 - (1 - f) / 10 (see binaryWeights). */
const BINARY_WEIGHT_LIMIT = 10;

export type ReddeningPrior = { kind: 'fixed'; ebv: number } | { kind: 'gaussian'; ebv: number; ebvErr: number } | { kind: 'free' };

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
  /** d (mu, E) / d (locus binary fraction). */
  dThetaDFraction: [number, number];
  /** d (mu, E) / d (locus intrinsic scatter, mag). */
  dThetaDScatter: [number, number];
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

/** The locus as a function in both directions: P(c0), P'(c0) and C(M) = P^-1(M). */
interface LocusMap {
  P: (c0: number) => number;
  dP: (c0: number) => number;
  C: (absMag: number) => number;
  /** Magnitude limits of a single star whose single and binary colours both lie in the range. */
  mLo: number;
  mHi: number;
}

function locusMap(locus: LocusForTargets): LocusMap {
  const { coeffs, pivot } = locus;
  const [lo, hi] = locus.colorRange;
  const P = (c0: number) => polyValue(coeffs, c0 - pivot);
  const dP = (c0: number) => polyDerivative(coeffs, c0 - pivot);
  for (let k = 0; k <= MONOTONIC_GRID; k++) {
    const c = lo + ((hi - lo) * k) / MONOTONIC_GRID;
    if (!(dP(c) > 0)) {
      throw new RangeError(
        `the locus is not monotonic over the colour range (dM/d(B-V) = ${dP(c).toFixed(3)} at B-V = ${c.toFixed(3)}): colours cannot be read from magnitudes`,
      );
    }
  }
  const pLo = P(lo);
  const pHi = P(hi);
  // Newton from the linear interpolation; P is increasing on [lo, hi] and smooth a little beyond.
  const C = (m: number) => {
    let c = lo + ((m - pLo) / (pHi - pLo)) * (hi - lo);
    for (let it = 0; it < 50; it++) {
      const d = dP(c);
      const step = (P(c) - m) / (d > 0 ? d : dP(Math.min(hi, Math.max(lo, c))));
      c -= step;
      if (Math.abs(step) < 1e-13) break;
    }
    return c;
  };
  return { P, dP, C, mLo: pLo, mHi: pHi };
}

/**
 * The probability that a star of apparent magnitude V is an equal-mass binary, given the binary
 * fraction f (at fixed colour, as the locus defines it): a binary seen at V is a pair of single
 * stars of magnitude V + 0.753, so
 *   w(V) = f phi(V + 0.753) / [(1-f) phi(V) + f phi(V + 0.753)],
 * with phi the distribution of the single stars' magnitudes. phi is recovered from the target's
 * own magnitude distribution g (Gaussian kernel LF_KERNEL_MAG), g(V) = (1-f) phi(V) + f phi(V + 0.753),
 * by running that relation from the faint end, where phi(V + 0.753) = 0 beyond the faintest star.
 * Where the photometry ends, w falls to 0: a star within 0.753 mag of the faint end cannot be a
 * binary of stars the sample does not contain. A constant f at fixed magnitude would instead
 * put binaries (colour C(M + 0.753)) where no star is, and bias mu (+0.014 mag on the demo's
 * nearby galaxy). Apparent magnitudes only, so w does not depend on mu or E. Cost O(n G), G
 * grid points.
 */
export function binaryWeights(mags: readonly number[], fraction: number): number[] {
  if (fraction <= 0) return mags.map(() => 0);
  if (fraction >= 1) return mags.map(() => 1);
  const delta = EQUAL_MASS_BINARY_OFFSET_MAG;
  const lo = Math.min(...mags) - 5 * LF_KERNEL_MAG;
  const hi = Math.max(...mags) + 5 * LF_KERNEL_MAG + delta;
  const n = Math.ceil((hi - lo) / LF_GRID_MAG) + 1;
  const g = new Array<number>(n).fill(0);
  for (const m of mags) {
    const k0 = Math.max(0, Math.floor((m - 5 * LF_KERNEL_MAG - lo) / LF_GRID_MAG));
    const k1 = Math.min(n - 1, Math.ceil((m + 5 * LF_KERNEL_MAG - lo) / LF_GRID_MAG));
    for (let k = k0; k <= k1; k++) g[k] += Math.exp(-0.5 * ((lo + k * LF_GRID_MAG - m) / LF_KERNEL_MAG) ** 2);
  }
  const phi = new Array<number>(n).fill(0);
  const at = (arr: number[], v: number) => {
    const x = (v - lo) / LF_GRID_MAG;
    const k = Math.floor(x);
    if (k < 0 || k >= n - 1) return 0;
    return arr[k] + (x - k) * (arr[k + 1] - arr[k]);
  };
  for (let k = n - 1; k >= 0; k--) {
    const v = lo + k * LF_GRID_MAG;
    phi[k] = Math.max(0, (g[k] - fraction * at(phi, v + delta)) / (1 - fraction));
  }
  // Kept within a factor BINARY_WEIGHT_LIMIT of f and of 1 - f: where the sample is sparse the
  // estimated phi has gaps, and a true binary given no prior chance of being one would drag the fit.
  const wLo = fraction / BINARY_WEIGHT_LIMIT;
  const wHi = 1 - (1 - fraction) / BINARY_WEIGHT_LIMIT;
  return mags.map((m) => {
    const single = (1 - fraction) * at(phi, m);
    const pair = fraction * at(phi, m + delta);
    const w = single + pair > 0 ? pair / (single + pair) : fraction;
    return Math.min(wHi, Math.max(wLo, w));
  });
}

/** The colour variances of a star's single and binary components at (mu, E). */
function componentVariances(s: TargetStarInput, map: LocusMap, mu: number, ebv: number, opts: TargetFitOptions, tau2: number): [number, number] {
  const m = s.mag - mu - opts.rV * ebv + opts.fehSlope * opts.feh;
  const v = (absMag: number) => s.colorErr ** 2 + (s.magErr ** 2 + tau2) / map.dP(map.C(absMag)) ** 2;
  return [v(m), v(m + EQUAL_MASS_BINARY_OFFSET_MAG)];
}

/**
 * ln of the mixture density of one star at (mu, E); also its binary responsibility. With
 * `frozen`, the components' variances are those given (held at the current iterate, see maximise).
 */
function starLogLikelihood(
  s: TargetStarInput,
  map: LocusMap,
  mu: number,
  ebv: number,
  opts: TargetFitOptions,
  tau2: number,
  fraction: number,
  frozen?: readonly [number, number],
  q?: number,
): { ll: number; q: number } {
  const m = s.mag - mu - opts.rV * ebv + opts.fehSlope * opts.feh;
  const c0 = s.color - ebv;
  const comp = (absMag: number, k: 0 | 1) => {
    const c = map.C(absMag);
    const v = frozen ? frozen[k] : s.colorErr ** 2 + (s.magErr ** 2 + tau2) / map.dP(c) ** 2;
    const r = c0 - c;
    return -0.5 * ((r * r) / v + Math.log(2 * Math.PI * v));
  };
  const a = fraction < 1 ? Math.log(1 - fraction) + comp(m, 0) : -Infinity;
  const b = fraction > 0 ? Math.log(fraction) + comp(m + EQUAL_MASS_BINARY_OFFSET_MAG, 1) : -Infinity;
  if (q !== undefined) {
    // Complete-data log-likelihood with the membership held at q (the EM surrogate).
    const ll = (q < 1 ? (1 - q) * a : 0) + (q > 0 ? q * b : 0);
    return { ll, q };
  }
  const top = Math.max(a, b);
  const ll = top + Math.log(Math.exp(a - top) + Math.exp(b - top));
  return { ll, q: Math.exp(b - ll) };
}

/** Everything one star sample's likelihood depends on besides (mu, E). */
interface Sample {
  stars: readonly TargetStarInput[];
  map: LocusMap;
  tau2: number;
  /** Each star's probability of being a binary before its colour is seen (binaryWeights). */
  weights: readonly number[];
  /** Component variances held fixed (maximise); absent: they follow (mu, E). */
  frozen?: readonly (readonly [number, number])[];
  /** Binary responsibilities held fixed (complete-data surrogate); absent: the mixture itself. */
  memberships?: readonly number[];
}

function sampleLogLikelihood(x: Sample, mu: number, ebv: number, opts: TargetFitOptions): number {
  let ll = 0;
  x.stars.forEach((s, i) => (ll += starLogLikelihood(s, x.map, mu, ebv, opts, x.tau2, x.weights[i], x.frozen?.[i], x.memberships?.[i]).ll));
  if (opts.prior.kind === 'gaussian') ll -= 0.5 * ((ebv - opts.prior.ebv) / opts.prior.ebvErr) ** 2;
  return ll;
}

/** Gradient and Hessian of ln L in theta = (mu[, E]) by central differences (THETA_STEP). */
function derivatives(f: (t: number[]) => number, t: readonly number[]): { g: number[]; h: Matrix } {
  const p = t.length;
  const h0 = THETA_STEP;
  const at = (d: number[]) => f(t.map((ti, i) => ti + d[i]));
  const unit = (i: number, k: number) => Array.from({ length: p }, (_, j) => (j === i ? k : 0));
  const f0 = f([...t]);
  const g: number[] = [];
  const h: Matrix = Array.from({ length: p }, () => new Array<number>(p).fill(0));
  for (let i = 0; i < p; i++) {
    const fp = at(unit(i, h0));
    const fm = at(unit(i, -h0));
    g.push((fp - fm) / (2 * h0));
    h[i][i] = (fp - 2 * f0 + fm) / (h0 * h0);
  }
  for (let i = 0; i < p; i++) {
    for (let j = i + 1; j < p; j++) {
      const d = (si: number, sj: number) => at(Array.from({ length: p }, (_, k) => (k === i ? si * h0 : k === j ? sj * h0 : 0)));
      h[i][j] = h[j][i] = (d(1, 1) - d(1, -1) - d(-1, 1) + d(-1, -1)) / (4 * h0 * h0);
    }
  }
  return { g, h };
}

/** -Hessian of the complete-data surrogate at t: memberships frozen at their values there. */
function surrogateInformation(x: Sample, opts: TargetFitOptions, t: readonly number[], fixedEbv: number): Matrix {
  const freeE = opts.prior.kind !== 'fixed';
  const e0 = freeE ? t[1] : fixedEbv;
  const memberships = x.stars.map((s, i) => starLogLikelihood(s, x.map, t[0], e0, opts, x.tau2, x.weights[i], x.frozen?.[i]).q);
  const xs: Sample = { ...x, memberships };
  const { h } = derivatives((u) => sampleLogLikelihood(xs, u[0], freeE ? u[1] : fixedEbv, opts), t);
  return h.map((row) => row.map((v) => -v));
}

/**
 * Solve the likelihood equations in (mu[, E]) on a fixed star sample: at each iterate the
 * components' variances are held at their current values (iteratively reweighted, as the
 * effective-variance method does) and ln L with those variances is raised by one Newton step with
 * step halving; E kept within `bounds`. The fixed point zeroes the score of the weighted residuals,
 * so exact data give back the exact parameters; differentiating the variances as well would add the
 * score of ln v, which has zero mean but moves exact data off the truth. Returns the number of
 * iterations and whether the step fell below tol.
 */
function maximise(
  x: Sample,
  opts: TargetFitOptions,
  start: { mu: number; ebv: number },
  bounds: readonly [number, number],
  tol: number,
): { mu: number; ebv: number; iterations: number; converged: boolean } {
  const freeE = opts.prior.kind !== 'fixed';
  const clamp = (e: number) => Math.min(bounds[1], Math.max(bounds[0], e));
  let t = freeE ? [start.mu, start.ebv] : [start.mu];
  for (let it = 1; it <= MAX_NEWTON_ITERATIONS; it++) {
    const e0 = freeE ? t[1] : start.ebv;
    const frozen = x.stars.map((s) => componentVariances(s, x.map, t[0], e0, opts, x.tau2));
    const xf: Sample = { ...x, frozen };
    const f = (u: number[]) => sampleLogLikelihood(xf, u[0], freeE ? u[1] : start.ebv, opts);
    const { g, h } = derivatives(f, t);
    // Where the mixture is not concave (ambiguous memberships), the curvature of the complete-data
    // surrogate (memberships held at their current values, as EM does) gives the step instead.
    const l = cholesky(h.map((row) => row.map((v) => -v))) ?? cholesky(surrogateInformation(xf, opts, t, start.ebv));
    let step: number[];
    if (l !== null) step = choleskySolve(l, g);
    else {
      const norm = Math.hypot(...g) || 1;
      step = g.map((gi) => (0.1 * gi) / norm);
    }
    const before = f(t);
    let k = 1;
    let next = t;
    while (k > 1e-8) {
      next = t.map((ti, i) => ti + k * step[i]);
      if (freeE) next[1] = clamp(next[1]);
      if (f(next) >= before) break;
      k /= 2;
    }
    const moved = Math.max(...next.map((v, i) => Math.abs(v - t[i])));
    t = next;
    if (moved < tol) return { mu: t[0], ebv: freeE ? t[1] : start.ebv, iterations: it, converged: true };
  }
  return { mu: t[0], ebv: freeE ? t[1] : start.ebv, iterations: MAX_NEWTON_ITERATIONS, converged: false };
}

/**
 * Maximum-likelihood fit of (mu[, E]) with the mixture above. Stars are those whose single and
 * binary colours lie in the colour range at the current (mu, E); the selection is redone at the
 * solution until it no longer changes (or, if it cycles, reduced to the stars kept in every state
 * of the cycle). Cost O(iterations n).
 */
export function fitTarget(stars: readonly TargetStarInput[], locus: LocusForTargets, opts: TargetFitOptions): TargetFit {
  if (opts.prior.kind === 'free') return fitTargetFreeReddening(stars, locus, opts);
  return fitTargetFrom(stars, locus, opts, { ebv: opts.prior.ebv, bounds: [-Infinity, Infinity] });
}

/** The stars a single-star magnitude window keeps at (mu, E). */
function selection(stars: readonly TargetStarInput[], map: LocusMap, mu: number, ebv: number, opts: TargetFitOptions): boolean[] {
  return stars.map((s) => {
    const m = s.mag - mu - opts.rV * ebv + opts.fehSlope * opts.feh;
    return m >= map.mLo && m <= map.mHi;
  });
}

/** The fit from a given start of E, with E kept within bounds (used for a free E only). */
function fitTargetFrom(
  stars: readonly TargetStarInput[],
  locus: LocusForTargets,
  opts: TargetFitOptions,
  start: { ebv: number; mu?: number; bounds: readonly [number, number]; tolerance?: number },
): TargetFit {
  const map = locusMap(locus);
  const [lo, hi] = locus.colorRange;
  const tau2 = locus.scatter ** 2;
  const weights = binaryWeights(
    stars.map((s) => s.mag),
    locus.binaryFraction,
  );
  let ebv = start.ebv;
  // Start: the median offset of the stars in the colour range read as singles.
  const inColour = stars.filter((s) => s.color - ebv >= lo && s.color - ebv <= hi);
  let mu = start.mu ?? median((inColour.length > 0 ? inColour : stars).map((s) => s.mag - map.P(s.color - ebv) + opts.fehSlope * opts.feh - opts.rV * ebv));
  let used = selection(stars, map, mu, ebv, opts);
  let iterations = 0;
  let converged = false;

  const fitOn = (u: boolean[]): boolean => {
    const sel = stars.filter((_, i) => u[i]);
    if (sel.length < opts.minStars) {
      throw new RangeError(
        `${sel.length} star(s) in the colour range [${lo}, ${hi}] (single and binary colours) at E(B-V) = ${ebv.toFixed(3)}; at least ${opts.minStars} needed`,
      );
    }
    const r = maximise({ stars: sel, map, tau2, weights: weights.filter((_, i) => u[i]) }, opts, { mu, ebv }, start.bounds, start.tolerance ?? STEP_TOL);
    mu = r.mu;
    ebv = r.ebv;
    iterations += r.iterations;
    return r.converged;
  };

  const key = (u: boolean[]) => u.map((b) => (b ? '1' : '0')).join('');
  const seen: boolean[][] = [used];
  for (let pass = 0; pass < MAX_SELECTION_PASSES; pass++) {
    const ok = fitOn(used);
    const next = selection(stars, map, mu, ebv, opts);
    if (key(next) === key(used)) {
      converged = ok;
      break;
    }
    const first = seen.findIndex((u) => key(u) === key(next));
    if (first >= 0) {
      const cycle = seen.slice(first);
      used = stars.map((_, i) => cycle.every((u) => u[i]));
      converged = fitOn(used);
      break;
    }
    seen.push(next);
    used = next;
  }
  return finish(stars, locus, opts, map, { mu, ebv, used, iterations, converged, bounds: start.bounds });
}

/**
 * ln L of a solution on a given set of stars (for comparing the solutions of a free E on the stars
 * both use).
 */
function logLikelihoodOn(stars: readonly TargetStarInput[], locus: LocusForTargets, opts: TargetFitOptions, fit: TargetFit, on: boolean[]): number {
  const weights = binaryWeights(
    stars.map((s) => s.mag),
    locus.binaryFraction,
  ).filter((_, i) => on[i]);
  const x: Sample = { stars: stars.filter((_, i) => on[i]), map: locusMap(locus), tau2: locus.scatter ** 2, weights };
  return sampleLogLikelihood(x, fit.mu, fit.ebv, { ...opts, prior: { kind: 'free' } });
}

/**
 * A target without a reddening prior. The fit above redoes its star sample after each fit, and
 * on sparse or noisy photometry E can walk from a start at 0: dropping stars loosens the fit,
 * which allows a further step (seen in simulated releases: E(B-V) = 0.63 for a true value below
 * 0.1, until too few stars were left). So the fit is started every FREE_EBV_START_STEP across
 * FREE_EBV_INTERVAL and kept inside it; distinct solutions are compared on the stars that both
 * use (the same data for both), and the one that beats every other is kept. E is refused, saying
 * why, when that solution lies at an end of the interval or its error is wider than the interval:
 * the photometry cannot fix it.
 */
function fitTargetFreeReddening(stars: readonly TargetStarInput[], locus: LocusForTargets, opts: TargetFitOptions): TargetFit {
  const [a, b] = FREE_EBV_INTERVAL;
  locusMap(locus); // a locus that cannot be inverted is refused once, with its own reason
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
    throw new RangeError(`E(B-V) is not constrained by the photometry: no start in [${a}, ${b}] gives a fit (${[...reasons].slice(0, 2).join('; ')})`);
  }
  const beats = (x: TargetFit, y: TargetFit) => {
    const common = x.used.map((u, i) => u && y.used[i]);
    // No star in common: the solution on more stars is preferred.
    if (!common.some(Boolean)) return x.nUsed > y.nUsed;
    return logLikelihoodOn(stars, locus, opts, x, common) >= logLikelihoodOn(stars, locus, opts, y, common);
  };
  const wins = found.map((x) => found.filter((y) => y !== x && beats(x, y)).length);
  const searched = found[found.map((_, i) => i).sort((i, j) => wins[j] - wins[i] || found[i].ebv - found[j].ebv)[0]];
  // Polish the chosen solution to the full tolerance.
  const best = fitTargetFrom(stars, locus, opts, { ebv: searched.ebv, mu: searched.mu, bounds: FREE_EBV_INTERVAL });
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

/**
 * Covariance (observed information, prior included) and the sensitivities at the solution.
 * Sensitivities to the locus: the fit is redone on the same stars with each locus quantity moved
 * by +-LOCUS_STEP (relative, at least that in absolute terms) and differenced; the star sample is
 * held fixed, as a first-order propagation requires.
 */
function finish(
  stars: readonly TargetStarInput[],
  locus: LocusForTargets,
  opts: TargetFitOptions,
  map: LocusMap,
  st: { mu: number; ebv: number; used: boolean[]; iterations: number; converged: boolean; bounds: readonly [number, number] },
): TargetFit {
  const freeE = opts.prior.kind !== 'fixed';
  const { mu, ebv, used } = st;
  const sel = stars.filter((_, i) => used[i]);
  const allMags = stars.map((s) => s.mag);
  const selWeights = (f: number) => binaryWeights(allMags, f).filter((_, i) => used[i]);
  const base: Sample = { stars: sel, map, tau2: locus.scatter ** 2, weights: selWeights(locus.binaryFraction) };
  const frozen = sel.map((s) => componentVariances(s, map, mu, ebv, opts, base.tau2));
  const f = (t: number[]) => sampleLogLikelihood({ ...base, frozen }, t[0], freeE ? t[1] : ebv, opts);
  const { h } = derivatives(f, freeE ? [mu, ebv] : [mu]);
  // Observed information; where the mixture is not concave at the solution, the complete-data one.
  const info = h.map((row) => row.map((v) => -v));
  const inv = spdInverse(info) ?? spdInverse(surrogateInformation({ ...base, frozen }, opts, freeE ? [mu, ebv] : [mu], ebv));
  if (inv === null) {
    throw new RangeError(
      freeE ? 'E(B-V) is not constrained by the photometry (flat locus over the stars used)' : 'the distance is not constrained by the stars used',
    );
  }
  const covFit = freeE
    ? inv
    : [
        [inv[0][0], 0],
        [0, 0],
      ];

  // Re-maximise on the same stars with one locus quantity changed (no bounds: a derivative).
  const refit = (l: LocusForTargets): [number, number] => {
    const x: Sample = {
      stars: sel,
      map: locusMap(l),
      tau2: l.scatter ** 2,
      weights: l.binaryFraction === locus.binaryFraction ? base.weights : selWeights(l.binaryFraction),
    };
    const r = maximise(x, opts, { mu, ebv }, [-Infinity, Infinity], STEP_TOL);
    return [r.mu, freeE ? r.ebv : 0];
  };
  const centralDifference = (make: (d: number) => LocusForTargets, value: number): [number, number] => {
    const d = LOCUS_STEP * Math.max(1, Math.abs(value));
    const p = refit(make(d));
    const m = refit(make(-d));
    return [(p[0] - m[0]) / (2 * d), (p[1] - m[1]) / (2 * d)];
  };
  const cols = locus.coeffs.map((c, k) => centralDifference((d) => ({ ...locus, coeffs: locus.coeffs.map((ck, j) => (j === k ? ck + d : ck)) }), c));
  const dThetaDCoeffs = [cols.map((c) => c[0]), cols.map((c) => c[1])];
  // The fraction is moved inside (0, 1) and the scatter kept positive.
  const fr = locus.binaryFraction;
  const dThetaDFraction =
    fr > LOCUS_STEP && fr < 1 - LOCUS_STEP ? centralDifference((d) => ({ ...locus, binaryFraction: fr + d }), 0) : ([0, 0] as [number, number]);
  const tau = locus.scatter;
  const dThetaDScatter = tau > LOCUS_STEP ? centralDifference((d) => ({ ...locus, scatter: tau + d }), 0) : ([0, 0] as [number, number]);

  const pBinary = new Array<number>(stars.length).fill(0);
  let j = 0;
  stars.forEach((s, i) => {
    if (used[i]) pBinary[i] = starLogLikelihood(s, map, mu, ebv, opts, base.tau2, base.weights[j++]).q;
  });
  return {
    mu,
    ebv,
    covFit,
    dThetaDCoeffs,
    dThetaDFraction,
    dThetaDScatter,
    binaryFraction: locus.binaryFraction,
    pBinary,
    used,
    nUsed: sel.length,
    iterations: st.iterations,
    converged: st.converged,
  };
}
