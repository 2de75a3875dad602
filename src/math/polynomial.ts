/**
 * Polynomials in a shifted variable, p(x) = sum_k c[k] x^k with x = value - pivot.
 * Evaluated by Horner's rule (cost O(degree)); the shift keeps the power basis
 * well conditioned over a short colour interval.
 */

/** p(x) by Horner's rule. */
export function polyValue(coeffs: readonly number[], x: number): number {
  let s = 0;
  for (let k = coeffs.length - 1; k >= 0; k--) s = s * x + coeffs[k];
  return s;
}

/** p'(x) = sum_k k c[k] x^(k-1), by Horner's rule. */
export function polyDerivative(coeffs: readonly number[], x: number): number {
  let s = 0;
  for (let k = coeffs.length - 1; k >= 1; k--) s = s * x + k * coeffs[k];
  return s;
}

/** Row of the power basis [1, x, x^2, ..., x^degree] (the design-matrix row of p). */
export function powerBasis(x: number, degree: number): number[] {
  const row = new Array<number>(degree + 1);
  row[0] = 1;
  for (let k = 1; k <= degree; k++) row[k] = row[k - 1] * x;
  return row;
}
