import { describe, expect, it } from 'vitest';
import { columnToRow, validateModel } from '../../src/markov/validate.js';
import { expectRefusal } from './helpers.js';

const states = ['engaged', 'lapsing', 'dormant'];
const matrix = [
  [0.7, 0.2, 0.1],
  [0.3, 0.4, 0.3],
  [0.05, 0, 0.95],
];

describe('validateModel: a planner matrix document', () => {
  it('accepts a valid document and fills missing start/inflow states with 0', () => {
    const m = validateModel({ states, matrix, start: { engaged: 120, lapsing: 40 }, inflow: { engaged: 15 } });
    expect(m.states).toEqual(states);
    expect(m.matrix).toEqual(matrix);
    expect(m.start).toEqual([120, 40, 0]);
    expect(m.inflow).toEqual([15, 0, 0]);
  });

  it('leaves start undefined and inflow zero when they are absent', () => {
    const m = validateModel({ states, matrix });
    expect(m.start).toBeUndefined();
    expect(m.inflow).toEqual([0, 0, 0]);
  });

  it('accepts a row within 1e-6 of 1 and keeps it as given', () => {
    const m = validateModel({ states: ['a', 'b'], matrix: [[0.3333333, 0.6666666], [0, 1]] });
    expect(m.matrix[0]).toEqual([0.3333333, 0.6666666]);
  });

  it('refuses a document that is not an object', () => {
    expectRefusal(() => validateModel([1, 2]), 'INPUT_INVALID', /object/);
    expectRefusal(() => validateModel(null), 'INPUT_INVALID', /object/);
  });

  it('refuses an unknown key with did-you-mean', () => {
    const e = expectRefusal(() => validateModel({ states, matrix, inflows: {} }), 'INPUT_INVALID', /"inflows"/);
    expect(e.hint).toMatch(/did you mean 'inflow'/);
  });

  it('refuses missing, empty, non-string and duplicate state names, naming the state', () => {
    expectRefusal(() => validateModel({ matrix }), 'MATRIX_INVALID', /states/);
    expectRefusal(() => validateModel({ states: [], matrix }), 'MATRIX_INVALID', /states/);
    expectRefusal(() => validateModel({ states: ['a', 3, 'c'], matrix }), 'MATRIX_INVALID', /state 1/);
    const e = expectRefusal(() => validateModel({ states: ['engaged', 'lapsing', 'engaged'], matrix }), 'MATRIX_INVALID', /'engaged' is listed twice/);
    expect(e.where.key).toBe('states[2]');
  });

  it('refuses a matrix that is not a list, or a row that is not a list, naming the row', () => {
    expectRefusal(() => validateModel({ states, matrix: 'identity' }), 'MATRIX_INVALID', /list of rows/);
    expectRefusal(() => validateModel({ states, matrix: [matrix[0], 'x', matrix[2]] }), 'MATRIX_INVALID', /row 1 \('lapsing'\)/);
  });

  it('refuses a ragged matrix, naming the short row and its state', () => {
    const e = expectRefusal(() => validateModel({ states, matrix: [matrix[0], [0.5, 0.5], matrix[2]] }), 'MATRIX_INVALID', /row 1 \('lapsing'\)/, /2 entries; expected 3/);
    expect(e.where.key).toBe('matrix[1]');
  });

  it('refuses a row count that differs from the state count', () => {
    expectRefusal(() => validateModel({ states, matrix: matrix.slice(0, 2) }), 'MATRIX_INVALID', /2 rows for 3 states/);
  });

  it('refuses a negative entry, naming row and column states', () => {
    const bad = [matrix[0], [0.6, -0.1, 0.5], matrix[2]];
    const e = expectRefusal(() => validateModel({ states, matrix: bad }), 'MATRIX_INVALID', /row 1 \('lapsing'\) → 'lapsing' is negative/);
    expect(e.where.key).toBe('matrix[1][1]');
  });

  it('refuses non-finite and non-numeric entries, naming the cell', () => {
    for (const v of [Number.NaN, Number.POSITIVE_INFINITY, '0.2', null]) {
      const bad = [matrix[0], matrix[1], [0.05, v, 0.95]];
      expectRefusal(() => validateModel({ states, matrix: bad }), 'MATRIX_INVALID', /row 2 \('dormant'\) → 'lapsing' is not a finite number/);
    }
  });

  it('refuses a row that does not sum to 1, naming the row and its sum', () => {
    const bad = [matrix[0], [0.3, 0.4, 0.2], matrix[2]];
    const e = expectRefusal(() => validateModel({ states, matrix: bad }), 'MATRIX_INVALID', /row 1 \('lapsing'\) sums to 0\.9/);
    expect(e.where.key).toBe('matrix[1]');
    expectRefusal(() => validateModel({ states: ['a', 'b'], matrix: [[0.5, 0.500002], [0, 1]] }), 'MATRIX_INVALID', /row 0 \('a'\) sums to/);
  });

  it('refuses start/inflow naming unknown states, with did-you-mean', () => {
    const e = expectRefusal(() => validateModel({ states, matrix, start: { engagd: 5 } }), 'INPUT_INVALID', /"start" names unknown state 'engagd'/);
    expect(e.hint).toMatch(/did you mean 'engaged'/);
    expect(e.where.key).toBe('start.engagd');
    expectRefusal(() => validateModel({ states, matrix, inflow: { fresh: 5 } }), 'INPUT_INVALID', /"inflow" names unknown state 'fresh'/);
  });

  it('refuses start/inflow counts that are negative, non-finite or not numbers, naming the state', () => {
    expectRefusal(() => validateModel({ states, matrix, start: { dormant: -1 } }), 'INPUT_INVALID', /'dormant'/);
    expectRefusal(() => validateModel({ states, matrix, inflow: { engaged: Number.NaN } }), 'INPUT_INVALID', /'engaged'/);
    expectRefusal(() => validateModel({ states, matrix, inflow: { engaged: '15' } }), 'INPUT_INVALID', /'engaged'/);
    expectRefusal(() => validateModel({ states, matrix, start: [1, 2, 3] }), 'INPUT_INVALID', /"start" must map/);
  });
});

describe('columnToRow: column-stochastic to row-stochastic', () => {
  // Strang, Introduction to Linear Algebra, §10.3: A = [[.8,.3],[.2,.7]] has columns summing to 1.
  const strang = [
    [0.8, 0.3],
    [0.2, 0.7],
  ];

  it('is the transpose (P[i][j] = A[j][i])', () => {
    expect(columnToRow(strang)).toEqual([
      [0.8, 0.2],
      [0.3, 0.7],
    ]);
    const a = [[1, 2, 3], [4, 5, 6], [7, 8, 9]];
    expect(columnToRow(columnToRow(a))).toEqual(a);
  });

  it('turns column sums into row sums, so the validator accepts the converted matrix only', () => {
    // Rows of Strang's A sum to 1.1 and 0.9: refused as given, accepted once converted.
    expectRefusal(() => validateModel({ states: ['a', 'b'], matrix: strang }), 'MATRIX_INVALID', /row 0 \('a'\) sums to 1\.1/);
    const m = validateModel({ states: ['a', 'b'], matrix: columnToRow(strang) });
    expect(m.matrix.map((r) => r[0] + r[1])).toEqual([1, 1]);
  });

  it('refuses a non-square matrix', () => {
    expectRefusal(() => columnToRow([[1, 0]]), 'MATRIX_INVALID', /square/);
    expectRefusal(() => columnToRow([]), 'MATRIX_INVALID', /square/);
  });
});
