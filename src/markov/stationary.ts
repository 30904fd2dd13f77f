/**
 * Long-run distribution of a chain: π with π·P = π and Σπ = 1 (Grinstead & Snell, *Introduction to
 * Probability*, ch. 11, "fixed vector"). A number is returned only where it describes the long run:
 *
 * - `unique`: exactly one closed class and it is aperiodic. π is supported on that class (transient
 *   states get 0) and x₀·Pᵗ/|x₀| → π from any start.
 * - `periodic`: exactly one closed class with period d > 1. π still solves π·P = π, but the mix keeps
 *   cycling; it is returned as `timeAverage` (the long-run average over a cycle), not as a limit.
 * - `reducible`: several closed classes. The long-run mix depends on the start; each class's own
 *   distribution is given, none is "the" answer.
 */
import { assertStochastic } from './guards.js';
import { communicatingClasses } from './classes.js';
import { pick, solve, transpose } from '../numerics/linalg.js';
import { nameSet } from './names.js';
import type { Chain, Matrix, Vector } from './types.js';

export type Stationary =
  | { kind: 'unique'; distribution: Vector; recurrent: number[]; transient: number[]; sentence: string }
  | { kind: 'periodic'; period: number; timeAverage: Vector; recurrent: number[]; transient: number[]; sentence: string }
  | { kind: 'reducible'; closed: { states: number[]; period: number; distribution: Vector }[]; transient: number[]; sentence: string };

/**
 * Classifies the chain and gives its stationary distribution where one describes the long run.
 *
 * @throws TidemarkError `MATRIX_INVALID` when the matrix is not row-stochastic.
 * @example stationary({ states: ['rain', 'nice', 'snow'],
 *   matrix: [[0.5, 0.25, 0.25], [0.5, 0, 0.5], [0.25, 0.25, 0.5]] })
 *   // { kind: 'unique', distribution: [0.4, 0.2, 0.4], ... } (Grinstead & Snell, Example 11.1)
 */
export function stationary(chain: Chain): Stationary {
  const { states, matrix } = chain;
  assertStochastic(matrix, states);
  const classes = communicatingClasses(matrix);
  const closed = classes.filter((c) => c.closed);
  const transient = classes.filter((c) => !c.closed).flatMap((c) => c.states).sort((a, b) => a - b);
  const none = transient.length ? `; transient states ${nameSet(states, transient)} hold none of it` : '';
  if (closed.length > 1) {
    return {
      kind: 'reducible',
      closed: closed.map((c) => ({ states: c.states, period: c.period ?? 1, distribution: classDistribution(matrix, c.states) })),
      transient,
      sentence: `The chain has ${closed.length} closed classes (${closed.map((c) => nameSet(states, c.states)).join(', ')}), so the long-run mix depends on where users start; no single stationary distribution describes it.`,
    };
  }
  const only = closed[0];
  const distribution = classDistribution(matrix, only.states);
  const period = only.period ?? 1;
  if (period > 1) {
    return {
      kind: 'periodic',
      period,
      timeAverage: distribution,
      recurrent: only.states,
      transient,
      sentence: `The closed class ${nameSet(states, only.states)} cycles with period ${period}, so the mix keeps oscillating and never settles; timeAverage is the average over a cycle, not a limit${none}.`,
    };
  }
  return {
    kind: 'unique',
    distribution,
    recurrent: only.states,
    transient,
    sentence: `Whatever the start, the mix settles on one stationary distribution over ${nameSet(states, only.states)}${none}.`,
  };
}

/**
 * π for one closed class C, embedded in a full-length vector (0 outside C): solves
 * (P_CCᵀ − I)·π = 0 with one equation replaced by Σπ = 1, by Gaussian elimination with partial
 * pivoting (non-singular because a closed class is irreducible).
 *
 * @example classDistribution([[0.5, 0.5], [0, 1]], [1]) // [0, 1]
 */
export function classDistribution(matrix: Matrix, cls: readonly number[]): Vector {
  const a = transpose(pick(matrix, cls, cls)).map((row, i) => row.map((v, j) => v - (i === j ? 1 : 0)));
  const b = cls.map(() => 0);
  a[a.length - 1] = cls.map(() => 1);
  b[b.length - 1] = 1;
  const pi = solve(a, b);
  const out = matrix.map(() => 0);
  cls.forEach((s, k) => (out[s] = Math.max(0, pi[k])));
  return out;
}
