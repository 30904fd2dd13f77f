/**
 * Maximum-likelihood fit of a time-homogeneous chain from observed transition counts: pool the
 * counts of the selected transitions, then divide each row by its total,
 * P[i][j] = Σ_t n_t[i][j] / Σ_t Σ_k n_t[i][k] (Anderson & Goodman 1957, "Statistical inference about
 * Markov chains", Annals of Mathematical Statistics 28(1)).
 *
 * Not-enough-data policy: a state with no observed users leaving it (row total 0) is kept absorbing,
 * P[i][i] = 1, and listed in `emptyRows` so the caller can warn; the fit never throws for it.
 */
import { TidemarkError, suggestion } from '../errors.js';
import type { TransitionCounts, WaistTables } from '../flows/types.js';
import { assertNonNegativeSquare } from './guards.js';
import { selectTransitions, type TransitionSelection } from '../flows/select.js';
import type { Matrix, MarkovModel, Vector } from './types.js';

/** A fitted model, ready to project: start is the state mix at the last period of the range. */
export interface FittedChain extends MarkovModel {
  start: Vector;
  /** Pooled counts, counts[i][j] summed over the range (for Dirichlet bands). */
  counts: Matrix;
  /** Names of states with no observed transitions out (kept absorbing). */
  emptyRows: string[];
  /** First and last period of the range and how many transitions it pools. */
  range: { from: string; to: string; transitions: number };
}

export interface FitOptions {
  /** Which transitions to pool (default: all). */
  selection?: TransitionSelection;
  /** The state new users arrive in (default: the tables' arrival state). */
  freshState?: string;
}

/**
 * Fits P and the mean inflow from waist tables. Inflow is the mean of `fresh` over the pooled
 * transitions, placed in the fresh state; every other state gets 0.
 *
 * @throws TidemarkError as {@link selectTransitions}; `INPUT_INVALID` when the fresh state is not a
 *   state of the tables (with "did you mean"); `MATRIX_INVALID` when a count matrix is not states × states
 *   of finite counts ≥ 0.
 * @example fitChain(tables, { selection: { last: 4 } }).inflow // [mean fresh, 0, 0, 0, 0]
 */
export function fitChain(tables: WaistTables, options: FitOptions = {}): FittedChain {
  const { states } = tables;
  const fi = freshIndex(states, options.freshState ?? tables.arrivalState);
  const picked = selectTransitions(tables, options.selection);
  const counts = states.map(() => states.map(() => 0));
  for (const t of picked) {
    assertNonNegativeSquare(t.counts, states, `counts ${t.from}..${t.to}`);
    t.counts.forEach((row, i) => row.forEach((v, j) => (counts[i][j] += v)));
  }
  const last = picked[picked.length - 1];
  const start = startAt(tables, tables.periods.indexOf(last.to), last, fi);
  return fitPooled(states, fi, counts, picked.reduce((s, t) => s + t.fresh, 0), start, { from: picked[0].from, to: last.to, transitions: picked.length });
}

/** The state counts at period index `at` (the later period of `last`), or, when the tables lack them, the column sums of `last` plus its arrivals. */
export function startAt(tables: Pick<WaistTables, 'stateCounts'>, at: number, last: TransitionCounts, fi: number): Vector {
  const row = at >= 0 ? tables.stateCounts[at] : undefined;
  return row ? row.slice() : last.counts[0].map((_, j) => last.counts.reduce((s, r) => s + r[j], 0) + (j === fi ? last.fresh : 0));
}

/**
 * The index of the arrival state.
 * @throws TidemarkError `INPUT_INVALID` when it is not one of `states` (with "did you mean").
 */
export function freshIndex(states: readonly string[], freshState: string): number {
  const fi = states.indexOf(freshState);
  if (fi < 0) {
    throw new TidemarkError('INPUT_INVALID', `the arrival state '${freshState}' is not a state of the tables`, { key: 'freshState' }, suggestion(freshState, states) ?? `states are: ${states.join(', ')}`);
  }
  return fi;
}

/**
 * A fitted chain from counts already pooled over `range.transitions` transitions, with `freshTotal`
 * arrivals over them (the mean is the inflow). Shared by {@link fitChain} and the backtest, which pools
 * by prefix sums.
 */
export function fitPooled(states: string[], fi: number, counts: Matrix, freshTotal: number, start: Vector, range: FittedChain['range']): FittedChain {
  const { matrix, emptyRows } = normaliseCounts(counts, states);
  const inflow = states.map((_, i) => (i === fi ? freshTotal / range.transitions : 0));
  return { states, matrix, start, inflow, counts, emptyRows, range };
}

/**
 * Row-normalises a count matrix; rows with total 0 become absorbing (1 on the diagonal).
 *
 * @throws TidemarkError `MATRIX_INVALID` when counts are not square, finite and ≥ 0.
 * @example normaliseCounts([[3, 1], [0, 0]], ['a', 'b'])
 *   // { matrix: [[0.75, 0.25], [0, 1]], emptyRows: ['b'] }
 */
export function normaliseCounts(counts: Matrix, states: readonly string[]): { matrix: Matrix; emptyRows: string[] } {
  assertNonNegativeSquare(counts, states, 'counts');
  const emptyRows: string[] = [];
  const matrix = counts.map((row, i) => {
    const total = row.reduce((a, b) => a + b, 0);
    if (total === 0) {
      emptyRows.push(states[i]);
      return row.map((_, j) => (i === j ? 1 : 0));
    }
    return row.map((v) => v / total);
  });
  return { matrix, emptyRows };
}
