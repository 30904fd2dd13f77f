/**
 * Each user's events in time order and active periods, from an event log (read with or without
 * detail): the per-event view the behaviour analyses (early signals, habits, RFM segments, the grain
 * advisor) share. Activity follows the rules: a period is active with at least `minEvents` key events
 * in it; rows that are not key events (kept by a detail log) never make a period active.
 *
 * Cost: a counting sort by user (linear), a sort by time inside each user only where rows are out of
 * order, and one pass for the active periods. Memory: 4 bytes a row plus 12 per active period.
 */
import type { EventLog } from '../ingest/eventLog.js';
import { lastPeriodOf } from '../ingest/lastPeriod.js';
import { TidemarkError } from '../errors.js';
import { optionKey } from '../periods/range.js';
import { periodLabel } from '../periods/calendar.js';

export interface Timelines {
  /** Number of user codes (log.users.length). */
  users: number;
  /** Row indices grouped by user; within a user in time order (ties in reading order). */
  order: Int32Array;
  /** User u's rows are order[rowStart[u] .. rowStart[u + 1]). */
  rowStart: Int32Array;
  /** User u's active periods are activePeriod[activeStart[u] .. activeStart[u + 1]), ascending. */
  activeStart: Int32Array;
  activePeriod: Int32Array;
  /** Key events in each active period. */
  activeEvents: Int32Array;
}

/** True when row i counts toward activity. */
export function isKeyRow(log: EventLog, i: number): boolean {
  return log.detail ? log.detail.key[i] === 1 : true;
}

/**
 * Group the rows by user in time order and find each user's active periods.
 * @example a user with key events in periods 5, 5, 7 and minEvents 2: active periods [5] (2 events).
 */
export function userTimelines(log: EventLog, minEvents: number): Timelines {
  const U = log.users.length;
  const rowStart = new Int32Array(U + 1);
  for (let i = 0; i < log.size; i++) rowStart[log.user[i] + 1]++;
  for (let u = 0; u < U; u++) rowStart[u + 1] += rowStart[u];
  const fill = rowStart.slice(0, U);
  const order = new Int32Array(log.size);
  for (let i = 0; i < log.size; i++) order[fill[log.user[i]]++] = i;
  const wall = log.wallMs;
  for (let u = 0; u < U; u++) {
    const s = rowStart[u], e = rowStart[u + 1];
    let sorted = true;
    for (let k = s + 1; k < e && sorted; k++) if (wall[order[k]] < wall[order[k - 1]]) sorted = false;
    if (!sorted) order.set(Array.from(order.subarray(s, e)).sort((a, b) => wall[a] - wall[b] || a - b), s);
  }
  const activeStart = new Int32Array(U + 1);
  const periods: number[] = [], events: number[] = [];
  for (let u = 0; u < U; u++) {
    activeStart[u] = periods.length;
    let cur = NaN, n = 0;
    for (let k = rowStart[u]; k <= rowStart[u + 1]; k++) {
      const i = k < rowStart[u + 1] ? order[k] : -1;
      const p = i >= 0 ? log.period[i] : NaN;
      if (p !== cur) {
        if (n >= minEvents && n > 0) {
          periods.push(cur);
          events.push(n);
        }
        cur = p;
        n = 0;
      }
      if (i >= 0 && isKeyRow(log, i)) n++;
    }
  }
  activeStart[U] = periods.length;
  return { users: U, order, rowStart, activeStart, activePeriod: Int32Array.from(periods), activeEvents: Int32Array.from(events) };
}

/** The first active period of user u, or undefined when the user never was active. */
export function firstActive(t: Timelines, u: number): number | undefined {
  return t.activeStart[u] < t.activeStart[u + 1] ? t.activePeriod[t.activeStart[u]] : undefined;
}

/** Whether user u was active in period key p (binary search). */
export function activeIn(t: Timelines, u: number, p: number): boolean {
  let lo = t.activeStart[u], hi = t.activeStart[u + 1] - 1;
  while (lo <= hi) {
    const mid = (lo + hi) >> 1;
    const v = t.activePeriod[mid];
    if (v === p) return true;
    if (v < p) lo = mid + 1;
    else hi = mid - 1;
  }
  return false;
}

/** The periods an analysis reads: users or periods from `fromKey` on, observed through `lastKey`. */
export interface ObservedRange {
  /** The first period of the data (key rows). */
  dataFromKey: number;
  /** --from, or the first period of the data. */
  fromKey: number;
  /** The last period observed whole: the last of the data, or the one before when that one is incomplete and not kept. */
  lastKey: number;
  /** The incomplete last period left out, when it was. */
  leftOut?: { label: string; coverage: number };
}

/**
 * The observed range of a log: from --from (or the data's start) to the last period, leaving out an
 * incomplete last period unless `keepPartial` (the rule of the engine: the data stop before the last
 * seventh of it; engines/memory.ts `lastPeriodOf`).
 * @throws TidemarkError RANGE_INVALID (key `from`) when --from lies after the data.
 */
export function observedRange(log: EventLog, from: string | undefined, keepPartial: boolean): ObservedRange {
  let minKey = Infinity, maxKey = -Infinity;
  for (let i = 0; i < log.size; i++) {
    if (!isKeyRow(log, i)) continue;
    const k = log.period[i];
    if (k < minKey) minKey = k;
    if (k > maxKey) maxKey = k;
  }
  const fk = optionKey(from, log.scheme, 'from');
  const fromKey = Math.max(fk ?? minKey, minKey);
  if (fromKey > maxKey) {
    throw new TidemarkError('RANGE_INVALID', `the range starts in ${periodLabel(fromKey, log.scheme)}, after the last period of the data, ${periodLabel(maxKey, log.scheme)}`, { key: 'from' });
  }
  const last = lastPeriodOf(log, maxKey, log.scheme);
  if (!last.complete && !keepPartial && maxKey > fromKey) return { dataFromKey: minKey, fromKey, lastKey: maxKey - 1, leftOut: { label: last.label, coverage: last.coverage } };
  return { dataFromKey: minKey, fromKey, lastKey: maxKey };
}
