/**
 * Two-proportion z-test with the pooled standard error, two-sided (e.g. Fleiss, Levin & Paik,
 * Statistical Methods for Rates and Proportions, 3rd ed. 2003, ch. 2; z² equals Pearson's X² for
 * the 2×2 table without continuity correction).
 *
 *   p̄ = (x₁ + x₂)/(n₁ + n₂),  z = (p₁ − p₂) / √(p̄(1 − p̄)(1/n₁ + 1/n₂)),  p = 2(1 − Φ(|z|)).
 *
 * When p̄ is 0 or 1 both samples agree exactly and the statistic is 0/0; it is then defined as
 * z = 0, p = 1 (no evidence of a difference).
 */
import { checkProportion } from './counts.js';
import { normalSf } from './normal.js';

export interface ZTestResult {
  /** p₁ − p₂. */
  difference: number;
  /** Pooled proportion p̄. */
  pooled: number;
  /** Pooled standard error of the difference (0 when p̄ is 0 or 1). */
  se: number;
  z: number;
  /** Two-sided p-value. */
  p: number;
}

/**
 * Pooled two-proportion z-test of x1/n1 against x2/n2.
 *
 * @throws {TidemarkError} INPUT_INVALID for invalid counts; NOT_ENOUGH_DATA when n1 or n2 is 0.
 * @example twoProportionZTest(56, 70, 48, 80) // z = 2.65017…, p = 0.0080451… (z² = Pearson X² = 7.02341 for this 2×2 table)
 */
export function twoProportionZTest(x1: number, n1: number, x2: number, n2: number): ZTestResult {
  checkProportion(x1, n1, 'twoProportionZTest');
  checkProportion(x2, n2, 'twoProportionZTest');
  const difference = x1 / n1 - x2 / n2;
  const pooled = (x1 + x2) / (n1 + n2);
  const se = Math.sqrt(pooled * (1 - pooled) * (1 / n1 + 1 / n2));
  if (se === 0) return { difference, pooled, se, z: 0, p: 1 };
  const z = difference / se;
  return { difference, pooled, se, z, p: Math.min(1, 2 * normalSf(Math.abs(z))) };
}
