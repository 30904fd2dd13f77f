/**
 * What the in-memory engine allocates, estimated before it allocates it, against a memory budget.
 *
 * Every typed array and table of the classification and the aggregation is counted at the size it
 * will have, from numbers known before classifying (rows to classify, users, active periods, output
 * periods, cohort-triangle cells). Bytes per item, from the code that allocates them:
 *
 * | stage | item | bytes |
 * |---|---|---|
 * | events (already read) | an event: user, period (Int32), wall ms (Float64) + 4 an attribute | 16 + 4·attrs |
 * | active periods | Float64 sort key per event + user, offset, events (JS arrays, then Int32) | 8 an event + 36 |
 * | classification | a row: user, period, tenure, cohort (Int32), state, prev (Int8) | 18 |
 * | | a user: first active, first dormant (Int32, twice while sizing) | 16 |
 * | aggregation | a row: tenure band (Uint8), three filter bitsets, two arquero group-bys alive at once, each a derived JS number column (8) and its Uint32 group keys (4), and 3.5 of garbage-collector slack (measured) | 29 |
 * | | a group of the cohort-by-age group-by (key string, index entry, row) and its Map entry: at most one an active period in a cohort, and one a triangle cell | 130 |
 * | | a cohort-triangle cell: survivors and last-active ages (JS numbers) | 16 |
 * | | a cohort observed ≤ 60 ages: window table (JS numbers) | 8·(ages + 1)² |
 * | | a user: row-block index, duration map entry | 108 |
 * | | an output period: labels, state counts, transition matrices, retention cells | 1,000 + 300·bands |
 * | `--by` split | a row: segment code (Int32), derived column, group keys | 16 |
 * | `classify` output | a row: an object { user, period, state } and its sort slot | 72 |
 *
 * Checked against the peak resident memory of runs (VmHWM, less the memory before the run): 4M,
 * 20M and 50M classified rows took 41, 44 and 47 bytes a row; the table gives 47 for the row items.
 *
 * The budget is V8's heap limit for this process (`heap_size_limit`): Node sizes it from the
 * machine's memory (4.3 GB on a 24 GB machine) and `--max-old-space-size` sets it. The JavaScript
 * arrays and tables must fit in that heap; typed arrays live outside it, so counting them against it
 * too keeps a margin for the rest of the process (reading, the analyses, the report).
 */
import { getHeapStatistics } from 'node:v8';

export interface FootprintInput {
  events: number;
  attributes: number;
  activePeriods: number;
  users: number;
  /** Classified user-periods (rows). */
  rows: number;
  /** Active periods that fall in a cohort of the triangle (≤ activePeriods). */
  cohortActive: number;
  outPeriods: number;
  bands: number;
  /** Cells of the cohort triangle: Σ over cohorts of the periods each is observed. */
  cohortCells: number;
  /** Σ over cohorts observed at most 60 ages of (ages + 1)². */
  windowCells: number;
  /** An attribute split (--by) is computed. */
  split: boolean;
  /** Per-row output objects are built (classify). */
  rowObjects: boolean;
}

export interface Footprint {
  total: number;
  parts: { what: string; bytes: number }[];
}

/** Bytes the engine will hold at its peak for these sizes (see the table above). */
export function engineFootprint(x: FootprintInput): Footprint {
  const parts = [
    { what: 'events', bytes: x.events * (16 + 4 * x.attributes) },
    { what: 'active periods', bytes: x.events * 8 + x.activePeriods * 36 },
    { what: 'classification', bytes: x.rows * 18 + x.users * 16 },
    { what: 'aggregation', bytes: x.rows * 29 + Math.min(x.cohortActive, x.cohortCells) * 130 + x.cohortCells * 16 + x.windowCells * 8 + x.users * 108 + x.outPeriods * (1000 + 300 * x.bands) },
    { what: 'attribute split', bytes: x.split ? x.rows * 16 : 0 },
    { what: 'classified rows', bytes: x.rowObjects ? x.rows * 72 : 0 },
  ].filter((p) => p.bytes > 0);
  return { total: parts.reduce((a, p) => a + p.bytes, 0), parts };
}

/** The memory budget: V8's heap limit for this process, in bytes. */
export function memoryBudget(): number {
  return getHeapStatistics().heap_size_limit;
}

/**
 * Bytes in decimal units, two significant digits at least.
 * @example formatBytes(4_345_298_944) // '4.3 GB'; formatBytes(52_000_000) // '52 MB'
 */
export function formatBytes(bytes: number): string {
  const units = ['bytes', 'KB', 'MB', 'GB', 'TB', 'PB'];
  let v = bytes;
  let u = 0;
  while (v >= 1000 && u < units.length - 1) {
    v /= 1000;
    u++;
  }
  return `${v >= 10 || u === 0 ? Math.round(v) : v.toFixed(1)} ${units[u]}`;
}
