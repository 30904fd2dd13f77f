/**
 * Which transitions a fit pools: all of them, the last N, or those inside a period range.
 *
 * Text forms (for a command-line option): `all`; `N` (the last N transitions); `FROM..TO`, `FROM..`,
 * `..TO` with period labels (`YYYY-MM-DD`). A range keeps the transitions whose earlier period is at
 * or after FROM and whose later period is at or before TO.
 */
import { TidemarkError, showValue } from '../errors.js';
import { periodHint } from '../periods/suggest.js';
import type { TransitionCounts, WaistTables } from './types.js';

export type TransitionSelection = { last: number } | { from?: string; to?: string };

/**
 * Parses the text form of a selection.
 *
 * @throws TidemarkError `RANGE_INVALID` for anything else, quoting the text.
 * @example parseSelection('6') // { last: 6 }; parseSelection('2026-01-05..') // { from: '2026-01-05' }
 */
export function parseSelection(text: string): TransitionSelection {
  const t = text.trim();
  if (t === 'all' || t === '') return {};
  if (/^\d+$/.test(t)) return { last: Number(t) };
  const m = /^([^.\s]*)\.\.([^.\s]*)$/.exec(t);
  if (m && (m[1] || m[2])) return { ...(m[1] ? { from: m[1] } : {}), ...(m[2] ? { to: m[2] } : {}) };
  throw new TidemarkError('RANGE_INVALID', `cannot read the transition range "${showValue(text)}"`, { key: 'range' }, 'use all, a number N for the last N transitions, or FROM..TO with period labels');
}

/**
 * The transitions a selection keeps, in order.
 *
 * @throws TidemarkError `NOT_ENOUGH_DATA` when the tables hold no transitions; `RANGE_INVALID` when N
 *   is below 1 or above the number of transitions, a label is not a period of the tables (with "did you
 *   mean"), FROM is after TO, or the range holds no transition.
 * @example selectTransitions(tables, { last: 2 }) // the final two pairs of periods
 */
export function selectTransitions(tables: Pick<WaistTables, 'periods' | 'transitions'>, selection: TransitionSelection = {}): TransitionCounts[] {
  const all = tables.transitions;
  if (all.length === 0) {
    throw new TidemarkError('NOT_ENOUGH_DATA', 'the tables hold no transitions between periods', {}, 'use data spanning at least two periods after the warm-up');
  }
  if ('last' in selection) {
    const n = selection.last;
    if (!Number.isInteger(n) || n < 1 || n > all.length) {
      throw new TidemarkError('RANGE_INVALID', `cannot take the last ${n} transitions: the data have ${all.length}`, { key: 'range' }, `use a whole number from 1 to ${all.length}`);
    }
    return all.slice(all.length - n);
  }
  const lo = selection.from === undefined ? -Infinity : periodIndex(tables.periods, selection.from, 'from');
  const hi = selection.to === undefined ? Infinity : periodIndex(tables.periods, selection.to, 'to');
  if (lo > hi) {
    throw new TidemarkError('RANGE_INVALID', `the range starts at ${selection.from}, after its end ${selection.to}`, { key: 'range' }, 'swap FROM and TO');
  }
  const at = new Map(tables.periods.map((label, i) => [label, i]));
  const kept = all.filter((t) => (at.get(t.from) ?? -1) >= lo && (at.get(t.to) ?? -1) <= hi);
  if (kept.length === 0) {
    throw new TidemarkError('RANGE_INVALID', `no transition lies within ${selection.from ?? ''}..${selection.to ?? ''}`, { key: 'range' }, `transitions run from ${all[0].from} to ${all[all.length - 1].to}`);
  }
  return kept;
}

function periodIndex(periods: readonly string[], label: string, side: 'from' | 'to'): number {
  const i = periods.indexOf(label);
  if (i < 0) {
    throw new TidemarkError('RANGE_INVALID', `the range's ${side === 'from' ? 'start' : 'end'} '${showValue(label)}' is not a period of the data`, { key: `range.${side}` }, periodHint(label, periods));
  }
  return i;
}
