import { describe, expect, it } from 'vitest';
import { shapleyValues } from '../../src/diff/shapley.ts';
import { createRng } from '../../src/demo/index.ts';
import { REL_1E12, relErr } from './tolerances.ts';

/** Independent reference: the average over all k! orders of the marginal change of each player. */
function shapleyByPermutations(k: number, v: (mask: number) => number): number[] {
  const phi = new Array<number>(k).fill(0);
  let count = 0;
  const perm = Array.from({ length: k }, (_, i) => i);
  const visit = (n: number) => {
    if (n === 1) {
      let mask = 0;
      for (const p of perm) {
        phi[p] += v(mask | (1 << p)) - v(mask);
        mask |= 1 << p;
      }
      count++;
      return;
    }
    for (let i = 0; i < n; i++) {
      visit(n - 1);
      const j = n % 2 === 0 ? i : 0;
      [perm[j], perm[n - 1]] = [perm[n - 1], perm[j]];
    }
  };
  visit(k); // Heap's algorithm
  return phi.map((x) => x / count);
}

describe('Shapley values', () => {
  it('two players: phi_1 = (v1 + v12 - v2) / 2 (from the definition, Shapley 1953)', () => {
    const v = [0, 3, 5, 11]; // v(empty), v({1}), v({2}), v({1,2})
    const phi = shapleyValues(2, (m) => v[m]);
    expect(phi[0]).toBe((3 + 11 - 5) / 2);
    expect(phi[1]).toBe((5 + 11 - 3) / 2);
  });

  it('an additive game gives each player its own effect', () => {
    const effect = [0.3, -1.2, 0.05, 2.5];
    const v = (m: number) => effect.reduce((s, e, i) => (m & (1 << i) ? s + e : s), 70);
    const phi = shapleyValues(4, v);
    phi.forEach((p, i) => expect(relErr(p, effect[i])).toBeLessThan(REL_1E12));
  });

  it('agrees with the average over all orders for a random 5-player game, and adds up', () => {
    const rng = createRng(42);
    const values = Array.from({ length: 32 }, () => 70 + rng.normal());
    const v = (m: number) => values[m];
    const phi = shapleyValues(5, v);
    const ref = shapleyByPermutations(5, v);
    phi.forEach((p, i) => expect(Math.abs(p - ref[i])).toBeLessThan(REL_1E12 * 70));
    const total = values[31] - values[0];
    expect(
      relErr(
        phi.reduce((s, x) => s + x, 0),
        total,
      ),
    ).toBeLessThan((REL_1E12 * 70) / Math.abs(total));
  });

  it('a player that never changes the value gets zero', () => {
    const v = (m: number) => (m & 1 ? 1 : 0) * (m & 4 ? 2 : 1); // player 1 (bit 2) is a dummy
    expect(shapleyValues(3, v)[1]).toBe(0);
  });
});
