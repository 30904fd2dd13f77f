/**
 * Events → active periods per user, columnar.
 *
 * Each event becomes one number, user · span + period offset. When the users × periods grid is small
 * (at most 8 cells an event, and 2^26 cells), events are counted straight into it (a byte a cell, one
 * increment an event) and the grid is read in order: 0.7 s for 10M events against 1.7 s for the sort.
 * Otherwise (a long range) a native typed-array sort groups equal keys, and a run of at least minEvents
 * equal keys is an active (user, period). (A hash group-by took about 30 s and 2.5 GB on 10M mostly
 * distinct keys.) Both give the same table.
 */
import { userCount, type EventLog } from '../ingest/eventLog.js';

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
  /** Rows in the range's last period, whatever minEvents (counted with the cells; lastPeriod.ts takes it for a log without wall clocks). */
  lastRows?: number;
}

/** Largest users × periods grid counted directly (2^26 cells: 64 MiB). */
const GRID_MAX = 1 << 26;

/** Grid cells a block of the blocked count (2^18 bytes: a block's increments stay in the core's L2 cache). */
const BLOCK_BITS = 18;

/**
 * Periods with at least `minEvents` events, for events with period keys in [startKey, startKey + span).
 * `grid` false forces the sort; `blockBits` sets the blocked count's block size (tests use small
 * blocks; 0 counts straight into the grid), by default blocks of 2^18 cells for a log of a million
 * rows or more on a grid of more than 4 blocks. `spendLog`: the caller reads the log's user and period
 * columns no more, so the grid count may write its cells and its result into their pages (fresh memory
 * costs far more than a write to pages in use; the engine's waist run spends its log so): both columns
 * are overwritten in full.
 */
export function activePeriods(log: EventLog, minEvents: number, startKey: number, span: number, grid = true, blockBits?: number, spendLog = false): ActivePeriods {
  const cells = userCount(log) * span;
  if (grid && cells <= GRID_MAX && cells <= 8 * Math.max(log.size, 1 << 17)) {
    const bits = blockBits ?? (log.size >= 1 << 20 && cells > 4 << BLOCK_BITS ? BLOCK_BITS : 0);
    return gridActivePeriods(log, minEvents, startKey, span, bits, spendLog);
  }
  return sortActivePeriods(log, minEvents, startKey, span);
}

/**
 * The cells of the rows in range, ordered by block of 2^bits cells (a counting sort on the block: a
 * histogram, then one write per row into its block's run). Counting them block by block keeps each
 * block's increments in cache: on 10M rows over a 26 MB grid, the increments in row order were cache
 * misses (about 0.7 s); the two passes over the rows are sequential. `spend` (the log's columns are
 * read no more): the first pass writes each row's cell over its user code (-1 out of range) and the
 * second sorts them into the period column's pages, so the cells take no fresh memory (40 MB at 10M
 * rows: about 0.13 s of first-touch page faults on this machine).
 */
function cellsByBlock(log: EventLog, startKey: number, span: number, bits: number, blocks: number, spend: boolean): { cells: Int32Array; lastRows: number } {
  const { user: users, period } = log;
  const start = new Int32Array(blocks + 1);
  const end = span - 1;
  let n = 0, lastRows = 0;
  if (spend) {
    for (let i = 0; i < log.size; i++) {
      const off = period[i] - startKey;
      if (off < 0 || off >= span) {
        users[i] = -1;
        continue;
      }
      const k = users[i] * span + off;
      users[i] = k;
      start[(k >>> bits) + 1]++;
      n++;
      if (off === end) lastRows++;
    }
    for (let b = 0; b < blocks; b++) start[b + 1] += start[b];
    // the period column was read in full above: its pages take the cells
    const cells = period.subarray(0, n);
    for (let i = 0; i < log.size; i++) {
      const k = users[i];
      if (k >= 0) cells[start[k >>> bits]++] = k;
    }
    return { cells, lastRows };
  }
  for (let i = 0; i < log.size; i++) {
    const off = period[i] - startKey;
    if (off < 0 || off >= span) continue;
    start[((users[i] * span + off) >>> bits) + 1]++;
    n++;
    if (off === end) lastRows++;
  }
  for (let b = 0; b < blocks; b++) start[b + 1] += start[b];
  const cells = new Int32Array(n);
  for (let i = 0; i < log.size; i++) {
    const off = period[i] - startKey;
    if (off < 0 || off >= span) continue;
    const k = users[i] * span + off;
    cells[start[k >>> bits]++] = k;
  }
  return { cells, lastRows };
}

