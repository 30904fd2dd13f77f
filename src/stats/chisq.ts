/**
 * Chi-square survival function (upper tail), used for log-rank p-values.
 *
 * P(X ≥ x) for X ~ χ²(df) is Q(df/2, x/2), the upper regularised incomplete gamma function
 * (Abramowitz & Stegun 1964, §26.4; computed as in Numerical Recipes, 3rd ed., §6.2).
 */
import { TidemarkError } from '../errors.js';
import { regularizedGammaQ } from './gammaInc.js';

/**
 * Upper-tail probability of the chi-square distribution with `df` degrees of freedom.
 * Returns 1 for x ≤ 0 (a chi-square variable is never negative).
 *
 * @throws {TidemarkError} INPUT_INVALID when df is not a positive finite number or x is NaN.
 * @example chiSquareSf(3.841458820694124, 1) // 0.05 (to 1e-15)
 */
export function chiSquareSf(x: number, df: number): number {
  if (!(df > 0) || !Number.isFinite(df)) throw new TidemarkError('INPUT_INVALID', `chiSquareSf: df must be a positive number, got ${df}`);
  if (Number.isNaN(x)) throw new TidemarkError('INPUT_INVALID', 'chiSquareSf: x is NaN');
  if (x <= 0) return 1;
  return regularizedGammaQ(df / 2, x / 2);
}
