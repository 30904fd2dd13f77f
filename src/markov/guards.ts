/**
 * Entry checks shared by the public functions of the module: each throws a {@link TidemarkError}
 * whose one-line message names the row or state and what to do. Cheap (O(n²)), so every public
 * function runs them on what it is given.
 */
import { TidemarkError } from '../errors.js';
import { fmt, rowName, stateName } from './names.js';
import type { Matrix, Vector } from './types.js';

/** Tolerance on a row sum: |Σ_j P[i][j] − 1| ≤ 1e-6. */
export const ROW_SUM_TOLERANCE = 1e-6;

/**
 * Checks that `matrix` is square (n × n for n = `states.length` when names are given), every entry a
 * finite number ≥ 0 and every row sums to 1 within {@link ROW_SUM_TOLERANCE}.
 *
 * @throws TidemarkError `MATRIX_INVALID`, key `matrix[i]` or `matrix[i][j]`.
 * @example assertStochastic([[0.5, 0.5], [0, 1]]) // passes; [[0.5, 0.4], [0, 1]] throws on row 0
 */
export function assertStochastic(matrix: Matrix, states?: readonly string[]): void {
  assertNonNegativeSquare(matrix, states);
  matrix.forEach((row, i) => {
    const sum = row.reduce((a, b) => a + b, 0);
    if (Math.abs(sum - 1) > ROW_SUM_TOLERANCE) {
      throw new TidemarkError(
        'MATRIX_INVALID',
        `${rowName(states, i)} sums to ${fmt(sum)}; each row must sum to 1`,
        { key: `matrix[${i}]` },
        'fix the row so its entries add up to 1 (within 1e-6)',
      );
    }
  });
}

/**
 * Checks that `matrix` is square (and n = `states.length` when names are given) with finite entries ≥ 0.
 * Used for count matrices too, which need not sum to 1.
 *
 * @throws TidemarkError `MATRIX_INVALID`.
 */
export function assertNonNegativeSquare(matrix: Matrix, states?: readonly string[], what = 'matrix'): void {
  if (!Array.isArray(matrix) || matrix.length === 0) {
    throw new TidemarkError('MATRIX_INVALID', `${what} has no rows`, { key: what }, 'give one row per state');
  }
  const n = states ? states.length : matrix.length;
  if (matrix.length !== n) {
    throw new TidemarkError('MATRIX_INVALID', `${what} has ${matrix.length} rows for ${n} states`, { key: what }, 'give one row per state, in the order of the states');
  }
  matrix.forEach((row, i) => {
    if (!Array.isArray(row) || row.length !== n) {
      const len = Array.isArray(row) ? row.length : 0;
      throw new TidemarkError('MATRIX_INVALID', `${rowName(states, i)} of ${what} has ${len} entries; expected ${n}`, { key: `${what}[${i}]` }, 'give one entry per state in every row');
    }
    row.forEach((v, j) => {
      if (typeof v !== 'number' || !Number.isFinite(v)) {
        throw new TidemarkError('MATRIX_INVALID', `${what} entry ${rowName(states, i)} → ${stateName(states, j)} is not a finite number`, { key: `${what}[${i}][${j}]` }, 'use plain numbers');
      }
      if (v < 0) {
        throw new TidemarkError('MATRIX_INVALID', `${what} entry ${rowName(states, i)} → ${stateName(states, j)} is negative (${fmt(v)})`, { key: `${what}[${i}][${j}]` }, 'entries must be 0 or more');
      }
    });
  });
}

/**
 * Checks a vector of counts: length n, finite entries ≥ 0.
 *
 * @throws TidemarkError `INPUT_INVALID`, key `<what>[i]`.
 */
export function assertCounts(v: Vector, n: number, what: string, states?: readonly string[]): void {
  if (!Array.isArray(v) || v.length !== n) {
    throw new TidemarkError('INPUT_INVALID', `${what} has ${Array.isArray(v) ? v.length : 0} entries for ${n} states`, { key: what }, 'give one count per state');
  }
  v.forEach((x, i) => {
    if (typeof x !== 'number' || !Number.isFinite(x) || x < 0) {
      throw new TidemarkError('INPUT_INVALID', `${what} for ${stateName(states, i)} must be a finite number ≥ 0 (got ${String(x)})`, { key: `${what}[${i}]` });
    }
  });
}

/**
 * Checks a whole number within [min, max].
 *
 * @throws TidemarkError `INPUT_INVALID` naming the option.
 */
export function assertInteger(x: number, what: string, min: number, max = Number.MAX_SAFE_INTEGER): void {
  if (!Number.isInteger(x) || x < min || x > max) {
    throw new TidemarkError('INPUT_INVALID', `${what} must be a whole number from ${min}${max < Number.MAX_SAFE_INTEGER ? ` to ${max}` : ''} (got ${String(x)})`, { key: what });
  }
}
