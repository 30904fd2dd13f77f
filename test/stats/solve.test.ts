import { Matrix, solve } from 'ml-matrix';
import { describe, expect, it } from 'vitest';
import { solveLinear } from '../../src/stats/solve.js';
import { mulberry32 } from './prng.js';

describe('solveLinear', () => {
  it('solves a 2×2 system by hand: 2x + y = 3, x + 3y = 5 → (0.8, 1.4)', () => {
    const x = solveLinear([[2, 1], [1, 3]], [3, 5]);
    expect(x[0]).toBeCloseTo(0.8, 14);
    expect(x[1]).toBeCloseTo(1.4, 14);
  });

  it('needs pivoting when the first pivot is 0', () => {
    expect(solveLinear([[0, 1], [1, 0]], [2, 3])).toEqual([3, 2]);
  });

  it('agrees with ml-matrix on seeded random systems', () => {
    const rand = mulberry32(42);
    for (let trial = 0; trial < 50; trial++) {
      const n = 1 + Math.floor(rand() * 6);
      const A = Array.from({ length: n }, () => Array.from({ length: n }, () => rand() * 2 - 1));
      const b = Array.from({ length: n }, () => rand() * 10 - 5);
      const ours = solveLinear(A, b);
      const theirs = solve(new Matrix(A), Matrix.columnVector(b)).to1DArray();
      ours.forEach((v, i) => expect(v).toBeCloseTo(theirs[i], 8));
    }
  });

  it('throws MATRIX_INVALID for a singular matrix and INPUT_INVALID for a shape mismatch', () => {
    expect(() => solveLinear([[1, 2], [2, 4]], [1, 2])).toThrow(expect.objectContaining({ code: 'MATRIX_INVALID' }));
    expect(() => solveLinear([[1, 2]], [1])).toThrow(expect.objectContaining({ code: 'INPUT_INVALID' }));
  });
});
