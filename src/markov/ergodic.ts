/**
 * Mean first passage and recurrence times of an ergodic chain (every state reaches every other;
 * periodic chains included), after Grinstead & Snell, *Introduction to Probability*, §11.5:
 * - w: the fixed (stationary) row vector, W: the matrix whose every row is w;
 * - fundamental matrix Z = (I − P + W)⁻¹;
 * - mean first passage time m_ij = (z_jj − z_ij) / w_j (m_ii = 0);
 * - mean recurrence time r_i = 1 / w_i.
 */
import { TidemarkError } from '../errors.js';
import { assertStochastic } from './guards.js';
import { communicatingClasses } from './classes.js';
import { inverse } from '../numerics/linalg.js';
import { classDistribution } from './stationary.js';
import type { Chain, Matrix, Vector } from './types.js';

export interface MeanFirstPassage {
  /** Stationary vector w. */
  w: Vector;
  /** Z = (I − P + W)⁻¹. */
  fundamental: Matrix;
  /** M[i][j]: expected periods to first reach j from i; 0 on the diagonal. */
  passage: Matrix;
  /** recurrence[i]: expected periods to return to i, 1/w_i. */
  recurrence: Vector;
}

/**
 * Mean first passage matrix M, recurrence times and Z for an ergodic chain.
 *
 * @throws TidemarkError `MATRIX_INVALID` when the matrix is not row-stochastic, or when some state cannot
 *   reach another (the message names the pair; use {@link firstPassage} for a chosen target then).
 * @example meanFirstPassage(landOfOz).passage // [[0, 4, 10/3], [8/3, 0, 8/3], [10/3, 4, 0]]
 *   (Grinstead & Snell, Example 11.1, §11.5)
 */
export function meanFirstPassage(chain: Chain): MeanFirstPassage {
  const { states, matrix } = chain;
  assertStochastic(matrix, states);
  const classes = communicatingClasses(matrix);
  if (classes.length > 1) {
    const closed = classes.find((c) => c.closed) ?? classes[0];
    const outside = states.findIndex((_, i) => !closed.states.includes(i));
    throw new TidemarkError(
      'MATRIX_INVALID',
      `mean first passage times need every state to reach every other, but '${states[closed.states[0]]}' can never reach '${states[outside]}'`,
      { key: 'matrix' },
      'use firstPassage for the time to a chosen target state',
    );
  }
  const all = states.map((_, i) => i);
  const w = classDistribution(matrix, all);
  const z = inverse(matrix.map((row, i) => row.map((p, j) => (i === j ? 1 : 0) - p + w[j])));
  const passage = z.map((row, i) => row.map((zij, j) => (i === j ? 0 : (z[j][j] - zij) / w[j])));
  return { w, fundamental: z, passage, recurrence: w.map((x) => 1 / x) };
}
