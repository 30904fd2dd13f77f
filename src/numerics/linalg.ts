/**
 * Small dense linear algebra for systems of a few dozen unknowns (Markov chains, the log-rank
 * covariance): products, sub-matrices and the project's one linear solver, Gauss–Jordan elimination
 * with partial pivoting (Golub & Van Loan, *Matrix Computations*, 4th ed. 2013, §3.4).
 * Pure: inputs are never modified.
 */
import { TidemarkError } from '../errors.js';

/** A dense matrix, rows first. */
export type Matrix = number[][];
/** A dense vector. */
export type Vector = number[];

/** The n × n identity. @example identity(2) // [[1, 0], [0, 1]] */
export function identity(n: number): Matrix {
  return Array.from({ length: n }, (_, i) => Array.from({ length: n }, (_, j) => (i === j ? 1 : 0)));
}

/** Aᵀ. @example transpose([[1, 2], [3, 4]]) // [[1, 3], [2, 4]] */
export function transpose(a: Matrix): Matrix {
  const cols = a[0]?.length ?? 0;
  return Array.from({ length: cols }, (_, j) => a.map((row) => row[j]));
}

/** Row vector times matrix, x·A. @example vecMat([1, 1], [[1, 2], [3, 4]]) // [4, 6] */
export function vecMat(x: Vector, a: Matrix): Vector {
  const out = new Array<number>(a[0]?.length ?? 0).fill(0);
  for (let i = 0; i < x.length; i++) {
    const xi = x[i];
    if (xi === 0) continue;
    const row = a[i];
    for (let j = 0; j < out.length; j++) out[j] += xi * row[j];
  }
  return out;
}

/** Matrix times column vector, A·x. @example matVec([[1, 2], [3, 4]], [1, 1]) // [3, 7] */
export function matVec(a: Matrix, x: Vector): Vector {
  return a.map((row) => row.reduce((s, v, j) => s + v * x[j], 0));
}

/** A·B. @example matMul([[1, 2]], [[3], [4]]) // [[11]] */
export function matMul(a: Matrix, b: Matrix): Matrix {
  return a.map((row) => vecMat(row, b));
}

/** The sub-matrix A[rows, cols]. @example pick([[1, 2], [3, 4]], [1], [0, 1]) // [[3, 4]] */
export function pick(a: Matrix, rows: readonly number[], cols: readonly number[]): Matrix {
  return rows.map((i) => cols.map((j) => a[i][j]));
}

/** I − A for a square A. @example identityMinus([[0.5]]) // [[0.5]] */
export function identityMinus(a: Matrix): Matrix {
  return a.map((row, i) => row.map((v, j) => (i === j ? 1 : 0) - v));
}

/**
 * Solves A·X = B for X (B has one column per right-hand side) by Gauss–Jordan elimination with
 * partial pivoting: at each step the row with the largest |pivot| is swapped up.
 *
 * @throws TidemarkError `INPUT_INVALID` when A is not square, B has another number of rows or its rows
 *   differ in length, or an entry is not a finite number; `MATRIX_INVALID` when a pivot is not above
 *   1e-12 × the largest |entry| of A (numerically singular).
 * @example solveMany([[2, 0], [0, 4]], [[2], [4]]) // [[1], [1]]
 */
export function solveMany(a: Matrix, b: Matrix): Matrix {
  const n = a.length;
  const m = b[0]?.length ?? 0;
  if (a.some((row) => row.length !== n) || b.length !== n || b.some((row) => row.length !== m)) {
    throw new TidemarkError('INPUT_INVALID', `a linear system needs a square A (${n} rows) and as many rows of right-hand sides (got ${b.length})`);
  }
  if (a.some((row) => row.some((v) => !Number.isFinite(v))) || b.some((row) => row.some((v) => !Number.isFinite(v)))) {
    throw new TidemarkError('INPUT_INVALID', 'a linear system has an entry that is not a finite number');
  }
  const w = a.map((row, i) => [...row, ...b[i]]);
  const scale = Math.max(1e-300, ...a.map((row) => Math.max(...row.map(Math.abs))));
  for (let c = 0; c < n; c++) {
    let p = c;
    for (let r = c + 1; r < n; r++) if (Math.abs(w[r][c]) > Math.abs(w[p][c])) p = r;
    if (!(Math.abs(w[p][c]) > 1e-12 * scale)) {
      throw new TidemarkError('MATRIX_INVALID', `the linear system is singular at column ${c}`, {}, 'the equations are not independent of one another');
    }
    [w[c], w[p]] = [w[p], w[c]];
    const pivot = w[c][c];
    for (let j = c; j < n + m; j++) w[c][j] /= pivot;
    for (let r = 0; r < n; r++) {
      const f = w[r][c];
      if (r === c || f === 0) continue;
      for (let j = c; j < n + m; j++) w[r][j] -= f * w[c][j];
    }
  }
  return w.map((row) => row.slice(n));
}

/**
 * Solves A·x = b.
 * @throws as {@link solveMany} (a b whose length differs from A's rows is `INPUT_INVALID`).
 * @example solve([[2, 1], [1, 3]], [3, 5]) // [0.8, 1.4] (hand: x = (3·3 − 5)/5, y = (2·5 − 3)/5)
 */
export function solve(a: Matrix, b: Vector): Vector {
  return solveMany(a, b.map((v) => [v])).map((row) => row[0]);
}

/** A⁻¹. @throws as {@link solveMany}. @example inverse([[2, 0], [0, 4]]) // [[0.5, 0], [0, 0.25]] */
export function inverse(a: Matrix): Matrix {
  return solveMany(a, identity(a.length));
}
