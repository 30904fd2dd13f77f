import { describe, expect, it } from 'vitest';
import { matMul } from '../../src/numerics/linalg.js';
import { stationary } from '../../src/markov/stationary.js';
import { columnToRow } from '../../src/markov/validate.js';
import { MAKERSPACE_P, STATES, expectClose, expectRefusal } from './helpers.js';

const oz = { states: ['rain', 'nice', 'snow'], matrix: [[1 / 2, 1 / 4, 1 / 4], [1 / 2, 0, 1 / 2], [1 / 4, 1 / 4, 1 / 2]] };

function unique(chain: { states: string[]; matrix: number[][] }): number[] {
  const s = stationary(chain);
  expect(s.kind).toBe('unique');
  return s.kind === 'unique' ? s.distribution : [];
}

// How the known values were confirmed: every Grinstead & Snell, Strang and Lay value below is listed
// in test/fixtures/published-values.md, where each was recomputed independently (numpy) from
// secondary copies of the example; Lay's example numbers are from memory (marked in the test title).
describe('stationary: known values', () => {
  it('Land of Oz fixed vector w = (0.4, 0.2, 0.4) (Grinstead & Snell, Examples 11.19–11.20; confirmed by recomputation, see published-values.md)', () => {
    expectClose(unique(oz), [0.4, 0.2, 0.4], 1e-12);
  });

  it('Land of Oz: every row of P⁶ is within 2e-4 of w (Grinstead & Snell, Example 11.19)', () => {
    let p = oz.matrix;
    for (let k = 1; k < 6; k++) p = matMul(p, oz.matrix);
    for (const row of p) expectClose(row, [0.4, 0.2, 0.4], 2e-4);
  });

  it('Strang §10.3: A = [[.8,.3],[.2,.7]] (column-stochastic, converted) → steady state (.6, .4)', () => {
    const p = columnToRow([[0.8, 0.3], [0.2, 0.7]]);
    expectClose(unique({ states: ['a', 'b'], matrix: p }), [0.6, 0.4], 1e-12);
    // Eigenvalues 1 and 1/2 (Strang §10.3): for a 2×2, trace = λ₁ + λ₂ = 1.5 and det = λ₁λ₂ = 0.5.
    expectClose(p[0][0] + p[1][1], 1.5, 1e-12);
    expectClose(p[0][0] * p[1][1] - p[0][1] * p[1][0], 0.5, 1e-12);
  });

  it('Strang §10.3 Example 1: A = [[.80,.05],[.20,.95]] (converted) → u∞ = (.2, .8)', () => {
    expectClose(unique({ states: ['a', 'b'], matrix: columnToRow([[0.8, 0.05], [0.2, 0.95]]) }), [0.2, 0.8], 1e-12);
  });

  it('Strang §10.3 Example 3: zero diagonal, 1/2 elsewhere → (1/3, 1/3, 1/3)', () => {
    const a = [[0, 0.5, 0.5], [0.5, 0, 0.5], [0.5, 0.5, 0]];
    expectClose(unique({ states: ['a', 'b', 'c'], matrix: columnToRow(a) }), [1 / 3, 1 / 3, 1 / 3], 1e-12);
  });

  it('Lay §4.9: P = [[.6,.3],[.4,.7]] (column-stochastic, converted) → q = (3/7, 4/7) (example numbers from memory, confirmed by recomputation per published-values.md)', () => {
    expectClose(unique({ states: ['a', 'b'], matrix: columnToRow([[0.6, 0.3], [0.4, 0.7]]) }), [3 / 7, 4 / 7], 1e-12);
  });

  it('Lay §4.9: 3-state P (converted) → P² and q = (.3, .6, .1) (example numbers from memory, confirmed by recomputation per published-values.md)', () => {
    const lay = [[0.5, 0.2, 0.3], [0.3, 0.8, 0.3], [0.2, 0, 0.4]];
    const p = columnToRow(lay);
    // The row-stochastic P² is the transpose of Lay's (column-stochastic) P².
    expectClose(matMul(p, p), columnToRow([[0.37, 0.26, 0.33], [0.45, 0.7, 0.45], [0.18, 0.04, 0.22]]), 1e-12);
    expectClose(unique({ states: ['a', 'b', 'c'], matrix: p }), [0.3, 0.6, 0.1], 1e-12);
  });

  it('using the column-stochastic matrix without conversion is refused (rows do not sum to 1)', () => {
    expectRefusal(() => stationary({ states: ['a', 'b'], matrix: [[0.6, 0.3], [0.4, 0.7]] }), 'MATRIX_INVALID', /row 0 \('a'\) sums to 0\.9/);
  });
});

describe('stationary: structure', () => {
  it('transient states get 0: the lifecycle chain puts nothing on fresh', () => {
    const s = stationary({ states: STATES, matrix: MAKERSPACE_P });
    expect(s.kind).toBe('unique');
    if (s.kind !== 'unique') return;
    expect(s.distribution[0]).toBe(0);
    expect(s.transient).toEqual([0]);
    expect(s.sentence).toMatch(/transient states \{fresh\}/);
    expectClose(s.distribution.reduce((a, b) => a + b, 0), 1, 1e-12);
  });

  it('reducible: two closed classes give an explanation and per-class distributions, not one number', () => {
    const drunkard = { states: ['0', '1', '2', '3', '4'], matrix: [[1, 0, 0, 0, 0], [0.5, 0, 0.5, 0, 0], [0, 0.5, 0, 0.5, 0], [0, 0, 0.5, 0, 0.5], [0, 0, 0, 0, 1]] };
    const s = stationary(drunkard);
    expect(s.kind).toBe('reducible');
    if (s.kind !== 'reducible') return;
    expect(s.closed.map((c) => c.states)).toEqual([[0], [4]]);
    expect(s.closed.map((c) => c.distribution)).toEqual([[1, 0, 0, 0, 0], [0, 0, 0, 0, 1]]);
    expect(s.sentence).toMatch(/2 closed classes \(\{0\}, \{4\}\).*depends on where users start/);
    expect('distribution' in s).toBe(false);
  });

  it('periodic: a 2-cycle gives kind periodic with the cycle average, not a limit', () => {
    const s = stationary({ states: ['booked', 'idle'], matrix: [[0, 1], [1, 0]] });
    expect(s.kind).toBe('periodic');
    if (s.kind !== 'periodic') return;
    expect(s.period).toBe(2);
    expectClose(s.timeAverage, [0.5, 0.5], 1e-12);
    expect(s.sentence).toMatch(/period 2.*never settles/);
    expect('distribution' in s).toBe(false);
  });

  it('periodic with a transient feeder: a 3-cycle fed by a transient state', () => {
    const s = stationary({ states: ['a', 'b', 'c', 'fresh'], matrix: [[0, 1, 0, 0], [0, 0, 1, 0], [1, 0, 0, 0], [0.5, 0.5, 0, 0]] });
    expect(s.kind).toBe('periodic');
    if (s.kind !== 'periodic') return;
    expect(s.period).toBe(3);
    expectClose(s.timeAverage, [1 / 3, 1 / 3, 1 / 3, 0], 1e-12);
    expect(s.transient).toEqual([3]);
  });

  it('a single absorbing state is unique (1 on it)', () => {
    expectClose(unique({ states: ['only'], matrix: [[1]] }), [1]);
  });
});
