/**
 * Row-normalised transition rates: rates[i][j] = counts[i][j] / Σ_j counts[i][j].
 * A row with no users has no rates: it is `null` (the "not enough data" policy of the flows layer is
 * to return null with the row's n beside it, never to divide by zero).
 * Example: [[3, 1], [0, 0]] → [[0.75, 0.25], null].
 */
export function rowRates(counts: number[][]): (number[] | null)[] {
  return counts.map((row) => {
    const n = row.reduce((a, b) => a + b, 0);
    return n === 0 ? null : row.map((v) => v / n);
  });
}

/** Σ of each row. */
export function rowSums(counts: number[][]): number[] {
  return counts.map((row) => row.reduce((a, b) => a + b, 0));
}

/** Element-wise sum of several matrices of one shape. */
export function sumMatrices(ms: number[][][], size: number): number[][] {
  const out = Array.from({ length: size }, () => new Array<number>(size).fill(0));
  for (const m of ms) for (let i = 0; i < size; i++) for (let j = 0; j < size; j++) out[i][j] += m[i][j];
  return out;
}
