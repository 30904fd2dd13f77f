/**
 * The earliest and latest rows of an event log, kept while it is read: a few at each end, with their
 * timestamp as written and where they came from. One comparison a row; nothing is re-read.
 *
 * They answer two questions about the range: do a handful of rows stretch it far beyond the bulk of
 * the data ({@link rangeOutliers}), and which rows to name when a range is too large to classify.
 */
import type { LineRef } from './eventLog.js';
import { ownCopy } from './growable.js';

/** Rows kept at each end: one more than the largest handful, so that the bulk's edge is known. */
export const EXTREMES_KEPT = 6;

/** One row at an end of the range. */
export interface ExtremeRow {
  wallMs: number;
  /** The timestamp as written in the file. */
  text: string;
  file: string;
  /** The row's reference and the resolver of its file (called only when a message needs the line). */
  ref: LineRef;
  lineOf: (ref: LineRef) => number;
}

/** The earliest and latest {@link EXTREMES_KEPT} rows seen, each end sorted from the outside in. */
export class Extremes {
  /** Ascending by time. */
  readonly earliest: ExtremeRow[] = [];
  /** Descending by time. */
  readonly latest: ExtremeRow[] = [];

  /** Whether a used row at `wallMs` would be kept: {@link add} it then (its text is made only for such rows). */
  wants(wallMs: number): boolean {
    const low = this.earliest, high = this.latest;
    return low.length < EXTREMES_KEPT || wallMs < low[low.length - 1].wallMs || high.length < EXTREMES_KEPT || wallMs > high[high.length - 1].wallMs;
  }

  /**
   * Take in the extremes of rows read after every row seen so far (a later part of the same file,
   * read by another thread), each end in its order: the result is what one pass over all the rows keeps.
   */
  merge(earliest: readonly ExtremeRow[], latest: readonly ExtremeRow[]): void {
    for (const row of earliest) if (this.earliest.length < EXTREMES_KEPT || row.wallMs < this.earliest[this.earliest.length - 1].wallMs) insert(this.earliest, row, (a, b) => a.wallMs < b.wallMs);
    for (const row of latest) if (this.latest.length < EXTREMES_KEPT || row.wallMs > this.latest[this.latest.length - 1].wallMs) insert(this.latest, row, (a, b) => a.wallMs > b.wallMs);
  }

  /** Offer a used row. Costs two comparisons unless the row is among the extremes so far. */
  add(wallMs: number, text: string, file: string, ref: LineRef, lineOf: (ref: LineRef) => number): void {
    const low = this.earliest, high = this.latest;
    const isLow = low.length < EXTREMES_KEPT || wallMs < low[low.length - 1].wallMs;
    const isHigh = high.length < EXTREMES_KEPT || wallMs > high[high.length - 1].wallMs;
    if (!isLow && !isHigh) return;
    // a copy: the reader's field text may be a view that keeps its whole read buffer alive
    const row: ExtremeRow = { wallMs, text: ownCopy(text), file, ref, lineOf };
    if (isLow) insert(low, row, (a, b) => a.wallMs < b.wallMs);
    if (isHigh) insert(high, row, (a, b) => a.wallMs > b.wallMs);
  }
}

/** Insert keeping order (stable: a tie goes after the rows already there), and keep the first EXTREMES_KEPT. */
function insert(list: ExtremeRow[], row: ExtremeRow, before: (a: ExtremeRow, b: ExtremeRow) => boolean): void {
  let i = list.length;
  while (i > 0 && before(row, list[i - 1])) i--;
  list.splice(i, 0, row);
  if (list.length > EXTREMES_KEPT) list.pop();
}

/** Rows in a log that stretch its range far beyond the bulk of the data, and the bulk itself. */
export interface RangeOutliers {
  /** Period keys of the bulk: from the first to the last period once the outlying rows are set aside at each end. */
  bulk: { fromKey: number; toKey: number };
  early: ExtremeRow[];
  late: ExtremeRow[];
}

/**
 * The most rows at one end that count as "a handful": at most 5, and at most one row in 50 (so a log
 * needs 50 rows before one row can be outlying). Rows beyond that many share the range's end with
 * enough others to be data, not slips.
 * @example handful(201) // 4; handful(30) // 0; handful(12_000) // 5
 */
export function handful(rows: number): number {
  return Math.min(EXTREMES_KEPT - 1, Math.floor(rows / 50));
}

/**
 * A handful of rows at either end that lie far from the bulk of the data. With h = {@link handful}(rows),
 * the bulk runs from the period of the (h+1)-th earliest row to that of the (h+1)-th latest; a row
 * among the h earliest (latest) is outlying when it lies *far* before (after) the bulk: more periods
 * away from the bulk's edge than the bulk is long (alone it more than doubles the range) and more than
 * 10 periods away. Returns undefined when no row is outlying.
 * @param keyOf the period key of a wall-clock time
 * @example // 12,000 rows from 2026-03-01 to 2026-04-29 (daily) and one in 1900: early = [that row]
 */
export function rangeOutliers(ex: Extremes, rows: number, keyOf: (wallMs: number) => number): RangeOutliers | undefined {
  const h = handful(rows);
  if (h === 0 || ex.earliest.length <= h || ex.latest.length <= h) return undefined;
  const fromKey = keyOf(ex.earliest[h].wallMs);
  const toKey = keyOf(ex.latest[h].wallMs);
  const length = toKey - fromKey + 1;
  const far = (distance: number) => distance > length && distance > 10;
  const early = ex.earliest.slice(0, h).filter((r) => far(fromKey - keyOf(r.wallMs)));
  const late = ex.latest.slice(0, h).filter((r) => far(keyOf(r.wallMs) - toKey));
  return early.length + late.length > 0 ? { bulk: { fromKey, toKey }, early, late } : undefined;
}

/** `file:line 'value'` for a message; the value shown escaped and shortened. */
export function describeRow(r: ExtremeRow, show: (v: string) => string): string {
  return `${r.file}:${r.lineOf(r.ref)} '${show(r.text)}'`;
}
