/**
 * The canonical order of the waist's lists, shared by every engine and the reader, so that a waist
 * read from files equals the one an engine made, and outputs are byte-identical either way.
 */
import type { DurationRow, RetentionCell } from '../flows/types.js';

const cmp = (a: string, b: string) => (a < b ? -1 : a > b ? 1 : 0);

/** Attribute retention cells by period, state name, then segment (code-unit order). */
export function canonicalSegmentCells(cells: RetentionCell[]): RetentionCell[] {
  return cells.sort((a, b) => cmp(a.to, b.to) || cmp(a.state, b.state) || cmp(a.segment, b.segment));
}

/** Duration rows by group, cohort, duration, then observed. */
export function canonicalDurations(rows: DurationRow[]): DurationRow[] {
  return rows.sort((a, b) => cmp(a.group, b.group) || cmp(a.cohort ?? '', b.cohort ?? '') || a.duration - b.duration || a.observed - b.observed);
}
