/**
 * Special functions needed for fit-quality numbers.
 * Regularised upper incomplete gamma Q(a, x) by series / continued fraction
 * (the standard Legendre continued fraction and power series; Abramowitz & Stegun 6.5.29, 6.5.31).
 */

function logGamma(z: number): number {
  // Lanczos approximation, g = 7, n = 9 (coefficients as commonly published; accurate to ~1e-15)
  const c = [
    0.99999999999980993, 676.5203681218851, -1259.1392167224028, 771.32342877765313, -176.61502916214059, 12.507343278686905, -0.13857109526572012,
    9.9843695780195716e-6, 1.5056327351493116e-7,
  ];
  if (z < 0.5) return Math.log(Math.PI / Math.sin(Math.PI * z)) - logGamma(1 - z);
  const x0 = z - 1;
  let a = c[0];
  const t = x0 + 7.5;
  for (let i = 1; i < 9; i++) a += c[i] / (x0 + i);
  return 0.5 * Math.log(2 * Math.PI) + (x0 + 0.5) * Math.log(t) - t + Math.log(a);
}

/** Q(a, x) = Gamma(a, x) / Gamma(a), the upper regularised incomplete gamma function. */
export function upperRegularizedGamma(a: number, x: number): number {
  if (x <= 0) return 1;
  const lnPrefix = -x + a * Math.log(x) - logGamma(a);
  if (x < a + 1) {
    let sum = 1 / a;
    let term = sum;
    for (let n = 1; n < 1000; n++) {
      term *= x / (a + n);
      sum += term;
      if (Math.abs(term) < Math.abs(sum) * 1e-16) break;
    }
    return 1 - sum * Math.exp(lnPrefix);
  }
  // Lentz's continued fraction
  const tiny = 1e-300;
  let b = x + 1 - a;
  let c = 1 / tiny;
  let d = 1 / b;
  let h = d;
  for (let i = 1; i < 1000; i++) {
    const an = -i * (i - a);
    b += 2;
    d = an * d + b;
    if (Math.abs(d) < tiny) d = tiny;
    c = b + an / c;
    if (Math.abs(c) < tiny) c = tiny;
    d = 1 / d;
    const del = d * c;
    h *= del;
    if (Math.abs(del - 1) < 1e-16) break;
  }
  return Math.exp(lnPrefix) * h;
}

/** Probability of a chi-square at least this large with dof degrees of freedom. */
export function chiSquarePValue(chi2: number, dof: number): number {
  if (dof <= 0) return NaN;
  return upperRegularizedGamma(dof / 2, chi2 / 2);
}
