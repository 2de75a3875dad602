/**
 * "Did you mean ...?" for misspelt keys and file names.
 */

/**
 * Optimal-string-alignment distance (Damerau-Levenshtein restricted to
 * non-overlapping transpositions): the least number of insertions, deletions,
 * substitutions and swaps of two neighbouring characters that turn a into b.
 * Wagner & Fischer (1974) dynamic programme with Damerau's (1964) transposition
 * step. Cost O(|a| |b|) time and memory; inputs here are short names.
 */
export function editDistance(a: string, b: string): number {
  const n = a.length;
  const m = b.length;
  const d: number[][] = Array.from({ length: n + 1 }, (_, i) => {
    const row = new Array<number>(m + 1).fill(0);
    row[0] = i;
    return row;
  });
  for (let j = 0; j <= m; j++) d[0][j] = j;
  for (let i = 1; i <= n; i++) {
    for (let j = 1; j <= m; j++) {
      const cost = a[i - 1] === b[j - 1] ? 0 : 1;
      let best = Math.min(d[i - 1][j] + 1, d[i][j - 1] + 1, d[i - 1][j - 1] + cost);
      if (i > 1 && j > 1 && a[i - 1] === b[j - 2] && a[i - 2] === b[j - 1]) best = Math.min(best, d[i - 2][j - 2] + 1);
      d[i][j] = best;
    }
  }
  return d[n][m];
}

/**
 * The candidate nearest to `word` (ties: the first in the given order), if it is
 * within `maxDistance` edits; by default 40 % of the word's length, at least 2
 * (so `blinding` -> `blinded`, 3 edits, still gets its suggestion).
 */
export function nearest(word: string, candidates: readonly string[], maxDistance?: number): string | undefined {
  const limit = maxDistance ?? Math.max(2, Math.round(word.length * 0.4));
  let best: string | undefined;
  let bestDistance = Infinity;
  for (const c of candidates) {
    const dist = editDistance(word.toLowerCase(), c.toLowerCase());
    if (dist < bestDistance) {
      best = c;
      bestDistance = dist;
    }
  }
  return bestDistance <= limit ? best : undefined;
}
