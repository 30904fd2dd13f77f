import { Matrix as MlMatrix, solve as mlSolve } from 'ml-matrix';
import { describe, expect, it } from 'vitest';
import { identity, inverse, matMul, matVec, solve, solveMany, transpose, vecMat } from '../../src/numerics/linalg.js';
import { mulberry32 } from '../stats/prng.js';
import { expectClose, expectRefusal } from '../markov/helpers.js';

describe('linalg', () => {
  it('solve([[2,1],[1,3]], [3,5]) = [0.8, 1.4] (hand: x = (3·3 − 5)/5, y = (2·5 − 3)/5)', () => {
    expectClose(solve([[2, 1], [1, 3]], [3, 5]), [0.8, 1.4], 1e-12);
  });

  it('needs partial pivoting: a zero leading entry is swapped, not divided by', () => {
    expectClose(solve([[0, 1], [1, 0]], [2, 3]), [3, 2], 1e-12);
    expectClose(solve([[1e-20, 1], [1, 1]], [1, 2]), [1, 1], 1e-12);
  });

  it('inverse times the matrix is the identity', () => {
    const a = [[4, 7, 2], [3, 6, 1], [2, 5, 3]];
    expectClose(matMul(a, inverse(a)), identity(3), 1e-12);
  });

  it('solveMany solves several right-hand sides at once', () => {
    expectClose(solveMany([[2, 0], [0, 4]], [[2, 4], [4, 8]]), [[1, 2], [1, 2]], 1e-12);
  });

  it('refuses a singular system', () => {
    expectRefusal(() => solve([[1, 2], [2, 4]], [1, 2]), 'MATRIX_INVALID', /singular/);
  });

  it('refuses shapes that do not match and entries that are not finite numbers', () => {
    expectRefusal(() => solve([[1, 2]], [1]), 'INPUT_INVALID', /square/);
    expectRefusal(() => solve([[1, 0], [0, 1]], [1]), 'INPUT_INVALID', /square/);
    expectRefusal(() => solve([[1, Number.NaN], [0, 1]], [1, 2]), 'INPUT_INVALID', /finite/);
    expectRefusal(() => solve([[1, 0], [0, 1]], [1, Number.POSITIVE_INFINITY]), 'INPUT_INVALID', /finite/);
  });

  it('agrees with ml-matrix (an independent implementation) on seeded random systems', () => {
    const rand = mulberry32(42);
    for (let trial = 0; trial < 50; trial++) {
      const n = 1 + Math.floor(rand() * 6);
      const A = Array.from({ length: n }, () => Array.from({ length: n }, () => rand() * 2 - 1));
      const b = Array.from({ length: n }, () => rand() * 10 - 5);
      const ours = solve(A, b);
      const theirs = mlSolve(new MlMatrix(A), MlMatrix.columnVector(b)).to1DArray();
      ours.forEach((v, i) => expect(v).toBeCloseTo(theirs[i], 8));
    }
  });

  it('products and transpose on a hand example', () => {
    expect(vecMat([1, 1], [[1, 2], [3, 4]])).toEqual([4, 6]);
    expect(matVec([[1, 2], [3, 4]], [1, 1])).toEqual([3, 7]);
    expect(transpose([[1, 2, 3], [4, 5, 6]])).toEqual([[1, 4], [2, 5], [3, 6]]);
  });

  it('does not modify its inputs', () => {
    const a = [[0, 1], [1, 0]];
    const copy = JSON.parse(JSON.stringify(a));
    inverse(a);
    expect(a).toEqual(copy);
  });
});
