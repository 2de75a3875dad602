/**
 * Named tolerances for the tests, and the error helpers that go with them.
 * A test states which tolerance it uses and why; no bare 1e-6 in test files.
 * Relative tolerances are dimensionless; MAG_* are absolute, in magnitudes.
 */

/** Exact: defined values and integer relations must match bit for bit. */
export const EXACT_DEFINITION = 0;

/** A few units in the last place of a double (2.2e-16): the same number reached by another short route. */
export const REL_1E15 = 1e-15;

/** Two careful computations of one smooth quantity (closed form vs converged quadrature, independent codes). */
export const REL_1E12 = 1e-12;

/** Iterative solvers and quadratures stopped at a practical, not machine, precision. */
export const REL_1E9 = 1e-9;

/** Loose relative agreement: published values quoted to about six significant digits. */
export const REL_1E6 = 1e-6;

/** Magnitudes that must agree far below any measurement error (1 micro-mag). */
export const MAG_1E6 = 1e-6;

/** Magnitudes computed two ways with float round-off only (1e-9 mag). */
export const MAG_1E9 = 1e-9;

/** Half a unit in the 4th decimal: a value tabulated to 4 decimals matches to within its rounding. */
export const HALF_UNIT_4TH_DECIMAL = 5e-5;

/** Half a unit in the 1st decimal: a value a page writes with 1 decimal (a percentage) matches to within its rounding. */
export const HALF_UNIT_1ST_DECIMAL = 0.05;

/** Relative error |a - b| / |b| (b is the reference); exact zero only when both are zero. */
export function relErr(a: number, b: number): number {
  if (a === b) return 0;
  return Math.abs(a - b) / Math.abs(b);
}

/** Absolute error |a - b|. */
export function absErr(a: number, b: number): number {
  return Math.abs(a - b);
}

/** Half a unit in the 3rd decimal: a value quoted to 3 decimals matches to within its rounding. */
export const HALF_UNIT_3RD_DECIMAL = 5e-4;

/**
 * Statistical checks of seeded simulations (tests/demo): a sample statistic may
 * differ from its expectation by this many of its own standard errors. A
 * two-sided 4-sigma tail holds 6e-5 of the probability, so a pass at a fixed seed
 * is no accident, while a model wrong by tens of per cent fails by far.
 */
export const STAT_SIGMAS = 4;

/**
 * A maximum located by brute-force search on a grid, or a derivative by central
 * finite differences, agrees with the exact value to about the grid step (1e-4
 * relative in these tests).
 */
export const REL_GRID_SEARCH = 1e-4;

/**
 * Posterior quantiles read off a few-thousand-point grid (trapezoid rule, linear
 * interpolation of the cumulative distribution) against exact or finely integrated
 * quantiles.
 */
export const REL_GRID_QUANTILE = 1e-4;

/**
 * First-order (implicit-function) derivatives of an EM fit against central finite
 * differences of the whole refit: the dependence of the variance weights on the
 * fitted slope is a second-order effect left out of the propagation (about 1 %).
 */
export const REL_FIRST_ORDER_PROPAGATION = 0.02;

/**
 * Two runs of the iterative ladder fit on data that differ only by round-off (for example a
 * blinded and an unblinded release), each stopped by the fit's own convergence limits
 * (src/ladder/globalFit.ts: alpha to 1e-6, beta to 1e-5): relative agreement of parameters and
 * their errors (sandwich errors of alpha and beta are the most sensitive, ~1e-7 relative).
 */
export const FIT_REPEAT_REL = 1e-6;
