import { describe, expect, it } from 'vitest';
import type { WaistTables } from '../../src/flows/types.js';
import { fitChain, normaliseCounts } from '../../src/markov/fit.js';
import { parseSelection, selectTransitions } from '../../src/flows/select.js';
import { expectClose, expectRefusal } from './helpers.js';

// A tiny booking-app table: states fresh, engaged, dormant; four weekly periods, three transitions.
const states = ['fresh', 'engaged', 'dormant'];
const periods = ['2026-01-05', '2026-01-12', '2026-01-19', '2026-01-26'];
const transitions = [
  { from: periods[0], to: periods[1], counts: [[0, 6, 4], [0, 20, 10], [0, 0, 0]], fresh: 12 },
  { from: periods[1], to: periods[2], counts: [[0, 9, 3], [0, 18, 8], [0, 2, 12]], fresh: 8 },
  { from: periods[2], to: periods[3], counts: [[0, 5, 3], [0, 21, 8], [0, 1, 22]], fresh: 10 },
];
// stateCounts[to] = column sums of counts + fresh in the fresh column.
const tables: WaistTables = {
  states,
  activeStates: ['fresh', 'engaged'],
  arrivalState: 'fresh',
  exitState: states[states.length - 1],
  periods,
  warmup: 0,
  stateCounts: [[10, 30, 0], [12, 26, 14], [8, 29, 23], [10, 27, 33]],
  transitions,
  tenureCells: [],
  cohorts: [],
  durations: [],
};

describe('fitChain', () => {
  it('(fixture check) stateCounts at each later period = column sums of counts + fresh, and row sums = the earlier period', () => {
    transitions.forEach((t, k) => {
      expect(states.map((_, j) => t.counts.reduce((s, r) => s + r[j], 0) + (j === 0 ? t.fresh : 0))).toEqual(tables.stateCounts[k + 1]);
      expect(t.counts.map((r) => r.reduce((a, b) => a + b, 0))).toEqual(tables.stateCounts[k]);
    });
  });

  it('pools all transitions and row-normalises (hand: fresh 20/30 → engaged, 10/30 → dormant, …)', () => {
    const f = fitChain(tables);
    // Pooled: fresh (0, 20, 10); engaged (0, 59, 26); dormant (0, 3, 34).
    expect(f.counts).toEqual([[0, 20, 10], [0, 59, 26], [0, 3, 34]]);
    expectClose(f.matrix, [[0, 20 / 30, 10 / 30], [0, 59 / 85, 26 / 85], [0, 3 / 37, 34 / 37]], 1e-12);
    expect(f.emptyRows).toEqual([]);
    expectClose(f.inflow, [(12 + 8 + 10) / 3, 0, 0], 1e-12);
    expect(f.start).toEqual([10, 27, 33]);
    expect(f.range).toEqual({ from: '2026-01-05', to: '2026-01-26', transitions: 3 });
  });

  it('a state nobody leaves in the range is kept absorbing and reported in emptyRows', () => {
    const f = fitChain(tables, { selection: { last: 3 } });
    expect(f.emptyRows).toEqual([]);
    const first = fitChain(tables, { selection: { to: '2026-01-12' } });
    expect(first.emptyRows).toEqual(['dormant']);
    expect(first.matrix[2]).toEqual([0, 0, 1]);
    expect(first.start).toEqual([12, 26, 14]);
    expect(first.inflow).toEqual([12, 0, 0]);
  });

  it('last N and FROM..TO select the expected transitions', () => {
    expect(fitChain(tables, { selection: { last: 1 } }).counts).toEqual(transitions[2].counts);
    const mid = fitChain(tables, { selection: { from: '2026-01-12', to: '2026-01-26' } });
    expect(mid.range).toEqual({ from: '2026-01-12', to: '2026-01-26', transitions: 2 });
    expectClose(mid.inflow[0], 9, 1e-12);
  });

  it('refuses an arrival state that is not a state, with did-you-mean', () => {
    const e = expectRefusal(() => fitChain(tables, { freshState: 'frsh' }), 'INPUT_INVALID', /'frsh'/);
    expect(e.hint).toMatch(/did you mean 'fresh'/);
  });

  it('refuses a count matrix of the wrong size, naming the transition', () => {
    const bad = { ...tables, transitions: [{ ...transitions[0], counts: [[1, 2], [3, 4]] }] };
    expectRefusal(() => fitChain(bad), 'MATRIX_INVALID', /counts 2026-01-05\.\.2026-01-12/);
  });
});

describe('normaliseCounts', () => {
  it('divides by row totals; empty rows become absorbing', () => {
    expect(normaliseCounts([[3, 1], [0, 0]], ['a', 'b'])).toEqual({ matrix: [[0.75, 0.25], [0, 1]], emptyRows: ['b'] });
  });
  it('refuses negative counts, naming the cell', () => {
    expectRefusal(() => normaliseCounts([[3, -1], [0, 0]], ['a', 'b']), 'MATRIX_INVALID', /row 0 \('a'\) → 'b' is negative/);
  });
});

describe('selection', () => {
  it('parses all, N, FROM..TO and open ends', () => {
    expect(parseSelection('all')).toEqual({});
    expect(parseSelection(' 6 ')).toEqual({ last: 6 });
    expect(parseSelection('2026-01-05..2026-01-19')).toEqual({ from: '2026-01-05', to: '2026-01-19' });
    expect(parseSelection('2026-01-05..')).toEqual({ from: '2026-01-05' });
    expect(parseSelection('..2026-01-19')).toEqual({ to: '2026-01-19' });
  });

  it('refuses text it cannot read, quoting it', () => {
    expectRefusal(() => parseSelection('last week'), 'RANGE_INVALID', /"last week"/);
    expectRefusal(() => parseSelection('..'), 'RANGE_INVALID', /"\.\."/);
  });

  it('refuses a label that is not a period, naming the period that holds it', () => {
    const e = expectRefusal(() => selectTransitions(tables, { from: '2026-01-13' }), 'RANGE_INVALID', /start '2026-01-13' is not a period/);
    expect(e.where.key).toBe('range.from');
    // the hint points to the period holding that date (periods are labelled by start date)
    expect(e.hint).toMatch(/lies in the period labelled 2026-01-12/);
    expectRefusal(() => selectTransitions(tables, { to: '2025-13-40' }), 'RANGE_INVALID', /end '2025-13-40' is not a period/);
  });

  it('refuses FROM after TO, an empty range, and N out of range', () => {
    expectRefusal(() => selectTransitions(tables, { from: '2026-01-26', to: '2026-01-12' }), 'RANGE_INVALID', /after its end/);
    expectRefusal(() => selectTransitions(tables, { from: '2026-01-19', to: '2026-01-19' }), 'RANGE_INVALID', /no transition lies within 2026-01-19\.\.2026-01-19/);
    expectRefusal(() => selectTransitions(tables, { last: 4 }), 'RANGE_INVALID', /last 4 transitions: the data have 3/);
    expectRefusal(() => selectTransitions(tables, { last: 0 }), 'RANGE_INVALID', /last 0/);
  });

  it('refuses tables without transitions as not enough data', () => {
    expectRefusal(() => selectTransitions({ periods: ['2026-01-05'], transitions: [] }), 'NOT_ENOUGH_DATA', /no transitions/);
  });
});
