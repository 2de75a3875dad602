/**
 * A rule across columns of the supernova tables: the light-curve fit's
 * uncertainties and covariances of (m_b, x1, c) must form a covariance matrix,
 * i.e. a symmetric positive-definite 3x3 matrix
 *
 *   | m_b_err^2   cov_mb_x1   cov_mb_c  |
 *   | cov_mb_x1   x1_err^2    cov_x1_c  |
 *   | cov_mb_c    cov_x1_c    c_err^2   |.
 *
 * Otherwise the variance of the standardised magnitude m_b + alpha x1 - beta c
 * is negative for some alpha and beta, and the fit has no meaning (found by
 * the fuzz test: two swapped columns gave a non-finite error). Test: every
 * pairwise correlation strictly inside (-1, 1), then the determinant > 0
 * (Sylvester's criterion on the leading principal minors; the diagonal is
 * already > 0 because every *_err column is). Cost: O(1) per row.
 */
import type { SupernovaLightCurve } from '../types/release.ts';
import type { Problem } from './issues.ts';

const PAIRS = [
  { column: 'cov_mb_x1', cov: 'covMbX1', a: 'mBErr', b: 'x1Err', names: ['m_b_err', 'x1_err'] },
  { column: 'cov_mb_c', cov: 'covMbC', a: 'mBErr', b: 'cErr', names: ['m_b_err', 'c_err'] },
  { column: 'cov_x1_c', cov: 'covX1C', a: 'x1Err', b: 'cErr', names: ['x1_err', 'c_err'] },
] as const;

const fmt = (x: number): string => String(Number(x.toPrecision(4)));

/** Problems of the rows whose (m_b, x1, c) covariance is not positive definite (one per row at most). */
export function lightCurveCovarianceProblems(rows: readonly SupernovaLightCurve[]): Problem[] {
  const problems: Problem[] = [];
  for (const row of rows) {
    const rho = PAIRS.map((p) => row[p.cov] / (row[p.a] * row[p.b]));
    const worst = rho.reduce((w, r, i) => (Math.abs(r) > Math.abs(rho[w]!) ? i : w), 0);
    if (Math.abs(rho[worst]!) >= 1) {
      const p = PAIRS[worst]!;
      problems.push({
        code: 'bad-covariance',
        line: row.line,
        column: p.column,
        message: `the covariance implies a correlation of ${fmt(rho[worst]!)} between ${p.names[0].replace('_err', '')} and ${p.names[1].replace('_err', '')}, beyond ±1`,
        expected: `|${p.column}| < ${p.names[0]} × ${p.names[1]} = ${fmt(row[p.a] * row[p.b])}`,
        found: fmt(row[p.cov]),
      });
      continue;
    }
    const [r12, r13, r23] = rho as [number, number, number];
    // Determinant of the correlation matrix (same sign as the covariance matrix's).
    const det = 1 - r12 * r12 - r13 * r13 - r23 * r23 + 2 * r12 * r13 * r23;
    if (!(det > 0)) {
      problems.push({
        code: 'bad-covariance',
        line: row.line,
        column: 'cov_x1_c',
        message: 'the three covariances of m_b, x1 and c together are not a valid covariance matrix (not positive definite)',
        expected: 'correlations that a real fit can give (determinant of the correlation matrix > 0)',
        found: `correlations ${fmt(r12)} (m_b, x1), ${fmt(r13)} (m_b, c), ${fmt(r23)} (x1, c)`,
      });
    }
  }
  return problems;
}
