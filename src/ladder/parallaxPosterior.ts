/**
 * Distance posterior of one star from its parallax under the exponentially
 * decreasing space density (EDSD) prior of Bailer-Jones (2015, PASP 127, 994):
 *
 *   prior       P(r) = r^2 exp(-r/L) / (2 L^3),  r > 0
 *   likelihood  N(parallax | 1/r, sigma^2)
 *   ln P(r | parallax) = 2 ln r - r/L - (parallax - 1/r)^2 / (2 sigma^2) + const.
 *
 * Units: r and L in kpc, parallax and sigma in mas (1/kpc = 1 mas), so no
 * conversion factor appears. The posterior is reported by its mode and by
 * quantiles from a numerical grid, never by a symmetric +- sigma.
 */

/**
 * Default EDSD length scale, kpc: the value that worked well for a simulated
 * all-sky catalogue (Astraatmadja & Bailer-Jones 2016, ApJ 832, 137; from memory).
 * It is a choice of the analysis and is recorded with the results.
 */
export const DEFAULT_EDSD_LENGTH_KPC = 1.35;

/** Posterior quantiles reported for every star (5, 50, 95 %). */
export const EDSD_QUANTILES = [0.05, 0.5, 0.95] as const;

/** Grid points used for the quantiles (uniform in ln r between the bounds below). */
const QUANTILE_GRID_POINTS = 2001;

/**
 * The grid ends where ln P has fallen this far below its maximum: e^-40 ~ 4e-18,
 * so the mass left outside is negligible even for very narrow posteriors.
 */
const GRID_LOG_DROP = 40;

export interface EdsdMode {
  modeKpc: number;
  /** true when the posterior has two local maxima (three positive roots of the cubic). */
  bimodal: boolean;
}

export interface EdsdSummary extends EdsdMode {
  q05Kpc: number;
  q50Kpc: number;
  q95Kpc: number;
}

function checkInputs(parallaxMas: number, errMas: number, lengthKpc: number): void {
  if (!Number.isFinite(parallaxMas)) throw new RangeError(`parallax must be finite, got ${parallaxMas}`);
  if (!(errMas > 0) || !Number.isFinite(errMas)) throw new RangeError(`parallax error must be > 0, got ${errMas}`);
  if (!(lengthKpc > 0) || !Number.isFinite(lengthKpc)) throw new RangeError(`EDSD length scale must be > 0 kpc, got ${lengthKpc}`);
}

/** Unnormalised ln P(r | parallax) of the EDSD posterior (r in kpc). Cost O(1). */
export function edsdLogPosterior(rKpc: number, parallaxMas: number, errMas: number, lengthKpc: number): number {
  if (!(rKpc > 0)) return -Infinity;
  const d = parallaxMas - 1 / rKpc;
  return 2 * Math.log(rKpc) - rKpc / lengthKpc - (d * d) / (2 * errMas * errMas);
}

/**
 * The cubic whose positive roots are the stationary points of the posterior,
 *   g(r) = r^3/L - 2 r^2 + (parallax/sigma^2) r - 1/sigma^2,
 * obtained by zeroing d ln P / dr = -g(r)/r^3 (Bailer-Jones 2015, re-derived).
 */
export function edsdModeCubic(rKpc: number, parallaxMas: number, errMas: number, lengthKpc: number): number {
  const s2 = errMas * errMas;
  return (rKpc * rKpc * rKpc) / lengthKpc - 2 * rKpc * rKpc + (parallaxMas * rKpc - 1) / s2;
}

/**
 * All positive roots of the mode cubic, ascending, each where g changes sign.
 * Method: the critical points of g (roots of the quadratic g') split (0, R) into
 * intervals on which g is monotonic, R being Cauchy's bound on the roots; each
 * interval with a sign change holds exactly one root, found by Newton's method
 * safeguarded with bisection. This stays accurate when the coefficients span
 * many decades (sigma -> 0 or sigma -> infinity), where the closed-form
 * (Cardano) solution loses digits. Cost: O(100) evaluations at most per root.
 */
export function edsdCubicPositiveRoots(parallaxMas: number, errMas: number, lengthKpc: number): number[] {
  checkInputs(parallaxMas, errMas, lengthKpc);
  const L = lengthKpc;
  const s2 = errMas * errMas;
  const g = (r: number) => edsdModeCubic(r, parallaxMas, errMas, L);
  const dg = (r: number) => (3 * r * r) / L - 4 * r + parallaxMas / s2;

  // Critical points: (3/L) r^2 - 4 r + parallax/s2 = 0, numerically stable form.
  const a = 3 / L;
  const c = parallaxMas / s2;
  const disc = 16 - 4 * a * c;
  const breaks: number[] = [0];
  if (disc > 0) {
    const q = 0.5 * (4 + Math.sqrt(disc));
    for (const r of [q / a, c / q].sort((x, y) => x - y)) if (r > 0) breaks.push(r);
  }
  const upper = 1 + L * Math.max(2, Math.abs(c), 1 / s2);
  breaks.push(Math.max(upper, breaks[breaks.length - 1] * 2));

  const roots: number[] = [];
  for (let k = 0; k + 1 < breaks.length; k++) {
    const lo = breaks[k];
    const hi = breaks[k + 1];
    const glo = g(lo);
    // A zero exactly at a critical point is a double root (no sign change, not an extremum of ln P).
    if (glo * g(hi) < 0) roots.push(safeguardedNewton(g, dg, lo, hi, glo));
  }
  return roots;
}

