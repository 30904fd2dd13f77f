/**
 * Events → active periods per user, columnar.
 *
 * Each event becomes one number, user · span + period offset. When the users × periods grid is small
 * (at most 8 cells an event, and 2^26 cells), events are counted straight into it (a Uint16Array, one
 * increment an event; 0.2 s for 10M events against 1.7 s for the sort) and the grid is read in order.
 * Otherwise — a long range, or a count that would reach 65,535 — a native typed-array sort groups equal
 * keys, and a run of at least minEvents equal keys is an active (user, period). (A hash group-by took
 * about 30 s and 2.5 GB on 10M mostly distinct keys.) Both give the same table.
 */
import type { EventLog } from '../ingest/eventLog.js';

export interface ActivePeriods {
  /** First period key of the range. */
  startKey: number;
  /** Number of periods in the range. */
  span: number;
  /** Sorted by user, then period: the user code and the period offset of each active (user, period). */
  user: Int32Array;
  offset: Int32Array;
  /** Key events of the user in that period. */
  events: Int32Array;
}

/** Largest users × periods grid counted directly (2^26 cells: 128 MiB of Uint16). */
const GRID_MAX = 1 << 26;

/** Periods with at least `minEvents` events, for events with period keys in [startKey, startKey + span). */
export function activePeriods(log: EventLog, minEvents: number, startKey: number, span: number, grid = true): ActivePeriods {
  const cells = log.users.length * span;
  if (grid && cells <= GRID_MAX && cells <= 8 * Math.max(log.size, 1 << 17)) {
    const counted = gridActivePeriods(log, minEvents, startKey, span);
    if (counted) return counted;
  }
  return sortActivePeriods(log, minEvents, startKey, span);
}

/** The grid count; undefined when a cell would reach 65,535 events (then the sort counts exactly). */
function gridActivePeriods(log: EventLog, minEvents: number, startKey: number, span: number): ActivePeriods | undefined {
  const grid = new Uint16Array(log.users.length * span);
  const { user: users, period } = log;
  let active = 0;
  for (let i = 0; i < log.size; i++) {
    const off = period[i] - startKey;
    if (off < 0 || off >= span) continue;
    const k = users[i] * span + off;
    const c = grid[k] + 1;
    if (c === 0xffff) return undefined;
    grid[k] = c;
    if (c === minEvents) active++;
  }
  const user = new Int32Array(active), offset = new Int32Array(active), events = new Int32Array(active);
  let n = 0;
  for (let k = 0, u = 0, o = 0; k < grid.length; k++) {
    if (grid[k] >= minEvents) {
      user[n] = u;
      offset[n] = o;
      events[n] = grid[k];
      n++;
    }
    if (++o === span) {
      o = 0;
      u++;
    }
  }
  return { startKey, span, user, offset, events };
}

function sortActivePeriods(log: EventLog, minEvents: number, startKey: number, span: number): ActivePeriods {
  const keys = new Float64Array(log.size);
  let n = 0;
  for (let i = 0; i < log.size; i++) {
    const off = log.period[i] - startKey;
    if (off >= 0 && off < span) keys[n++] = log.user[i] * span + off;
  }
  const sorted = keys.subarray(0, n).sort();
  const user: number[] = [];
  const offset: number[] = [];
  const events: number[] = [];
  let i = 0;
  while (i < n) {
    const k = sorted[i];
    let j = i + 1;
    while (j < n && sorted[j] === k) j++;
    if (j - i >= minEvents) {
      const u = Math.floor(k / span);
      user.push(u);
      offset.push(k - u * span);
      events.push(j - i);
    }
    i = j;
  }
  return { startKey, span, user: Int32Array.from(user), offset: Int32Array.from(offset), events: Int32Array.from(events) };
}
