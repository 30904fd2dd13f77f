/**
 * Deterministic projection of expected counts with constant inflow:
 * x(t+1) = x(t)·P + f, for t = 0 … H − 1 (a linear, time-homogeneous Markov chain model of a
 * population with a constant inflow of newcomers, the "open" Markov model of manpower planning;
 * Bartholomew, *Stochastic Models for Social Processes*).
 */
import { assertCounts, assertInteger, assertStochastic } from './guards.js';
import { vecMat } from '../numerics/linalg.js';
import type { Matrix, Projection, Vector } from './types.js';

/**
 * Projects counts `horizon` steps ahead; row 0 of the result is the start itself.
 * Shares are counts over the step's total, or all zeros when the total is 0.
 *
 * @throws TidemarkError `MATRIX_INVALID` when `matrix` is not row-stochastic; `INPUT_INVALID` when
 *   `start` or `inflow` is not one finite count ≥ 0 per state, or `horizon` is not a whole number
 *   from 0 to 10000.
 * @example project([[0.5, 0.5], [0, 1]], [100, 0], [10, 0], 1).counts
 *   // [[100, 0], [60, 50]]
 */
export function project(matrix: Matrix, start: Vector, inflow: Vector, horizon: number): Projection {
  assertStochastic(matrix);
  assertCounts(start, matrix.length, 'start');
  assertCounts(inflow, matrix.length, 'inflow');
  assertInteger(horizon, 'horizon', 0, 10000);
  return projectUnchecked(matrix, start, inflow, horizon);
}

/** {@link project} without the entry checks, for inner loops whose inputs are already checked. */
export function projectUnchecked(matrix: Matrix, start: Vector, inflow: Vector, horizon: number): Projection {
  const counts: Matrix = [start.slice()];
  for (let t = 0; t < horizon; t++) {
    counts.push(vecMat(counts[t], matrix).map((v, j) => v + inflow[j]));
  }
  const totals = counts.map((row) => row.reduce((a, b) => a + b, 0));
  const shares = counts.map((row, t) => row.map((v) => (totals[t] > 0 ? v / totals[t] : 0)));
  return { counts, shares, totals };
}

/**
 * {@link projectUnchecked} with an inflow that may change with the step: x(t+1) = x(t)·P + f(t + 1),
 * plus `extra[t]` (users added at step t, e.g. a campaign) when given.
 *
 * @example projectVarying([[1]], [10], (t) => [t], 2).counts // [[10], [11], [13]]
 */
export function projectVarying(matrix: Matrix, start: Vector, inflowAt: (step: number) => Vector, horizon: number, extra?: (step: number) => Vector | undefined): Projection {
  const counts: Matrix = [start.slice()];
  for (let t = 1; t <= horizon; t++) {
    const f = inflowAt(t);
    const e = extra?.(t);
    counts.push(vecMat(counts[t - 1], matrix).map((v, j) => v + f[j] + (e?.[j] ?? 0)));
  }
  const totals = counts.map((row) => row.reduce((a, b) => a + b, 0));
  const shares = counts.map((row, t) => row.map((v) => (totals[t] > 0 ? v / totals[t] : 0)));
  return { counts, shares, totals };
}
