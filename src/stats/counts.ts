/**
 * Input checks shared by the proportion statistics.
 *
 * Layer policy for `src/stats`: every function is defined on valid inputs only. A value outside its
 * domain throws `INPUT_INVALID`; a sample with no members (n = 0), where a proportion has no value,
 * throws `NOT_ENOUGH_DATA`. Callers that want "null with n" instead (the explain layer) test n first.
 */
import { TidemarkError } from '../errors.js';

/**
 * Checks that `successes` of `n` is a valid count pair: finite, 0 ≤ successes ≤ n, n > 0.
 * Counts may be non-integer (weighted data); the formulas do not need integers.
 *
 * @throws {TidemarkError} INPUT_INVALID for a negative, non-finite or inconsistent pair;
 *   NOT_ENOUGH_DATA when n = 0.
 */
export function checkProportion(successes: number, n: number, fn: string): void {
  if (!Number.isFinite(n) || n < 0) throw new TidemarkError('INPUT_INVALID', `${fn}: n must be a finite number ≥ 0, got ${n}`);
  if (!Number.isFinite(successes) || successes < 0 || successes > n) {
    throw new TidemarkError('INPUT_INVALID', `${fn}: successes must be between 0 and n = ${n}, got ${successes}`);
  }
  if (n === 0) throw new TidemarkError('NOT_ENOUGH_DATA', `${fn}: n = 0, a proportion of nobody has no value`);
}
