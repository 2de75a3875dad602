// The numerical core (src/math/cholesky.ts): factor, solves, inverse, and its one policy for
// singular or not-positive-definite input. Kinds: comparison with a published worked example;
// edge cases (each case of the policy).
import { describe, expect, it } from 'vitest';
import {
  choleskyFactor,
  inverseFromCholesky,
  NotPositiveDefiniteError,
  PIVOT_RELATIVE_FLOOR,
  solveCholesky,
  solveCholeskyMany,
} from '../../src/math/cholesky.ts';

// Worked example of the Cholesky decomposition: A = [[4, 12, -16], [12, 37, -43], [-16, -43, 98]]
// has L = [[2, 0, 0], [6, 1, 0], [-8, 5, 3]] (Wikipedia, "Cholesky decomposition", section Example;
// also checked by hand: L L^T reproduces A).
const A = [4, 12, -16, 12, 37, -43, -16, -43, 98];
const L = [2, 0, 0, 6, 1, 0, -8, 5, 3];

describe('Cholesky core (published worked example)', () => {
  it('factors the worked example exactly', () => {
    expect(Array.from(choleskyFactor(A, 3))).toEqual(L);
  });

  it('solves A x = b with the factor, for one and for several right-hand sides', () => {
    // x = (1, -2, 0.5) gives b = A x, computed by hand: (4 - 24 - 8, 12 - 74 - 21.5, -16 + 86 + 49)
    const b = [-28, -83.5, 119];
    const x = solveCholesky(choleskyFactor(A, 3), 3, b);
    [1, -2, 0.5].forEach((v, i) => expect(x[i]).toBeCloseTo(v, 12));
    const many = solveCholeskyMany(choleskyFactor(A, 3), 3, Float64Array.from([-28, 4, -83.5, 12, 119, -16]), 2);
    // second column: b = A e1 = first column of A, so x = e1
    expect([many[0], many[2], many[4]].map((v) => Number(v.toFixed(12)))).toEqual([1, -2, 0.5]);
    expect([many[1], many[3], many[5]].map((v) => Number(v.toFixed(12)))).toEqual([1, 0, 0]);
  });

  it('gives an inverse whose product with A is the identity', () => {
    const inv = inverseFromCholesky(choleskyFactor(A, 3), 3);
    for (let i = 0; i < 3; i++) {
      for (let j = 0; j < 3; j++) {
        let s = 0;
        for (let k = 0; k < 3; k++) s += A[i * 3 + k] * inv[k * 3 + j];
        expect(s).toBeCloseTo(i === j ? 1 : 0, 12);
      }
    }
  });
});

describe('Cholesky core: one policy for singular or not-positive-definite input (edge cases)', () => {
  const failsAt = (a: number[], n: number, index: number, labels?: string[]) => {
    let err: unknown = null;
    try {
      choleskyFactor(a, n, labels);
    } catch (e) {
      err = e;
    }
    expect(err).toBeInstanceOf(NotPositiveDefiniteError);
    expect((err as NotPositiveDefiniteError).index).toBe(index);
    return err as NotPositiveDefiniteError;
  };

  it('exactly singular (rank one): fails at the dependent pivot', () => failsAt([1, 1, 1, 1], 2, 1));
  it('indefinite: fails at the negative pivot', () => failsAt([1, 2, 2, 1], 2, 1));
  it('negative or zero diagonal: fails at once', () => {
    failsAt([-1, 0, 0, 1], 2, 0);
    failsAt([0, 0, 0, 1], 2, 0);
  });
  it('not finite: fails', () => {
    failsAt([Number.NaN, 0, 0, 1], 2, 0);
    failsAt([1, 0, 0, Number.POSITIVE_INFINITY], 2, 1);
  });
  it('numerically singular: a pivot below the relative floor fails, one above it passes', () => {
    failsAt([1, 1, 1, 1 + PIVOT_RELATIVE_FLOOR / 10], 2, 1);
    expect(() => choleskyFactor([1, 1, 1, 1 + 1e-8], 2)).not.toThrow();
  });
  it('names the failing row by its label when given', () => {
    const e = failsAt([1, 0, 0, 0, 1, 1, 0, 1, 1], 3, 2, ['mu:a', 'mu:b', 'M_W']);
    expect(e.label).toBe('M_W');
    expect(e.message).toMatch(/M_W/);
  });
  it('a Schur complement is judged against the diagonal before elimination', () => {
    // S = 1e-13 is a fine pivot relative to itself but not relative to an original diagonal of 1
    expect(() => choleskyFactor([1e-13], 1)).not.toThrow();
    expect(() => choleskyFactor([1e-13], 1, undefined, [1])).toThrow(NotPositiveDefiniteError);
  });
});
