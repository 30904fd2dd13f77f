/**
 * Dirichlet sampling as normalised Gamma variables: a Dirichlet(α) vector is (g₁ … g_k)/Σg with
 * g_j ~ Gamma(α_j, 1) independent (e.g. Gelman et al., *Bayesian Data Analysis*, 3rd ed., appendix A).
 */
import { TidemarkError } from '../errors.js';
import { gamma } from './gamma.js';
import type { Rng } from './random.js';

/**
 * One Dirichlet(α) draw; components with α_j = 0 are 0.
 *
 * @throws TidemarkError `INPUT_INVALID` when an α is negative or not finite, or all are 0.
 * @example sampleDirichlet(mulberry32(1), [2, 0, 3]) // [p, 0, 1 − p], mean p = 0.4
 */
export function sampleDirichlet(rng: Rng, alpha: readonly number[]): number[] {
  if (alpha.some((a) => !(a >= 0) || !Number.isFinite(a)) || !alpha.some((a) => a > 0)) {
    throw new TidemarkError('INPUT_INVALID', `Dirichlet parameters must be finite, ≥ 0 and not all 0 (got ${alpha.join(', ')})`, { key: 'alpha' });
  }
  return dirichletUnchecked(rng, alpha);
}

/** {@link sampleDirichlet} without the entry check, for inner loops whose parameters are checked once. */
export function dirichletUnchecked(rng: Rng, alpha: readonly number[]): number[] {
  const g = alpha.map((a) => (a > 0 ? gamma(rng, a) : 0));
  const sum = g.reduce((x, y) => x + y, 0);
  return g.map((x) => x / sum);
}
