/**
 * The row rule of the what-if: after some entries of a row are edited ("pinned"), the row must still
 * sum to 1.
 *
 * Rule: pinned entries keep their new values; the un-edited entries are rescaled by a common factor
 * so the row sums to 1 (they keep their proportions to one another). If the un-edited entries are all
 * 0 and the pinned ones sum to less than 1, the remainder goes to the diagonal P[i][i] (users stay
 * where they are) when the diagonal is not pinned itself.
 */
import { TidemarkError } from '../errors.js';
import { fmt } from './names.js';
import type { Vector } from './types.js';

/**
 * Applies pinned values to a row and rescales the rest.
 *
 * @throws TidemarkError `INPUT_INVALID` when the pinned values sum to more than 1, or when the
 *   remainder has nowhere to go (un-edited entries all 0 and the diagonal pinned); the message names
 *   the row's state.
 * @example reweightRow([0.5, 0.3, 0.2], new Map([[2, 0.4]]), 0, 'lapsing') // [0.375, 0.225, 0.4]
 */
export function reweightRow(row: Vector, pinned: ReadonlyMap<number, number>, diagonal: number, state: string): Vector {
  const fixed = [...pinned.values()].reduce((a, b) => a + b, 0);
  if (fixed > 1 + 1e-12) {
    throw new TidemarkError('INPUT_INVALID', `the edits of row '${state}' add up to ${fmt(fixed)}, more than 1`, { key: `scenario.${state}` }, 'keep the edited probabilities of one row at 1 or less together');
  }
  const rest = row.reduce((s, v, j) => s + (pinned.has(j) ? 0 : v), 0);
  const remainder = Math.max(0, 1 - fixed);
  const out = row.map((v, j) => pinned.get(j) ?? (rest > 0 ? (v * remainder) / rest : 0));
  if (rest > 0 || remainder <= 1e-12) return out;
  if (pinned.has(diagonal)) {
    throw new TidemarkError('INPUT_INVALID', `after the edits ${fmt(remainder)} of row '${state}' has nowhere to go: its other entries are all 0`, { key: `scenario.${state}` }, `also set where the rest of '${state}' goes, e.g. ${state}->OTHER=${fmt(remainder)}`);
  }
  out[diagonal] = remainder;
  return out;
}
