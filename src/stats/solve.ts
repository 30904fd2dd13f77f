/**
 * Solution of a small dense linear system A x = b by Gaussian elimination with partial pivoting
 * (Golub & Van Loan, Matrix Computations, 4th ed. 2013, §3.4).
 */
import { TidemarkError } from '../errors.js';

/**
 * Solves A x = b for square A. Inputs are not modified.
 *
 * A pivot smaller than 1e-12 times the largest entry of A in absolute value counts as zero.
 *
 * @throws {TidemarkError} INPUT_INVALID when the shapes do not match or an entry is not finite;
 *   MATRIX_INVALID when A is singular (to that tolerance).
 * @example solveLinear([[2, 1], [1, 3]], [3, 5]) // [0.8, 1.4]
 */
export function solveLinear(A: readonly (readonly number[])[], b: readonly number[]): number[] {
  const n = A.length;
  if (b.length !== n || A.some((row) => row.length !== n)) {
    throw new TidemarkError('INPUT_INVALID', `solveLinear: A must be ${n}×${n} to match b of length ${b.length}`);
  }
  const M = A.map((row, i) => [...row, b[i]]);
  let scale = 0;
  for (const row of M) for (const v of row.slice(0, n)) {
    if (!Number.isFinite(v)) throw new TidemarkError('INPUT_INVALID', 'solveLinear: A has a non-finite entry');
    scale = Math.max(scale, Math.abs(v));
  }
  if (b.some((v) => !Number.isFinite(v))) throw new TidemarkError('INPUT_INVALID', 'solveLinear: b has a non-finite entry');
  const tol = 1e-12 * scale;
  for (let col = 0; col < n; col++) {
    let pivot = col;
    for (let r = col + 1; r < n; r++) if (Math.abs(M[r][col]) > Math.abs(M[pivot][col])) pivot = r;
    if (!(Math.abs(M[pivot][col]) > tol)) throw new TidemarkError('MATRIX_INVALID', `solveLinear: the matrix is singular (column ${col + 1})`);
    [M[col], M[pivot]] = [M[pivot], M[col]];
    for (let r = col + 1; r < n; r++) {
      const f = M[r][col] / M[col][col];
      if (f === 0) continue;
      for (let c = col; c <= n; c++) M[r][c] -= f * M[col][c];
    }
  }
  const x = new Array<number>(n);
  for (let r = n - 1; r >= 0; r--) {
    let s = M[r][n];
    for (let c = r + 1; c < n; c++) s -= M[r][c] * x[c];
    x[r] = s / M[r][r];
  }
  return x;
}
