/** fast-check generators shared by the property and independent-check tests (always run seeded). */
import fc from 'fast-check';

/** Row-normalise a non-negative matrix. */
export function rowNormalise(m: number[][]): number[][] {
  return m.map((row) => {
    const s = row.reduce((a, b) => a + b, 0);
    return row.map((v) => v / s);
  });
}

/** An n × n matrix with entries in [lo, 1]. */
export const rawMatrix = (n: number, lo: number): fc.Arbitrary<number[][]> =>
  fc.array(fc.array(fc.double({ min: lo, max: 1, noNaN: true }), { minLength: n, maxLength: n }), { minLength: n, maxLength: n });

/** A strictly positive row-stochastic matrix (ergodic and aperiodic), 2 to 7 states. */
export const positiveChain = fc.integer({ min: 2, max: 7 }).chain((n) => rawMatrix(n, 0.01).map(rowNormalise));

/** A row-stochastic matrix with about a third of the off-diagonal entries 0 (diagonal kept > 0). */
export const sparseChain = fc
  .integer({ min: 2, max: 7 })
  .chain((n) => fc.tuple(rawMatrix(n, 0.01), fc.array(fc.array(fc.boolean(), { minLength: n, maxLength: n }), { minLength: n, maxLength: n })))
  .map(([m, keep]) => rowNormalise(m.map((row, i) => row.map((v, j) => (i === j || keep[i][j] || keep[j][i] ? v : 0)))));

/** Non-negative counts for n states. */
export const countsVector = (n: number, max = 1000): fc.Arbitrary<number[]> =>
  fc.array(fc.double({ min: 0, max, noNaN: true }), { minLength: n, maxLength: n });

export const names = (n: number): string[] => Array.from({ length: n }, (_, i) => `s${i}`);

/** Seeded run options for fc.assert. */
export const RUN = { seed: 20260601, numRuns: 60 } as const;
