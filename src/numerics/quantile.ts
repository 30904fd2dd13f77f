/**
 * Sample percentiles by linear interpolation between order statistics (Hyndman & Fan 1996, "Sample
 * quantiles in statistical packages", The American Statistician 50(4), definition 7): for sorted
 * x₀ ≤ … ≤ x_{n−1} and p ∈ [0, 1], h = (n − 1)·p and Q(p) = x_⌊h⌋ + (h − ⌊h⌋)·(x_⌊h⌋₊₁ − x_⌊h⌋).
 */
import { TidemarkError } from '../errors.js';

/**
 * Percentile of an ascending sample, p in [0, 1].
 *
 * @throws TidemarkError `INPUT_INVALID` for an empty sample or p outside [0, 1].
 * @example quantileSorted([1, 2, 3, 4], 0.5) // 2.5
 */
export function quantileSorted(sorted: ArrayLike<number>, p: number): number {
  if (sorted.length === 0) throw new TidemarkError('INPUT_INVALID', 'cannot take a percentile of an empty sample', { key: 'samples' });
  if (!(p >= 0 && p <= 1)) throw new TidemarkError('INPUT_INVALID', `percentile level must be in [0, 1] (got ${String(p)})`, { key: 'percentiles' });
  const h = (sorted.length - 1) * p;
  const lo = Math.floor(h);
  const hi = Math.min(lo + 1, sorted.length - 1);
  return sorted[lo] + (h - lo) * (sorted[hi] - sorted[lo]);
}
