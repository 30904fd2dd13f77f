import { describe, expect, it } from 'vitest';
import { dirichletParameters, sampleTransitionMatrix } from '../../src/markov/dirichlet.js';
import { mulberry32 } from '../../src/numerics/random.js';
import { expectClose, expectRefusal } from './helpers.js';

describe('transition-matrix posterior (Dirichlet rows)', () => {
  it('parameters: prior 0.5 on observed cells only by default; allowed widens; empty rows are null', () => {
    expect(dirichletParameters([[3, 0], [1, 1]])).toEqual([[3.5, 0], [1.5, 1.5]]);
    expect(dirichletParameters([[3, 0], [0, 0]], { prior: 1, allowed: [[true, true], [false, false]] })).toEqual([[4, 1], null]);
  });

  it('a sampled matrix is row-stochastic, keeps empty rows absorbing and never invents a move', () => {
    const p = sampleTransitionMatrix(mulberry32(3), [[0, 30, 10], [0, 50, 0], [0, 0, 0]]);
    p.forEach((row) => expectClose(row.reduce((a, b) => a + b, 0), 1, 1e-12));
    expect(p[0][0]).toBe(0);
    expect(p[1]).toEqual([0, 1, 0]);
    expect(p[2]).toEqual([0, 0, 1]);
  });

  it('refuses a bad prior and a mask of the wrong size', () => {
    expectRefusal(() => dirichletParameters([[1]], { prior: 0 }), 'INPUT_INVALID', /prior/);
    expectRefusal(() => dirichletParameters([[1, 0], [0, 1]], { allowed: [[true]] }), 'INPUT_INVALID', /allowed mask must be 2 × 2/);
  });
});