/** Root of a monotonic function on [lo, hi] with f(lo) f(hi) < 0 (Newton + bisection). */
function safeguardedNewton(f: (x: number) => number, df: (x: number) => number, lo0: number, hi0: number, flo: number): number {
  let lo = lo0;
  let hi = hi0;
  let x = 0.5 * (lo + hi);
  for (let it = 0; it < 500; it++) {
    const fx = f(x);
    if (fx === 0) return x;
    if (fx * flo > 0) lo = x;
    else hi = x;
    const step = fx / df(x);
    let next = x - step;
    if (!(next > lo && next < hi)) next = 0.5 * (lo + hi);
    if (Math.abs(next - x) <= 1e-15 * Math.abs(next) || hi - lo <= 1e-15 * Math.abs(x)) return next;
    x = next;
  }
  return x;
}

/**
 * Mode of the EDSD posterior. Roots of the cubic where g goes from negative to
 * positive are local maxima of ln P; with three positive roots (two maxima) ln P
 * is evaluated at both and the global maximum returned, with bimodal = true.
 * (Taking the smallest root, as simple implementations do, can pick the lower peak.)
 * A non-positive parallax gives exactly one positive root (Descartes' rule of signs).
 */
export function edsdPosteriorMode(parallaxMas: number, errMas: number, lengthKpc: number): EdsdMode {
  const maxima = edsdLocalMaxima(parallaxMas, errMas, lengthKpc);
  let best = maxima[0];
  for (const r of maxima) {
    if (edsdLogPosterior(r, parallaxMas, errMas, lengthKpc) > edsdLogPosterior(best, parallaxMas, errMas, lengthKpc)) best = r;
  }
  return { modeKpc: best, bimodal: maxima.length > 1 };
}

function edsdLocalMaxima(parallaxMas: number, errMas: number, lengthKpc: number): number[] {
  const roots = edsdCubicPositiveRoots(parallaxMas, errMas, lengthKpc);
  // g < 0 near r = 0 and g > 0 for large r, so roots alternate max, min, max.
  return roots.filter((_, i) => i % 2 === 0);
}

/**
 * Mode and 5/50/95 % quantiles of the EDSD posterior, kpc.
 * Grid: the bounds are where ln P falls GRID_LOG_DROP below its maximum, found by
 * doubling/halving from the outer maxima then bisection (ln P is monotonic outside
 * the outer maxima); between them QUANTILE_GRID_POINTS points uniform in u = ln r,
 * density P(r) r, cumulative trapezoid rule, linear interpolation of the CDF.
 * Cost O(QUANTILE_GRID_POINTS).
 */
export function edsdPosteriorSummary(parallaxMas: number, errMas: number, lengthKpc: number): EdsdSummary {
  const maxima = edsdLocalMaxima(parallaxMas, errMas, lengthKpc);
  const { modeKpc, bimodal } = edsdPosteriorMode(parallaxMas, errMas, lengthKpc);
  const lnP = (r: number) => edsdLogPosterior(r, parallaxMas, errMas, lengthKpc);
  const target = lnP(modeKpc) - GRID_LOG_DROP;
  const rLo = boundWhereBelow(lnP, maxima[0], target, 0.5);
  const rHi = boundWhereBelow(lnP, maxima[maxima.length - 1], target, 2);

  const n = QUANTILE_GRID_POINTS;
  const u0 = Math.log(rLo);
  const du = (Math.log(rHi) - u0) / (n - 1);
  const logDens = new Array<number>(n);
  let maxLog = -Infinity;
  const halfInvS2 = 1 / (2 * errMas * errMas);
  for (let k = 0; k < n; k++) {
    // ln P(r) + ln r written in u = ln r (one exponential per point instead of exp and log).
    const u = u0 + k * du;
    const r = Math.exp(u);
    const d = parallaxMas - 1 / r;
    logDens[k] = 3 * u - r / lengthKpc - d * d * halfInvS2;
    if (logDens[k] > maxLog) maxLog = logDens[k];
  }
  const cdf = new Array<number>(n).fill(0);
  let prev = Math.exp(logDens[0] - maxLog);
  for (let k = 1; k < n; k++) {
    const cur = Math.exp(logDens[k] - maxLog);
    cdf[k] = cdf[k - 1] + 0.5 * (prev + cur) * du;
    prev = cur;
  }
  const total = cdf[n - 1];
  const quantile = (p: number): number => {
    const want = p * total;
    let k = 1;
    while (k < n - 1 && cdf[k] < want) k++;
    const frac = (want - cdf[k - 1]) / (cdf[k] - cdf[k - 1]);
    return Math.exp(u0 + (k - 1 + frac) * du);
  };
  const [q05Kpc, q50Kpc, q95Kpc] = EDSD_QUANTILES.map(quantile);
  return { modeKpc, bimodal, q05Kpc, q50Kpc, q95Kpc };
}

/**
 * From a maximum r0 of a function monotonic beyond it (in the direction of
 * `factor`), the point where it drops to `target`: multiply r by factor until below
 * the target, then bisect in ln r (60 steps).
 */
function boundWhereBelow(f: (r: number) => number, r0: number, target: number, factor: number): number {
  let inside = r0;
  let outside = r0 * factor;
  for (let it = 0; it < 2000 && f(outside) > target; it++) {
    inside = outside;
    outside *= factor;
  }
  for (let it = 0; it < 60; it++) {
    const mid = Math.sqrt(inside * outside);
    if (f(mid) > target) inside = mid;
    else outside = mid;
  }
  return outside;
}
