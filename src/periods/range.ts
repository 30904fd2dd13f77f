/**
 * The analysis range: from the period of the earliest event to the period of the latest, narrowed by
 * --from/--to (a --from before the data or a --to after them changes nothing). Keys are period keys
 * of one scheme (consecutive integers).
 */
import { TidemarkError, showValue } from '../errors.js';
import { periodKeyOfDate, type PeriodScheme } from './calendar.js';

/**
 * The period key of the range's `from` or `to` date.
 * @throws TidemarkError RANGE_INVALID (key `from` or `to`) when the text is not a YYYY-MM-DD date.
 */
export function optionKey(text: string | undefined, scheme: PeriodScheme, side: 'from' | 'to'): number | undefined {
  if (text === undefined) return undefined;
  const k = periodKeyOfDate(text.trim(), scheme);
  if (k === undefined) throw new TidemarkError('RANGE_INVALID', `'${showValue(text)}' is not a date`, { key: side }, 'Write a date as YYYY-MM-DD, e.g. 2026-05-04');
  return k;
}

export interface ResolvedRange {
  /** First key classified (earliest data, or --from if earlier). */
  startKey: number;
  /** Number of periods classified. */
  span: number;
  /** Offset of the first output period (from --from). */
  outStart: number;
}

export function resolveRange(minKey: number, maxKey: number, fromKey: number | undefined, toKey: number | undefined, labelOf: (k: number) => string): ResolvedRange {
  const end = Math.min(toKey ?? maxKey, maxKey);
  const start = minKey;
  const outKey = Math.max(fromKey ?? start, start);
  if (fromKey !== undefined && toKey !== undefined && fromKey > toKey) {
    throw new TidemarkError('RANGE_INVALID', `the range starts in ${labelOf(fromKey)}, after its end ${labelOf(toKey)}`, { key: 'from' }, 'Put the earlier date first');
  }
  if (outKey > end) {
    throw new TidemarkError('RANGE_INVALID', `the range starts in ${labelOf(outKey)}, after the last period of the data, ${labelOf(end)}`, { key: 'from' }, `The data run from ${labelOf(minKey)} to ${labelOf(maxKey)}`);
  }
  return { startKey: start, span: end - start + 1, outStart: outKey - start };
}