/** One more event in cell k of the grid (a count beyond 254 kept in `more`); its count now. */
function bump(grid: Uint8Array, more: Map<number, number>, k: number): number {
  const c = grid[k];
  if (c < 255) return (grid[k] = c + 1);
  const m = (more.get(k) ?? 0) + 1;
  more.set(k, m);
  return 255 + m;
}

/**
 * The grid count: one byte a cell (half the memory traffic of 16 bits; the increments are random
 * accesses), a cell's count beyond 254 kept in a Map beside it. Exact for any count.
 */
function gridActivePeriods(log: EventLog, minEvents: number, startKey: number, span: number, bits: number, spendLog: boolean): ActivePeriods {
  const nUsers = userCount(log);
  const grid = new Uint8Array(nUsers * span);
  const more = new Map<number, number>();
  // cells reaching minEvents are counted as they reach it (a cell's count only grows), so one pass reads the grid
  const at = Math.max(1, minEvents);
  let active = 0;
  // the blocked count's cells, once counted, hold the active users' codes (fewer than the cells): fresh
  // memory is costly (a first touch of a page costs far more than a write), so its pages are used again
  let reuse: Int32Array | undefined;
  let lastRows = 0;
  if (bits > 0) {
    const blocked = cellsByBlock(log, startKey, span, bits, Math.ceil(grid.length / 2 ** bits), spendLog);
    const cells = blocked.cells;
    lastRows = blocked.lastRows;
    for (let i = 0; i < cells.length; i++) {
      if (bump(grid, more, cells[i]) === at) active++;
    }
    reuse = cells;
  } else {
    const { user: users, period } = log;
    for (let i = 0; i < log.size; i++) {
      const off = period[i] - startKey;
      if (off < 0 || off >= span) continue;
      if (off === span - 1) lastRows++;
      if (bump(grid, more, users[i] * span + off) === at) active++;
    }
  }
  const countOf = (k: number) => (grid[k] < 255 ? grid[k] : 255 + (more.get(k) ?? 0));
  // the read below looks at the grid only: the rows' columns, once counted, may hold the result (spendLog)
  let user: Int32Array, offset: Int32Array, events: Int32Array;
  if (spendLog && reuse) {
    // the cells are in the period column's pages and the user column holds the rows' cells, all counted:
    // the active periods go there (the events after the users when both fit, else in fresh memory)
    user = log.period.subarray(0, active);
    offset = log.user.subarray(0, active);
    events = 2 * active <= log.period.length ? log.period.subarray(active, 2 * active) : new Int32Array(active);
  } else {
    user = reuse ? reuse.subarray(0, active) : new Int32Array(active);
    offset = spendLog ? log.period.subarray(0, active) : new Int32Array(active);
    events = spendLog ? log.user.subarray(0, active) : new Int32Array(active);
  }
  let n = 0;
  for (let u = 0, k = 0; u < nUsers; u++) {
    for (let o = 0; o < span; o++, k++) {
      if (grid[k] === 0) continue;
      const e = countOf(k);
      if (e >= minEvents) {
        user[n] = u;
        offset[n] = o;
        events[n] = e;
        n++;
      }
    }
  }
  return { startKey, span, user, offset, events, lastRows };
}

function sortActivePeriods(log: EventLog, minEvents: number, startKey: number, span: number): ActivePeriods {
  const keys = new Float64Array(log.size);
  let n = 0, lastRows = 0;
  for (let i = 0; i < log.size; i++) {
    const off = log.period[i] - startKey;
    if (off >= 0 && off < span) {
      keys[n++] = log.user[i] * span + off;
      if (off === span - 1) lastRows++;
    }
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
  return { startKey, span, user: Int32Array.from(user), offset: Int32Array.from(offset), events: Int32Array.from(events), lastRows };
}
