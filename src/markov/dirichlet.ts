/**
 * Posterior samples of a transition matrix: each row independently from Dirichlet(counts + prior)
 * (the Dirichlet sampler is in `numerics/dirichlet.ts`).
 *
 * Decisions:
 * - prior: `prior` (default 0.5, the Jeffreys prior of a multinomial) is added to every cell of a row's
 *   support;
 * - support: the cells observed in the data (count > 0), plus any cell the optional `allowed` mask
 *   marks true. The default never invents a move the data never showed (nobody moves into `fresh`);
 *   a caller that knows the lifecycle's possible moves passes them as `allowed` to widen it;
 * - a row with no observed users (total 0) stays absorbing, P[i][i] = 1, in every sample, as in the fit.
 */
import { TidemarkError } from '../errors.js';
import { sampleDirichlet } from '../numerics/dirichlet.js';
import type { Rng } from '../numerics/random.js';
import { assertNonNegativeSquare } from './guards.js';
import type { Matrix, Vector } from './types.js';

export interface DirichletOptions {
  /** Pseudo-count added to each supported cell (default 0.5). */
  prior?: number;
  /** allowed[i][j] true: the cell is in the support even when unobserved. */
  allowed?: boolean[][];
}

/**
 * One posterior sample of P from pooled transition counts.
 *
 * @throws TidemarkError `MATRIX_INVALID` for counts that are not square, finite and ≥ 0;
 *   `INPUT_INVALID` for a prior that is not a finite number > 0 or a mask of the wrong size.
 * @example sampleTransitionMatrix(mulberry32(1), [[30, 10], [0, 0]]) // [[~0.75, ~0.25], [0, 1]]
 */
export function sampleTransitionMatrix(rng: Rng, counts: Matrix, options: DirichletOptions = {}): Matrix {
  return sampleFromParameters(rng, dirichletParameters(counts, options));
}

/** One sampled matrix from parameters already checked by {@link dirichletParameters} (a null row stays absorbing). */
export function sampleFromParameters(rng: Rng, alpha: (Vector | null)[]): Matrix {
  return alpha.map((row, i) => (row === null ? alpha.map((_, j) => (i === j ? 1 : 0)) : sampleDirichlet(rng, row)));
}

/**
 * The Dirichlet parameters of each row under the rules above; null for an empty (absorbing) row.
 *
 * @throws as {@link sampleTransitionMatrix}.
 * @example dirichletParameters([[3, 0], [1, 1]]) // [[3.5, 0], [1.5, 1.5]]
 */
export function dirichletParameters(counts: Matrix, options: DirichletOptions = {}): (Vector | null)[] {
  assertNonNegativeSquare(counts, undefined, 'counts');
  const prior = options.prior ?? 0.5;
  if (!(prior > 0) || !Number.isFinite(prior)) {
    throw new TidemarkError('INPUT_INVALID', `prior must be a finite number > 0 (got ${String(prior)})`, { key: 'prior' });
  }
  const mask = options.allowed;
  if (mask && (mask.length !== counts.length || mask.some((r) => !Array.isArray(r) || r.length !== counts.length))) {
    throw new TidemarkError('INPUT_INVALID', `the allowed mask must be ${counts.length} × ${counts.length}, like the counts`, { key: 'allowed' });
  }
  return counts.map((row, i) => {
    if (row.every((v) => v === 0)) return null;
    return row.map((v, j) => (v > 0 || mask?.[i][j] === true ? v + prior : 0));
  });
}
