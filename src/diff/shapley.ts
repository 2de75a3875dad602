/**
 * Shapley values: the unique split of v(N) - v(empty) among k players that is symmetric,
 * gives nothing to a player that never changes v, and adds up exactly (Shapley 1953,
 * "A value for n-person games"). Here the players are the input groups that differ between
 * two releases and v(S) is H0 of release a with the groups in S taken from release b:
 *   phi_i = sum over S not containing i of |S|! (k - |S| - 1)! / k! * [v(S + i) - v(S)],
 * the average over all k! orders of swapping of the change when i is swapped. It does not
 * depend on any order, and sum_i phi_i = v(N) - v(empty) (the sum telescopes in every order).
 * Cost: k 2^(k-1) differences of the 2^k values.
 */

/** n! for the small n used here (exact in double precision up to 18!). */
function factorial(n: number): number {
  let f = 1;
  for (let i = 2; i <= n; i++) f *= i;
  return f;
}

/**
 * Shapley values of k players from the values of all 2^k coalitions, `value[mask]` with bit i
 * set when player i is in the coalition. Returns phi in player order.
 */
export function shapleyValues(k: number, value: (mask: number) => number): number[] {
  if (k < 0 || k > 20) throw new RangeError(`shapleyValues: k = ${k} players is outside 0..20`);
  const full = (1 << k) - 1;
  const weight = Array.from({ length: k }, (_, s) => (factorial(s) * factorial(k - s - 1)) / factorial(k));
  const phi = new Array<number>(k).fill(0);
  for (let i = 0; i < k; i++) {
    const bit = 1 << i;
    for (let mask = 0; mask <= full; mask++) {
      if (mask & bit) continue;
      phi[i] += weight[popcount(mask)] * (value(mask | bit) - value(mask));
    }
  }
  return phi;
}

export function popcount(x: number): number {
  let n = 0;
  while (x) {
    x &= x - 1;
    n++;
  }
  return n;
}
