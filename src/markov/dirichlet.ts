/**
 * Posterior samples of a transition matrix: each row independently from Dirichlet(counts + prior),
 * drawn as normalised Gamma variables (a Dirichlet(α) vector is (g₁ … g_k)/Σg with g_j ~ Gamma(α_j);
 * e.g. Gelman et al., *Bayesian Data Analysis*, appendix A).
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
import { assertNonNegativeSquare } from './guards.js';
import { gamma } from './gamma.js';
import type { Rng } from './random.js';
import type { Matrix, Vector } from './types.js';

export interface DirichletOptions {
  /** Pseudo-count added to each supported cell (default 0.5). */
  prior?: number;
  /** allowed[i][j] true: the cell is in the support even when unobserved. */
  allowed?: boolean[][];
}

/**
 * One Dirichlet(α) draw; components with α_j = 0 are 0.
 *
 * @throws TidemarkError `INPUT_INVALID` when an α is negative or not finite, or all are 0.
 * @example sampleDirichlet(mulberry32(1), [2, 0, 3]) // [p, 0, 1 − p], mean p = 0.4
 */
export function sampleDirichlet(rng: Rng, alpha: Vector): Vector {
  if (alpha.some((a) => !(a >= 0) || !Number.isFinite(a)) || !alpha.some((a) => a > 0)) {
    throw new TidemarkError('INPUT_INVALID', `Dirichlet parameters must be finite, ≥ 0 and not all 0 (got ${alpha.join(', ')})`, { key: 'alpha' });
  }
  const g = alpha.map((a) => (a > 0 ? gamma(rng, a) : 0));
  const sum = g.reduce((x, y) => x + y, 0);
  return g.map((x) => x / sum);
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
