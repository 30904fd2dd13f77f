/**
 * Wilson score interval for a single proportion (Wilson 1927, JASA 22:209–212), without continuity
 * correction: method 3 of Newcombe (1998a), "Two-sided confidence intervals for the single
 * proportion: comparison of seven methods", Statistics in Medicine 17:857–872.
 *
 * For x successes of n and z = Φ⁻¹(1 − α/2):
 *   (2x + z² ± z √(z² + 4x(n − x)/n)) / (2(n + z²)).
 * Unlike the Wald interval it stays inside [0, 1] and is not degenerate at x = 0 or x = n.
 */
import { checkProportion } from './counts.js';
import { zForConfidence } from './normal.js';

export interface ProportionInterval {
  /** The point estimate x / n. */
  estimate: number;
  lower: number;
  upper: number;
}

/**
 * Wilson score interval for `successes` of `n` at the given two-sided confidence level.
 *
 * @throws {TidemarkError} INPUT_INVALID for invalid counts or level; NOT_ENOUGH_DATA when n = 0
 *   (see `counts.ts` for the layer policy).
 * @example wilsonInterval(81, 263) // { estimate: 0.30798…, lower: 0.25529…, upper: 0.36621… } (Newcombe 1998a)
 */
export function wilsonInterval(successes: number, n: number, confidence = 0.95): ProportionInterval {
  checkProportion(successes, n, 'wilsonInterval');
  const z = zForConfidence(confidence);
  const z2 = z * z;
  const centre = (successes + z2 / 2) / (n + z2);
  const half = (z * Math.sqrt((successes * (n - successes)) / n + z2 / 4)) / (n + z2);
  return {
    estimate: successes / n,
    lower: successes === 0 ? 0 : Math.max(0, centre - half),
    upper: successes === n ? 1 : Math.min(1, centre + half),
  };
}
